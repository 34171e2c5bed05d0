/*
 * fuzz_csv.c - libFuzzer target: the CSV/TSV reader (bc_csv__open_mem).
 * The first byte picks the delimiter option (detect, comma, tab,
 * semicolon); the rest is the file. Every record read is written back with
 * the writer's quoting (bc_csv__quote and, with the formula guard,
 * bc_csv__text_cell) and read again: the cells must come back unchanged,
 * so nothing is lost between export and import. The file is also read
 * with every line through libcsv (bc_csv__libcsv_only): the reader's own
 * split of lines without quotes must give the same records on the same
 * lines, or the same refusal.
 */
#include "fuzz.h"
#include "csvio.h"

static void one_line(const bc_err *err)
{
	if (!err->msg[0] || strchr(err->msg, '\n'))
		abort();
}

/* Reads every record of `data`; with `out`, also writes them back as
 * CSV quoted for the detected delimiter; with `lines`, notes each
 * record's line and the refusal, if any. Every line goes through libcsv
 * with `libcsv_only`. Returns the number of records read, or -1 when the
 * reader refused the input. */
static long read_all(const char *data, size_t len, char delim, bc_buf *out, bc_buf *cells, char *used, bc_buf *lines, int libcsv_only)
{
	bc_csv *c = NULL;
	bc_err err = {0};
	bc_csv_options opts = {delim};
	if (bc_csv__open_mem(&c, "fuzz.csv", data, len, &opts, &err) != BC_OK) {
		one_line(&err);
		return -1;
	}
	bc_csv__libcsv_only(c, libcsv_only);
	long n = 0, last_line = 0;
	int rc;
	while ((rc = bc_csv__next(c, &err)) == 1) {
		long line = bc_csv__line(c);
		if (line < 1 || line <= last_line)
			abort(); /* records start on strictly increasing lines */
		last_line = line;
		if (lines)
			bc__buf_printf(lines, "%ld ", line);
		size_t nf = bc_csv__nfields(c);
		if (nf == 0)
			abort();
		for (size_t i = 0; i < nf; i++) {
			const char *f = bc_csv__field(c, i);
			if (!f)
				abort();
			if (cells) {
				bc__buf_append(cells, f, strlen(f));
				bc__buf_append(cells, "\x01", 1);
			}
			if (out) {
				/* A file's first cell that itself starts with U+FEFF
				 * (a doubled byte-order mark) only survives behind a
				 * byte-order mark: the reader drops one at the start. */
				if (out->len == 0 && n == 0 && i == 0 && strncmp(f, "\xef\xbb\xbf", 3) == 0)
					bc__buf_append(out, "\xef\xbb\xbf", 3);
				if (i)
					bc__buf_append(out, &(char){bc_csv__delim(c)}, 1);
				bc_csv__quote(out, f, bc_csv__delim(c));
			}
		}
		if (cells)
			bc__buf_append(cells, "\x02", 1);
		if (out)
			bc__buf_append(out, "\n", 1);
		n++;
	}
	if (used)
		*used = bc_csv__delim(c);
	if (rc < 0) {
		one_line(&err);
		if (lines)
			bc__buf_printf(lines, "refused: %s", err.msg);
		n = -1;
	}
	bc_csv__free(c);
	return n;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	if (size < 1)
		return 0;
	static const char delims[] = {0, ',', '\t', ';'};
	char delim = delims[data[0] % 4];
	const char *text = (const char *)data + 1;
	size_t len = size - 1;
	bc_buf out = {0}, cells = {0}, again = {0}, lines = {0};
	char used = 0;
	long n = read_all(text, len, delim, &out, &cells, &used, &lines, 0);
	{
		/* Every line through libcsv: the same records on the same lines. */
		bc_buf lib = {0}, lib_lines = {0};
		long k = read_all(text, len, delim, NULL, &lib, NULL, &lib_lines, 1);
		if (k != n || lib.len != cells.len || (cells.len && memcmp(lib.data, cells.data, cells.len) != 0) ||
			lib_lines.len != lines.len || (lines.len && memcmp(lib_lines.data, lines.data, lines.len) != 0)) {
			fprintf(stderr, "the plain-line split and libcsv differ: %ld records, then %ld\n", n, k);
			abort();
		}
		bc__buf_free(&lib);
		bc__buf_free(&lib_lines);
	}
	if (n > 0 && used) {
		/* Written back and read again: the same cells. */
		long m = read_all(out.data ? out.data : "", out.len, used, NULL, &again, NULL, NULL, 0);
		if (m != n || again.len != cells.len || (cells.len && memcmp(again.data, cells.data, cells.len) != 0)) {
			fprintf(stderr, "round trip changed the cells: %ld records, then %ld\n", n, m);
			abort();
		}
	}
	/* The formula guard: a cell written with it never starts with a
	 * character a spreadsheet would run (= + - @ tab CR). */
	{
		char *cell = fuzz_text(data + 1, size - 1);
		bc_buf g = {0};
		bc_csv__text_cell(&g, cell, ',', 1);
		if (g.len) {
			const char *p = g.data;
			if (*p == '"')
				p++;
			if (*p == '=' || *p == '+' || *p == '-' || *p == '@' || *p == '\t' || *p == '\r')
				abort();
		}
		bc__buf_free(&g);
		free(cell);
	}
	bc__buf_free(&out);
	bc__buf_free(&cells);
	bc__buf_free(&again);
	bc__buf_free(&lines);
	return 0;
}
