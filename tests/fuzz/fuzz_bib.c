/*
 * fuzz_bib.c - libFuzzer target: the BibTeX reader (bc_bib__parse) and
 * the TeX-to-UTF-8 conversion. Good entries must have a key and a type;
 * bad ones come back as one-line messages; valid UTF-8 in gives valid
 * UTF-8 out.
 */
#include "fuzz.h"
#include "bib.h"
#include "csvio.h"

typedef struct seen {
	long n;
	int input_utf8; /* the whole input is valid UTF-8 */
} seen;

static int on_entry(void *ctx, const bc_bib_entry *e, bc_err *err)
{
	(void)err;
	seen *s = ctx;
	s->n++;
	if (!e->key || !e->type || e->line < 1)
		abort();
	const char *fields[] = {e->key, e->authors, e->year, e->title, e->journal, e->volume, e->pages, e->doi};
	for (size_t i = 0; s->input_utf8 && i < sizeof fields / sizeof fields[0]; i++)
		if (fields[i] && !bc_csv__utf8_valid((const unsigned char *)fields[i], strlen(fields[i]), NULL)) {
			fprintf(stderr, "entry at line %ld: field %zu is not valid UTF-8\n", e->line, i);
			abort();
		}
	return 0;
}

static void on_bad(void *ctx, const char *message)
{
	(void)ctx;
	if (!message || !message[0] || strchr(message, '\n'))
		abort();
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	seen s = {0, bc_csv__utf8_valid(data, size, NULL)};
	bc_err err = {0};
	int rc = bc_bib__parse("fuzz.bib", (const char *)data, size, on_entry, on_bad, &s, &err);
	if (rc != BC_OK && (!err.msg[0] || strchr(err.msg, '\n')))
		abort();
	char *tex = fuzz_text(data, size);
	char *u = bc_bib__tex_to_utf8(tex);
	if (u && bc_csv__utf8_valid((const unsigned char *)tex, strlen(tex), NULL) &&
	    !bc_csv__utf8_valid((const unsigned char *)u, strlen(u), NULL)) {
		fprintf(stderr, "valid UTF-8 TeX gave invalid UTF-8\n");
		abort();
	}
	free(u);
	free(tex);
	return 0;
}
