/*
 * fuzz_colmap.c - libFuzzer target: the column-map parser
 * (bc_colmap__parse) and binding a header row against the map
 * (bc_colmap__bind). The input's first line is a header row (comma
 * separated); the rest is the map text.
 */
#include "fuzz.h"
#include "colmap.h"

static bc_vocab *units;

int LLVMFuzzerInitialize(int *argc, char ***argv)
{
	(void)argc;
	(void)argv;
	bc_err err = {0};
	if (bc_vocab__builtin(&units, BC_VOCAB_UNITS, &err) != BC_OK) {
		fprintf(stderr, "fuzz_colmap: %s\n", err.msg);
		abort();
	}
	return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	const char *nl = memchr(data, '\n', size);
	size_t hlen = nl ? (size_t)((const uint8_t *)nl - data) : 0;
	const char *map = nl ? nl + 1 : (const char *)data;
	size_t mlen = nl ? size - hlen - 1 : size;
	bc_colmap *m = NULL;
	bc_err err = {0};
	if (bc_colmap__parse(&m, "fuzz.map", map, mlen, units, &err) != BC_OK) {
		if (!err.msg[0] || strchr(err.msg, '\n'))
			abort();
		return 0;
	}
	/* Split the header line at commas. */
	char *hl = fuzz_text(data, hlen);
	const char *headers[64];
	size_t n = 0;
	for (char *p = hl, *q; n < 64; p = q + 1) {
		headers[n++] = p;
		if (!(q = strchr(p, ',')))
			break;
		*q = '\0';
	}
	bc_colplan plan;
	memset(&plan, 0, sizeof plan);
	if (bc_colmap__bind(&plan, m, headers, n, "fuzz.csv", 1, &err) == BC_OK) {
		if (plan.ncols != n)
			abort();
		for (size_t i = 0; i < n; i++)
			if (plan.col_term[i] < -1 || plan.col_term[i] > BC_T_DEPTH)
				abort();
		for (int t = 0; t < BC_TERM_COUNT; t++)
			if (plan.term_col[t] < -1 || plan.term_col[t] >= (int)n)
				abort();
	} else if (!err.msg[0] || strchr(err.msg, '\n')) {
		abort();
	}
	bc_colplan__free(&plan);
	free(hl);
	bc_colmap__free(m);
	return 0;
}
