/*
 * fuzz_resolve.c - libFuzzer target for bc_age_resolve and
 * bc_age_resolve_pair: arbitrary bytes (cut at the first NUL, as C strings
 * are) must never crash; invalid UTF-8 must come back as status unknown.
 * Seeds: tests/fuzz/resolve/, dictionary tests/fuzz/resolve.dict.
 * Built by make fuzz-build (build-fuzz/fuzz/fuzz_resolve); make fuzz runs it.
 */
#include "fuzz.h"
#include "bathychron.h"

#include <stdlib.h>
#include <string.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
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
	/* Text fields end within their arrays and stay valid UTF-8 (a note
	 * that quotes the input must not cut a character in two). */
	int utf8 = fuzz_utf8_valid((const unsigned char *)s, strlen(s));
	if (!utf8 && a.status != BC_AGE_UNKNOWN)
		abort();
	if (!fuzz_field_ok(a.from, sizeof a.from, 1) || !fuzz_field_ok(a.to, sizeof a.to, 1) ||
	    !fuzz_field_ok(a.note, sizeof a.note, utf8)) {
		fprintf(stderr, "from/to/note not terminated or not UTF-8: note \"%.80s\"\n", a.note);
		abort();
	}
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
