/*
 * age.h - the age resolver's private pieces, shared by age.c (the resolver
 * object, name index, cache), age_parse.c (resolving one text),
 * age_number.c (numeric ages) and age_alias.c (alias tables).
 */
#ifndef BC_AGE_H
#define BC_AGE_H

#include "internal.h"

/* A string -> int hash map (open addressing, keys owned). */
typedef struct strmap {
	char **keys;
	int *vals;
	size_t cap, n;
} strmap;

/* A span of time: chart interval indexes of its ends (-1 if none) and bounds. */
typedef struct span {
	int from, to;
	double older, younger;
} span;

typedef struct alias {
	char *text, *note;
	span sp;
} alias;

/* A cached answer; interval names are looked up again from the chart. */
typedef struct cached {
	bc_age_status status;
	int from, to, uncertain;
	double older, younger;
	char *note;
} cached;

/* The caches stop growing at AGE_CACHE_MAX answers (a few tens of MB at most). */
enum { AGE_CACHE_MAX = 1 << 18, AGE_KEY_MAX = 512, AGE_RAW_MAX = 256 };

struct bc_resolver {
	const bc_chart *chart;
	strmap names;   /* key of an interval name, IRI or label -> interval */
	strmap prio;    /* key -> priority of the label that set it (0 best) */
	strmap stems;   /* stem of a one-word name -> interval, -2 if ambiguous */
	strmap aliases; /* alias key -> index into alias_v */
	strmap alias_stems; /* stem of a one-word alias -> index into alias_v, -2 if ambiguous */
	alias *alias_v;
	size_t nalias, capalias;
	int (*pos_child)[3]; /* per interval: its Lower/Middle/Upper child, or -1 */
	size_t skipped;
	char *first_skipped;
	strmap raw, norm; /* answer caches: raw bytes / folded text -> index into cache_v */
	cached *cache_v;
	size_t ncache, capcache;
	double max_ma;
};

/* age.c */

/** The value of `key`, or NULL. */
const int *bc_age__strmap_get(const strmap *m, const char *key);
/** The value of the first `n` bytes of `key`, or NULL. */
const int *bc_age__strmap_getn(const strmap *m, const char *key, size_t n);
/** Sets key -> val (replacing); returns 0 or BC_ENOMEM. */
int bc_age__strmap_set(strmap *m, const char *key, int val);
/** Folds and keys `text` into `out`; returns the key length or a negative fold code. */
long bc_age__make_key(const char *text, char *out, size_t cap);
/** Folds British and older spellings of a key onto one form, in place. */
void bc_age__key_spelling(char *s);
/** Stem of a one-word key: a documented suffix removed, leaving at least 4 bytes. */
size_t bc_age__stem(const char *key, char *out, size_t cap);
/** Empties both answer caches (after the aliases change). */
void bc_age__cache_clear(bc_resolver *r);

/* age_parse.c */

/** The finest chart interval holding `ma` at an older (1) or younger (0) end, or -1. */
int bc_age__finest_at(const bc_resolver *r, double ma, int older_end);
/** Resolves an alias target ("Upper Cretaceous", "A|B" alternatives) in the chart, without aliases. */
int bc_age__alias_target(const bc_resolver *r, const char *text, span *sp);
/** Resolves one folded text, uncached, into `out`. */
void bc_age__resolve_folded(const bc_resolver *r, const char *folded, bc_age *out);

/* age_number.c */

/** ASCII letter or any byte of a multi-byte UTF-8 character. */
int bc_age__is_alpha(char c);
/** ASCII digit. */
int bc_age__is_digit(char c);
/** `p` past any spaces. */
const char *bc_age__skip_sp(const char *p);
/** Reads a numeric age; 1 on success, 0 not numbers, -1 numbers but unreadable, -2 older than the chart. */
int bc_age__resolve_numbers(const bc_resolver *r, const char *s, span *sp, char *note, size_t cap);

/* age_alias.c */

/** Parses an alias table. `shipped`: rows whose targets are missing are skipped, not errors. */
int bc_age__alias_parse(bc_resolver *r, const char *data, size_t len, const char *path, int shipped, bc_err *err);

#endif
