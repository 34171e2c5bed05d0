/*
 * fuzz_resolve.c - libFuzzer target for bc_age_resolve and
 * bc_age_resolve_pair: arbitrary bytes (cut at the first NUL, as C strings
 * are) must never crash; invalid UTF-8 must come back as status unknown.
 * Seeds: tests/fuzz/resolve/. Build, e.g.:
 *   clang -g -O1 -fsanitize=fuzzer,address,undefined -Isrc tests/fuzz/fuzz_resolve.c \
 *     build-san/libbathychron.a $(pkg-config --libs ...) -lcsv -lm -lpthread -o build/fuzz_resolve
 *   build/fuzz_resolve -max_total_time=60 tests/fuzz/resolve
 */
#include "bathychron.h"

#include <stdlib.h>
#include <string.h>

int LLVMFuzzerTestOneInput(const unsigned char *data, size_t size);

int LLVMFuzzerTestOneInput(const unsigned char *data, size_t size)
{
	static bc_chart *chart;
	static bc_resolver *r;
	if (!r && (bc_chart_builtin(&chart, NULL, NULL) || bc_resolver_new(&r, chart, NULL)))
		abort();
	char *s = malloc(size + 1);
	if (!s)
		return 0;
	memcpy(s, data, size);
	s[size] = '\0';
	bc_age a;
	if (bc_age_resolve(r, s, &a) != BC_OK || (unsigned)a.status > BC_AGE_UNKNOWN)
		abort();
	if (a.status != BC_AGE_UNKNOWN && !(a.older_ma >= a.younger_ma))
		abort();
	/* split in two at a tab, as the two Darwin Core columns */
	char *tab = strchr(s, '\t');
	if (tab) {
		*tab = '\0';
		if (bc_age_resolve_pair(r, s, tab + 1, &a) != BC_OK)
			abort();
	}
	free(s);
	return 0;
}
