/*
 * age.c - free-text ages to chart intervals and numbers: the resolver
 * object, its name index and answer cache, and the public entry points.
 * Text is folded once (text.c) and every answer is cached by its raw and
 * folded text; names and aliases live in tables (the chart,
 * reference/age-aliases.tsv), the matching rules are documented in
 * doc/age-resolution.md. Resolving one text is age_parse.c, numbers
 * age_number.c, alias tables age_alias.c.
 */
#include "age.h"
#include "text.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* ------------------------------------------------------------------ */
/* A string -> int hash map (open addressing, keys owned).             */
/* ------------------------------------------------------------------ */

static uint64_t age_hash(const char *s, size_t n)
{
	uint64_t h = 1469598103934665603ull;
	for (size_t i = 0; i < n; i++) {
		h ^= (unsigned char)s[i];
		h *= 1099511628211ull;
	}
	return h ^ (h >> 29);
}

static void strmap_free(strmap *m)
{
	for (size_t i = 0; i < m->cap; i++)
		free(m->keys[i]);
	free(m->keys);
	free(m->vals);
	memset(m, 0, sizeof *m);
}

/* Slot of `key` (length n): the slot holding it, or the empty slot to fill. */
static size_t strmap_slot(const strmap *m, const char *key, size_t n)
{
	size_t mask = m->cap - 1, i = (size_t)age_hash(key, n) & mask;
	while (m->keys[i] && !(strncmp(m->keys[i], key, n) == 0 && m->keys[i][n] == '\0'))
		i = (i + 1) & mask;
	return i;
}

const int *bc_age__strmap_getn(const strmap *m, const char *key, size_t n)
{
	if (!m->cap)
		return NULL;
	size_t i = strmap_slot(m, key, n);
	return m->keys[i] ? &m->vals[i] : NULL;
}

const int *bc_age__strmap_get(const strmap *m, const char *key) { return bc_age__strmap_getn(m, key, strlen(key)); }

static int strmap_grow(strmap *m)
{
	strmap g = {0};
	g.cap = m->cap ? 2 * m->cap : 256;
	g.keys = bc__calloc(g.cap, sizeof *g.keys);
	g.vals = bc__calloc(g.cap, sizeof *g.vals);
	if (!g.keys || !g.vals) {
		free(g.keys);
		free(g.vals);
		return BC_ENOMEM;
	}
	for (size_t i = 0; i < m->cap; i++)
		if (m->keys[i]) {
			size_t j = strmap_slot(&g, m->keys[i], strlen(m->keys[i]));
			g.keys[j] = m->keys[i];
			g.vals[j] = m->vals[i];
		}
	g.n = m->n;
	free(m->keys);
	free(m->vals);
	*m = g;
	return BC_OK;
}

/* Sets key -> val (replacing); returns 0 or BC_ENOMEM. */
static int strmap_setn(strmap *m, const char *key, size_t n, int val)
{
	if (2 * (m->n + 1) > m->cap && strmap_grow(m) != BC_OK)
		return BC_ENOMEM;
	size_t i = strmap_slot(m, key, n);
	if (!m->keys[i]) {
		if (!(m->keys[i] = bc__strndup(key, n)))
			return BC_ENOMEM;
		m->n++;
	}
	m->vals[i] = val;
	return BC_OK;
}

int bc_age__strmap_set(strmap *m, const char *key, int val) { return strmap_setn(m, key, strlen(key), val); }

/* ------------------------------------------------------------------ */
/* The resolver                                                        */
/* ------------------------------------------------------------------ */

const char *bc_age_status_name(bc_age_status status)
{
	static const char *const names[] = {"exact", "alias", "range", "qualified", "numeric", "unknown"};
	return (unsigned)status < sizeof names / sizeof names[0] ? names[status] : "unknown";
}

const bc_chart *bc_resolver_chart(const bc_resolver *r) { return r->chart; }
size_t bc_resolver_alias_count(const bc_resolver *r) { return r->nalias; }

size_t bc_resolver_aliases_skipped(const bc_resolver *r, const char **first)
{
	if (first)
		*first = r->first_skipped ? r->first_skipped : "";
	return r->skipped;
}

/* ------------------------------------------------------------------ */
/* Keys: folded text without punctuation, with spelling variants.      */
/* ------------------------------------------------------------------ */

/* British and older spellings folded onto one form, on both sides of every match. */
static const char *const age_spelling[][2] = {
	{"palaeo", "paleo"}, {"archaean", "archean"}, {"caenozoic", "cenozoic"}, {"cainozoic", "cenozoic"},
	{"kainozoic", "cenozoic"}, {"eoarchaean", "eoarchean"},
};

