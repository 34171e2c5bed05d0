/*
 * bib.h - the BibTeX reader (private): entries with TeX accents turned
 * into UTF-8, @string macros, # concatenation.
 */
#ifndef BC_BIB_H
#define BC_BIB_H

#include "internal.h"

typedef struct bc_bib_entry {
	long line;          /* line of the '@' */
	char *type, *key;
	char *authors, *year, *title, *journal, *volume, *pages, *doi;
} bc_bib_entry;

/** Called per good entry (borrowed for the call) and per bad one ("FILE:LINE: key: what"). */
typedef int (*bc_bib_entry_fn)(void *ctx, const bc_bib_entry *e, bc_err *err);
typedef void (*bc_bib_bad_fn)(void *ctx, const char *message);

/**
 * Parses BibTeX text. Bad entries are passed to `bad` and skipped; an
 * entry callback returning non-zero stops the parse with that code.
 */
int bc_bib__parse(const char *name, const char *text, size_t len, bc_bib_entry_fn on_entry, bc_bib_bad_fn bad, void *ctx, bc_err *err);

/** TeX text to UTF-8: accents ({\"u}, \'e, \c{c}, \ss ...), --, ~, braces removed, spaces collapsed. Caller frees. */
char *bc_bib__tex_to_utf8(const char *tex);

#endif
