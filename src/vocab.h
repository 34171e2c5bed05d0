/*
 * vocab.h - the project's vocabularies (private): environment -> depth
 * range, preservation -> articulation class, depth units. Each is a TSV
 * under reference/ with a source per row, overridable from a user file.
 */
#ifndef BC_VOCAB_H
#define BC_VOCAB_H

#include "db.h"

typedef enum bc_vocab_kind {
	BC_VOCAB_ENVIRONMENTS = 0, /* term, min_m, max_m, note, source */
	BC_VOCAB_PRESERVATION,     /* term, class, note, source */
	BC_VOCAB_UNITS             /* unit, metres, note, source */
} bc_vocab_kind;

typedef struct bc_vocab_term {
	char *term;    /* as written in the file */
	char *key;     /* normalised for matching */
	double min_m, max_m; /* environments: range; units: metres per unit in min_m */
	char *cls;     /* preservation: articulation class */
	char *note, *source;
} bc_vocab_term;

typedef struct bc_vocab bc_vocab;

/** The shipped vocabulary of `kind`. Caller frees with bc_vocab__free. */
int bc_vocab__builtin(bc_vocab **out, bc_vocab_kind kind, bc_err *err);
/**
 * Adds the terms of a user file of the same form; a term already present
 * is replaced (the file overrides), new ones are added. Messages
 * "FILE:LINE: field: what".
 */
int bc_vocab__merge_file(bc_vocab *v, const char *path, bc_err *err);
void bc_vocab__free(bc_vocab *v);

/** The term matching `text` (case, spaces, '-' and '_' ignored), or NULL. Borrowed. */
const bc_vocab_term *bc_vocab__find(const bc_vocab *v, const char *text);
size_t bc_vocab__count(const bc_vocab *v);
const bc_vocab_term *bc_vocab__term(const bc_vocab *v, size_t i);
/** "a, b, c": every term, for messages. Borrowed. */
const char *bc_vocab__list(const bc_vocab *v);
/** "built-in" or "built-in + FILE". Borrowed. */
const char *bc_vocab__name(const bc_vocab *v);
/** SHA-256 of the text of every file merged in. Borrowed. */
const char *bc_vocab__sha256(const bc_vocab *v);
const char *bc_vocab__kind_name(bc_vocab_kind kind);

/**
 * Records the vocabulary in tables vocabularies/vocabulary_terms unless the
 * same kind and content is already there; `id` gets its vocabulary_id.
 * The caller holds the transaction.
 */
int bc_vocab__store(bc_db *db, const bc_vocab *v, int64_t *id, bc_err *err);

/** Normalises a term for matching into `out` (lower case ASCII, one space). */
void bc_vocab__normalise(const char *in, char *out, size_t cap);

#endif