void bc_age__key_spelling(char *s)
{
	for (size_t k = 0; k < sizeof age_spelling / sizeof age_spelling[0]; k++) {
		const char *from = age_spelling[k][0], *to = age_spelling[k][1];
		size_t fl = strlen(from), tl = strlen(to);
		char *p;
		while ((p = strstr(s, from)) != NULL) {
			memmove(p + tl, p + fl, strlen(p + fl) + 1);
			memcpy(p, to, tl);
		}
	}
}

/* Folds and keys `text` into `out`; returns the key length or a negative fold code. */
long bc_age__make_key(const char *text, char *out, size_t cap)
{
	long n = bc_text__fold(text, strlen(text), out, cap, NULL);
	if (n < 0)
		return n;
	bc_text__key(out);
	bc_age__key_spelling(out);
	return (long)strlen(out);
}

/* "CambrianStage2" -> "Cambrian Stage 2": IRI tails name intervals some releases leave unlabelled. */
static void iri_words(const char *iri, char *out, size_t cap)
{
	const char *tail = iri;
	for (const char *p = iri; *p; p++)
		if (*p == '/' || *p == '#')
			tail = p + 1;
	size_t o = 0;
	for (const char *p = tail; *p && o + 2 < cap; p++) {
		unsigned char c = (unsigned char)*p, prev = p > tail ? (unsigned char)p[-1] : 0;
		int boundary = p > tail && ((c >= 'A' && c <= 'Z' && !(prev >= 'A' && prev <= 'Z')) ||
			((c >= '0' && c <= '9') != (prev >= '0' && prev <= '9')));
		if (boundary)
			out[o++] = ' ';
		out[o++] = (char)c;
	}
	out[o] = '\0';
}

/* Suffixes of stage names in chart languages, longest first (see bc_age__stem). */
static const char *const age_suffix[] = {
	"ischen", "ienne", "iense", "ische", "ianum", "iano", "iana", "iaan", "isch", "ique", "ien", "ium",
	"ian", "ico", "ica", "iar", "ic", "ense", "ano", "ana", "um", "an", "en", "is", "a", "o", "e", "i",
};

/* Stem of a one-word key: a documented suffix removed, leaving at least 4 bytes. */
size_t bc_age__stem(const char *key, char *out, size_t cap)
{
	size_t n = strlen(key);
	if (n >= cap || strchr(key, ' '))
		return 0;
	memcpy(out, key, n + 1);
	for (size_t i = 0; i < sizeof age_suffix / sizeof age_suffix[0]; i++) {
		size_t sl = strlen(age_suffix[i]);
		if (n >= sl + 4 && memcmp(key + n - sl, age_suffix[i], sl) == 0) {
			out[n - sl] = '\0';
			return n - sl;
		}
	}
	return n;
}

/* ------------------------------------------------------------------ */
/* Building the name index                                             */
/* ------------------------------------------------------------------ */

/* Positional word of a series name: 0 lower/early, 1 middle, 2 upper/late, -1 none. */
static int series_pos(const char *w, size_t n)
{
	static const struct { const char *w; int p; } pos[] = {
		{"lower", 0}, {"early", 0}, {"middle", 1}, {"mid", 1}, {"upper", 2}, {"late", 2},
	};
	for (size_t i = 0; i < sizeof pos / sizeof pos[0]; i++)
		if (strlen(pos[i].w) == n && memcmp(pos[i].w, w, n) == 0)
			return pos[i].p;
	return -1;
}

/* Adds key -> interval unless a key of better (lower) priority holds it. */
static int names_add(bc_resolver *r, const char *text, int iv, int prio)
{
	char key[AGE_KEY_MAX];
	if (bc_age__make_key(text, key, sizeof key) <= 0)
		return BC_OK;
	const int *old = bc_age__strmap_get(&r->prio, key);
	if (old && *old <= prio)
		return BC_OK;
	if (bc_age__strmap_set(&r->names, key, iv) || bc_age__strmap_set(&r->prio, key, prio))
		return BC_ENOMEM;
	char stem[AGE_KEY_MAX];
	if (bc_age__stem(key, stem, sizeof stem) >= 4) {
		const int *s = bc_age__strmap_get(&r->stems, stem);
		if (bc_age__strmap_set(&r->stems, stem, s && *s != iv ? -2 : iv))
			return BC_ENOMEM;
	}
	return BC_OK;
}

