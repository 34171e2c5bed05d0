/*
 * csvio.h - the delimited-text reader (private; not named csv.h because
 * that would hide libcsv's <csv.h> on the -Isrc include path): CSV and TSV, UTF-8 with or
 * without BOM, CRLF, RFC 4180 quoting; built on Debian's libcsv.
 */
#ifndef BC_CSV_H
#define BC_CSV_H

#include "internal.h"

typedef struct bc_csv bc_csv;

/** Delimiter choice: 0 = detect from the header line (tab, comma or semicolon). */
typedef struct bc_csv_options {
	char delim;
} bc_csv_options;

/**
 * Opens `path` for reading; `name` is used in messages (NULL = path).
 * Refuses UTF-16 (BOM) up front. The reader is the caller's (bc_csv__free).
 */
int bc_csv__open(bc_csv **out, const char *path, const char *name, const bc_csv_options *opts, bc_err *err);
/** Reads from memory (`data` borrowed; must outlive the reader). */
int bc_csv__open_mem(bc_csv **out, const char *name, const char *data, size_t len, const bc_csv_options *opts, bc_err *err);
/** With on set, every line goes through libcsv, none through the reader's
 * own split of a line without quotes; the records are the same (the tests
 * and the fuzz target compare the two). Call before the first read. */
void bc_csv__libcsv_only(bc_csv *c, int on);
/** Hashes every byte of the input as it is read (call before the first
 * read); after the end of the input, bc_csv__input_sha256 gives the
 * SHA-256 in hex, as bc__sha256_file would. BC_ERROR before the end, after
 * a reading error, or without bc_csv__hash_input. */
void bc_csv__hash_input(bc_csv *c);
int bc_csv__input_sha256(bc_csv *c, char out[65]);

/**
 * Advances to the next record. Returns 1 when a record is ready, 0 at the
 * end, or a negative code with err as "FILE:LINE: what" (encoding, NUL
 * byte, unterminated quote). Records whose cells are all empty are skipped.
 */
int bc_csv__next(bc_csv *c, bc_err *err);
size_t bc_csv__nfields(const bc_csv *c);
/** Field i of the current record (NUL-terminated, borrowed until the next call). */
const char *bc_csv__field(const bc_csv *c, size_t i);
/** Physical line (1-based) where the current record starts. */
long bc_csv__line(const bc_csv *c);
/** The delimiter in use (after detection; 0 before the first record). */
char bc_csv__delim(const bc_csv *c);
/** Bytes consumed so far, and the input's size (0 when unknown). */
uint64_t bc_csv__bytes(const bc_csv *c);
uint64_t bc_csv__size(const bc_csv *c);
/** The name used in messages. Borrowed. */
const char *bc_csv__name(const bc_csv *c);
void bc_csv__free(bc_csv *c);

/** 1 when s[0..n) is valid UTF-8 (no overlongs, no surrogates). */
int bc_csv__utf8_valid(const unsigned char *s, size_t n, size_t *bad_at);

/** Writes one cell to `b` quoted as RFC 4180 needs for delimiter `delim`. */
int bc_csv__quote(bc_buf *b, const char *s, char delim);

/**
 * Writes a text cell: with `guard`, a cell starting with = + - @ tab or CR
 * gets a leading ' so a spreadsheet shows it as text instead of running
 * it as a formula (OWASP "CSV Injection"); then quoted as needed.
 */
int bc_csv__text_cell(bc_buf *b, const char *s, char delim, int guard);

#endif
