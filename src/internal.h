/*
 * internal.h - helpers shared by the library's modules; not installed.
 * Allocation goes through bc__malloc so a test build can fail the Nth call.
 */
#ifndef BC_INTERNAL_H
#define BC_INTERNAL_H

#include "bathychron.h"
#include <stdarg.h>
#include <stdbool.h>

void *bc__malloc(size_t n);
void *bc__calloc(size_t count, size_t size);
void *bc__realloc(void *p, size_t n);
char *bc__strdup(const char *s);
char *bc__strndup(const char *s, size_t n);
/**
 * Room for one more element in the array `p` holding `n` of `*cap`
 * elements of `elem` bytes: returns `p` when there is room, else the
 * array grown (doubled; `first` elements when empty) with *cap updated, or
 * NULL when out of memory (then `p` is untouched and still the caller's).
 */
void *bc__grow(void *p, size_t n, size_t *cap, size_t elem, size_t first);
/** Test hook: make the Nth allocation from now fail (0 = never). */
void bc__alloc_fail_after(long n);

int bc__err_vset(bc_err *err, int code, const char *fmt, va_list ap);

/** A growable string. Zero-initialise; free with bc__buf_free. */
typedef struct bc_buf {
	char *data;
	size_t len, cap;
} bc_buf;
int bc__buf_append(bc_buf *b, const char *s, size_t n);
int bc__buf_puts(bc_buf *b, const char *s);
int bc__buf_printf(bc_buf *b, const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 2, 3)))
#endif
	;
/** Appends `s` as a JSON string literal, quotes included. */
int bc__buf_json_string(bc_buf *b, const char *s);
void bc__buf_free(bc_buf *b);

/** Appends "; " and a formatted part to the note in `note` (`cap` bytes),
 * silently stopping when it is full (a part may be cut short). */
void bc__note_add(char *note, size_t cap, const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 3, 4)))
#endif
	;

/** SHA-256 of a byte string as 64 lowercase hex digits plus NUL. */
void bc__sha256_hex(const void *data, size_t n, char out[65]);
/** SHA-256 of a whole file. Returns 0, or BC_EIO with err filled. */
int bc__sha256_file(const char *path, char out[65], bc_err *err);

/** Reads a whole file into memory (NUL-terminated). Caller frees. */
int bc__read_file(const char *path, char **out, size_t *len, bc_err *err);

/** Built-in text resources compiled from reference/ and schema/. */
typedef struct bc_resource {
	const char *name; /* path relative to the project, e.g. "reference/preservation.tsv" */
	const char *data;
	size_t len;
} bc_resource;
/** The resource named `name`, or NULL. */
const bc_resource *bc__resource(const char *name);
/** All resources whose name starts with `prefix`, in name order; returns the count. */
size_t bc__resources(const char *prefix, const bc_resource **out, size_t max);

#endif