static int build_index(bc_resolver *r)
{
	const bc_chart *c = r->chart;
	size_t n = bc_chart_count(c);
	char buf[AGE_KEY_MAX];
	for (size_t i = 0; i < n; i++) {
		const bc_interval *iv = bc_chart_interval(c, i);
		if (names_add(r, iv->name, (int)i, 0))
			return BC_ENOMEM;
		if (iv->iri && *iv->iri) {
			iri_words(iv->iri, buf, sizeof buf);
			if (names_add(r, buf, (int)i, 1))
				return BC_ENOMEM;
		}
		if (iv->older_ma > r->max_ma)
			r->max_ma = iv->older_ma;
	}
	for (size_t i = 0; i < bc_chart_label_count(c); i++) {
		const bc_label *l = bc_chart_label(c, i);
		int prio = strncmp(l->lang, "en", 2) == 0 ? 1 : 2;
		if (names_add(r, l->text, l->interval, prio))
			return BC_ENOMEM;
	}
	r->pos_child = bc__malloc((n ? n : 1) * sizeof *r->pos_child);
	if (!r->pos_child)
		return BC_ENOMEM;
	for (size_t i = 0; i < n; i++)
		r->pos_child[i][0] = r->pos_child[i][1] = r->pos_child[i][2] = -1;
	/* A child named "<Lower|Early|Middle|Upper|Late> <parent>" is a formal series of it. */
	for (size_t i = 0; i < n; i++) {
		const bc_interval *iv = bc_chart_interval(c, i);
		if (iv->parent < 0)
			continue;
		const bc_interval *par = bc_chart_interval(c, (size_t)iv->parent);
		char pk[2][AGE_KEY_MAX];
		pk[1][0] = '\0';
		bc_age__make_key(par->name, pk[0], sizeof pk[0]);
		if (par->iri && *par->iri) {
			iri_words(par->iri, buf, sizeof buf);
			bc_age__make_key(buf, pk[1], sizeof pk[1]);
		}
		for (int v = 0; v < 2; v++) {
			char key[AGE_KEY_MAX];
			if (v == 0)
				bc_age__make_key(iv->name, key, sizeof key);
			else if (iv->iri && *iv->iri) {
				iri_words(iv->iri, buf, sizeof buf);
				bc_age__make_key(buf, key, sizeof key);
			} else
				continue;
			char *sp = strchr(key, ' ');
			if (!sp)
				continue;
			int p = series_pos(key, (size_t)(sp - key));
			if (p >= 0 && (strcmp(sp + 1, pk[0]) == 0 || (pk[1][0] && strcmp(sp + 1, pk[1]) == 0)))
				r->pos_child[iv->parent][p] = (int)i;
		}
	}
	return BC_OK;
}

/* ------------------------------------------------------------------ */
/* Cache                                                               */
/* ------------------------------------------------------------------ */

static int find_iv(const bc_resolver *r, const char *name)
{
	return name[0] ? bc_chart_find(r->chart, name) : -1;
}

/* Stores `a` and returns its cache index, or -1 if the cache is full or memory ran out. */
static int cache_put(bc_resolver *r, const bc_age *a)
{
	if (r->ncache >= AGE_CACHE_MAX)
		return -1;
	cached *p = bc__grow(r->cache_v, r->ncache, &r->capcache, sizeof *p, 1024);
	if (!p)
		return -1;
	r->cache_v = p;
	cached c = {a->status, find_iv(r, a->from), find_iv(r, a->to), a->uncertain, a->older_ma, a->younger_ma, NULL};
	if (!(c.note = bc__strdup(a->note)))
		return -1;
	r->cache_v[r->ncache] = c;
	return (int)r->ncache++;
}

static void cache_get(const bc_resolver *r, int i, bc_age *out)
{
	const cached *c = &r->cache_v[i];
	out->status = c->status;
	out->uncertain = c->uncertain;
	out->older_ma = c->older;
	out->younger_ma = c->younger;
	out->from[0] = out->to[0] = '\0';
	if (c->from >= 0)
		snprintf(out->from, sizeof out->from, "%s", bc_chart_interval(r->chart, (size_t)c->from)->name);
	if (c->to >= 0)
		snprintf(out->to, sizeof out->to, "%s", bc_chart_interval(r->chart, (size_t)c->to)->name);
	snprintf(out->note, sizeof out->note, "%s", c->note);
}

void bc_age__cache_clear(bc_resolver *r)
{
	for (size_t i = 0; i < r->ncache; i++)
		free(r->cache_v[i].note);
	r->ncache = 0;
	strmap_free(&r->raw);
	strmap_free(&r->norm);
}

