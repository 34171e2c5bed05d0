/*
 * text.h - Unicode text folding for matching free text against names
 * (private to the library): one normal form for comparison, plus an edit
 * distance for suggestions.
 */
#ifndef BC_TEXT_H
#define BC_TEXT_H

#include <stddef.h>

/**
 * Folds `len` bytes of UTF-8 into one comparison form, written to `out`
 * (capacity `cap`, always NUL-terminated on success):
 *   compatibility decomposition (NFKD, so NFC and NFD input fold alike,
 *   and ligatures, full-width forms and superscripts become plain letters),
 *   Unicode case folding, removal of combining marks (diacritics),
 *   every dash and minus sign to '-', every quotation mark to ' or ",
 *   every kind of white space and control character to one ASCII space,
 *   runs of spaces collapsed, leading and trailing space removed.
 * Returns the folded length, or
 *   -1 when the input is not valid UTF-8 (`*bad_at`, if not NULL, gets
 *      the byte offset of the first bad sequence),
 *   -2 when the folded text does not fit in `cap` bytes or the input is
 *      longer than BC_TEXT_MAX bytes.
 */
#define BC_TEXT_MAX 4096
long bc_text__fold(const char *in, size_t len, char *out, size_t cap, size_t *bad_at);

/**
 * Turns folded text into a name key in place: every character that is
 * not a letter or digit becomes a space, then spaces are collapsed and
 * trimmed ("mid.-cretaceous" -> "mid cretaceous"). Returns the new length.
 */
size_t bc_text__key(char *s);

/**
 * Levenshtein distance between two UTF-8 strings, counted in code points.
 * Stops early and returns `max + 1` once the distance must exceed `max`.
 * Strings longer than 256 code points count as distance `max + 1`.
 */
size_t bc_text__edit_distance(const char *a, const char *b, size_t max);

#endif