int bc_age_resolve(bc_resolver *r, const char *text, bc_age *out)
{
	if (!r || !out)
		return BC_EUSAGE;
	if (!text)
		text = "";
	size_t len = strlen(text);
	const int *hit = len <= AGE_RAW_MAX ? bc_age__strmap_getn(&r->raw, text, len) : NULL;
	if (hit) {
		cache_get(r, *hit, out);
		return BC_OK;
	}
	char folded[BC_TEXT_MAX + 1];
	size_t bad = 0;
	long n = bc_text__fold(text, len, folded, sizeof folded, &bad);
	if (n < 0) {
		memset(out, 0, sizeof *out);
		out->status = BC_AGE_UNKNOWN;
		out->older_ma = out->younger_ma = NAN;
		if (n == -1)
			snprintf(out->note, sizeof out->note, "not valid UTF-8 (bad byte at offset %zu)", bad);
		else
			snprintf(out->note, sizeof out->note, "text too long (more than %d bytes)", BC_TEXT_MAX);
		return BC_OK;
	}
	/* Caching is best effort: when memory runs short the answer is still right. */
	int slot;
	hit = bc_age__strmap_getn(&r->norm, folded, (size_t)n);
	if (hit) {
		slot = *hit;
		cache_get(r, slot, out);
	} else {
		bc_age__resolve_folded(r, folded, out);
		if ((slot = cache_put(r, out)) < 0 || strmap_setn(&r->norm, folded, (size_t)n, slot) != BC_OK)
			return BC_OK;
	}
	if (len <= AGE_RAW_MAX && r->raw.n < AGE_CACHE_MAX)
		strmap_setn(&r->raw, text, len, slot);
	return BC_OK;
}

int bc_age_resolve_pair(bc_resolver *r, const char *earliest, const char *latest, bc_age *out)
{
	int has_e = earliest && *earliest, has_l = latest && *latest;
	if (!has_e && !has_l)
		return bc_age_resolve(r, "", out);
	if (!has_l)
		return bc_age_resolve(r, earliest, out);
	if (!has_e)
		return bc_age_resolve(r, latest, out);
	bc_age a, b;
	int rc = bc_age_resolve(r, earliest, &a);
	if (rc == BC_OK)
		rc = bc_age_resolve(r, latest, &b);
	if (rc != BC_OK)
		return rc;
	memset(out, 0, sizeof *out);
	out->uncertain = a.uncertain || b.uncertain;
	if (a.status == BC_AGE_UNKNOWN || b.status == BC_AGE_UNKNOWN) {
		out->status = BC_AGE_UNKNOWN;
		out->older_ma = out->younger_ma = NAN;
		if (a.status == BC_AGE_UNKNOWN)
			bc__note_add(out->note, sizeof out->note, "earliest: %s", a.note);
		if (b.status == BC_AGE_UNKNOWN)
			bc__note_add(out->note, sizeof out->note, "latest: %s", b.note);
		return BC_OK;
	}
	char note[512] = "";
	if (a.note[0])
		bc__note_add(note, sizeof note, "earliest: %s", a.note);
	if (b.note[0])
		bc__note_add(note, sizeof note, "latest: %s", b.note);
	bc_age *old = &a, *young = &b;
	if (a.older_ma + a.younger_ma < b.older_ma + b.younger_ma) {
		old = &b;
		young = &a;
		bc__note_add(note, sizeof note, "earliest is younger than latest; put in order");
	}
	out->older_ma = old->older_ma > young->older_ma ? old->older_ma : young->older_ma;
	out->younger_ma = young->younger_ma < old->younger_ma ? young->younger_ma : old->younger_ma;
	snprintf(out->from, sizeof out->from, "%s", old->from);
	snprintf(out->to, sizeof out->to, "%s", young->to);
	if (a.older_ma == b.older_ma && a.younger_ma == b.younger_ma && strcmp(a.from, b.from) == 0 &&
	    strcmp(a.to, b.to) == 0)
		out->status = a.status;
	else
		out->status = BC_AGE_RANGE;
	snprintf(out->note, sizeof out->note, "%s", note);
	return BC_OK;
}

/* ------------------------------------------------------------------ */
/* Creating and freeing                                               */
/* ------------------------------------------------------------------ */

int bc_resolver_new(bc_resolver **out, const bc_chart *chart, bc_err *err)
{
	*out = NULL;
	if (!chart)
		return bc_err_set(err, BC_EUSAGE, "resolver: no chart");
	bc_resolver *r = bc__calloc(1, sizeof *r);
	if (!r)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	r->chart = chart;
	int rc = build_index(r);
	if (rc) {
		bc_resolver_free(r);
		return bc_err_set(err, rc, "out of memory");
	}
	const bc_resource *res = bc__resource("reference/age-aliases.tsv");
	if (res && (rc = bc_age__alias_parse(r, res->data, res->len, res->name, 1, err)) != BC_OK) {
		bc_resolver_free(r);
		return rc;
	}
	*out = r;
	return BC_OK;
}

void bc_resolver_free(bc_resolver *r)
{
	if (!r)
		return;
	bc_age__cache_clear(r);
	free(r->cache_v);
	strmap_free(&r->names);
	strmap_free(&r->prio);
	strmap_free(&r->stems);
	strmap_free(&r->aliases);
	strmap_free(&r->alias_stems);
	for (size_t i = 0; i < r->nalias; i++) {
		free(r->alias_v[i].text);
		free(r->alias_v[i].note);
	}
	free(r->alias_v);
	free(r->pos_child);
	free(r->first_skipped);
	free(r);
}
