/*
 * age.c - free-text ages to chart intervals and numbers. Text is folded
 * once (text.c) and every answer is cached by its raw and folded text;
 * names and aliases live in tables (the chart, reference/age-aliases.tsv),
 * the matching rules below are documented in doc/age-resolution.md.
 */
#include "internal.h"
#include "text.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* ------------------------------------------------------------------ */
/* A string -> int hash map (open addressing, keys owned).             */
/* ------------------------------------------------------------------ */

typedef struct strmap {
	char **keys;
	int *vals;
	size_t cap, n;
} strmap;

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

static const int *strmap_getn(const strmap *m, const char *key, size_t n)
{
	if (!m->cap)
		return NULL;
	size_t i = strmap_slot(m, key, n);
	return m->keys[i] ? &m->vals[i] : NULL;
}

static const int *strmap_get(const strmap *m, const char *key) { return strmap_getn(m, key, strlen(key)); }

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

static int strmap_set(strmap *m, const char *key, int val) { return strmap_setn(m, key, strlen(key), val); }

/* ------------------------------------------------------------------ */
/* The resolver                                                        */
/* ------------------------------------------------------------------ */

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

static void key_spelling(char *s)
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
static long make_key(const char *text, char *out, size_t cap)
{
	long n = bc_text__fold(text, strlen(text), out, cap, NULL);
	if (n < 0)
		return n;
	bc_text__key(out);
	key_spelling(out);
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

/* ------------------------------------------------------------------ */
/* Word tables (matching rules; names themselves come from the chart). */
/* ------------------------------------------------------------------ */

enum { Q_NONE = 0, Q_EARLY, Q_MIDDLE, Q_LATE, Q_BASAL, Q_TOP };

/* Qualifier words, folded (no diacritics, lower case), in several languages. */
static const struct { const char *w; int q; } age_qual[] = {
	{"early", Q_EARLY}, {"lower", Q_EARLY}, {"inferior", Q_EARLY}, {"inferieur", Q_EARLY},
	{"inferieure", Q_EARLY}, {"inferiore", Q_EARLY}, {"inf", Q_EARLY}, {"unter", Q_EARLY},
	{"untere", Q_EARLY}, {"unterer", Q_EARLY}, {"unteres", Q_EARLY}, {"unteren", Q_EARLY},
	{"fruh", Q_EARLY}, {"fruhe", Q_EARLY}, {"fruhes", Q_EARLY}, {"fruher", Q_EARLY}, {"fruhen", Q_EARLY},
	{"frueh", Q_EARLY}, {"temprano", Q_EARLY}, {"temprana", Q_EARLY}, {"precoce", Q_EARLY},
	{"vroeg", Q_EARLY}, {"onder", Q_EARLY}, {"dolny", Q_EARLY}, {"dolna", Q_EARLY},
	{"нижнии", Q_EARLY}, {"нижняя", Q_EARLY}, {"нижнего", Q_EARLY}, {"нижнеи", Q_EARLY},
	{"раннии", Q_EARLY}, {"ранняя", Q_EARLY},
	{"middle", Q_MIDDLE}, {"mid", Q_MIDDLE}, {"moyen", Q_MIDDLE}, {"moyenne", Q_MIDDLE},
	{"mittel", Q_MIDDLE}, {"mittlere", Q_MIDDLE}, {"mittlerer", Q_MIDDLE}, {"mittleres", Q_MIDDLE},
	{"mittleren", Q_MIDDLE}, {"medio", Q_MIDDLE}, {"media", Q_MIDDLE}, {"midden", Q_MIDDLE},
	{"srodkowy", Q_MIDDLE}, {"средний", Q_MIDDLE}, {"среднии", Q_MIDDLE}, {"средняя", Q_MIDDLE},
	{"late", Q_LATE}, {"upper", Q_LATE}, {"superior", Q_LATE}, {"superieur", Q_LATE},
	{"superieure", Q_LATE}, {"superiore", Q_LATE}, {"sup", Q_LATE}, {"ober", Q_LATE}, {"obere", Q_LATE},
	{"oberer", Q_LATE}, {"oberes", Q_LATE}, {"oberen", Q_LATE}, {"spat", Q_LATE}, {"spate", Q_LATE},
	{"spates", Q_LATE}, {"spater", Q_LATE}, {"spaet", Q_LATE}, {"tardio", Q_LATE}, {"tardia", Q_LATE},
	{"tardif", Q_LATE}, {"tardive", Q_LATE}, {"laat", Q_LATE}, {"boven", Q_LATE}, {"gorny", Q_LATE},
	{"gorna", Q_LATE}, {"верхнии", Q_LATE}, {"верхняя", Q_LATE}, {"верхнего", Q_LATE},
	{"позднии", Q_LATE}, {"поздняя", Q_LATE},
	{"basal", Q_BASAL}, {"basalmost", Q_BASAL}, {"lowermost", Q_BASAL}, {"earliest", Q_BASAL},
	{"base", Q_BASAL}, {"bottom", Q_BASAL}, {"unterste", Q_BASAL}, {"untersten", Q_BASAL},
	{"uppermost", Q_TOP}, {"topmost", Q_TOP}, {"latest", Q_TOP}, {"top", Q_TOP}, {"terminal", Q_TOP},
	{"oberste", Q_TOP}, {"obersten", Q_TOP},
};

/* German prefixes glued to a stage ("Obercampan", "Unterkreide"). */
static const struct { const char *w; int q; } age_glued[] = {
	{"oberst", Q_TOP}, {"unterst", Q_BASAL}, {"ober", Q_LATE}, {"unter", Q_EARLY}, {"mittel", Q_MIDDLE},
};

/* Words that say nothing about the age: "upper part of the", "partie supérieure du". */
static const char *const age_filler[] = {
	"of", "the", "part", "parts", "portion", "de", "du", "des", "del", "della", "dello", "la", "le", "les",
	"l", "el", "der", "die", "das", "des", "teil", "partie", "parte", "in", "from", "von", "vom", "desde",
	"dal", "van", "het", "al", "au", "zum", "zur", "most",
};

/* Rank words after a name ("Campanian Stage", "Kreide-Zeit"). */
static const char *const age_rankword[] = {
	"stage", "stages", "substage", "age", "ages", "series", "subseries", "epoch", "epochs", "system",
	"subsystem", "period", "periods", "subperiod", "era", "erathem", "eon", "eonothem", "etage",
	"stufe", "serie", "periode", "piso", "epoca", "sistema", "ere", "zeit", "time", "times",
};

/* Uncertainty words before a name or number. */
static const char *const age_unsure[] = {
	"cf", "aff", "probably", "possibly", "prob", "poss", "perhaps", "likely", "questionably", "maybe",
	"probablement", "peut etre", "wahrscheinlich", "vermutlich", "fraglich", "moglicherweise",
	"probablemente", "posiblemente", "probabilmente", "forse", "waarschijnlijk", "mogelijk",
	"provavelmente", "prawdopodobnie", "?",
};

/* Approximation words before a number. */
static const char *const age_approx[] = {"c", "ca", "circa", "approx", "approximately", "about", "around", "~", "env", "environ", "etwa", "ungefahr", "cerca"};

/* Suffixes of stage names in chart languages, longest first (see age_stem). */
static const char *const age_suffix[] = {
	"ischen", "ienne", "iense", "ische", "ianum", "iano", "iana", "iaan", "isch", "ique", "ien", "ium",
	"ian", "ico", "ica", "iar", "ic", "ense", "ano", "ana", "um", "an", "en", "is", "a", "o", "e", "i",
};

static int word_in(const char *w, size_t n, const char *const *list, size_t count)
{
	for (size_t i = 0; i < count; i++)
		if (strlen(list[i]) == n && memcmp(list[i], w, n) == 0)
			return 1;
	return 0;
}
#define WORD_IN(w, n, list) word_in(w, n, list, sizeof list / sizeof list[0])

static int qual_of(const char *w, size_t n)
{
	for (size_t i = 0; i < sizeof age_qual / sizeof age_qual[0]; i++)
		if (strlen(age_qual[i].w) == n && memcmp(age_qual[i].w, w, n) == 0)
			return age_qual[i].q;
	return Q_NONE;
}

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

/* Stem of a one-word key: a documented suffix removed, leaving at least 4 bytes. */
static size_t age_stem(const char *key, char *out, size_t cap)
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

/* Adds key -> interval unless a key of better (lower) priority holds it. */
static int names_add(bc_resolver *r, const char *text, int iv, int prio)
{
	char key[AGE_KEY_MAX];
	if (make_key(text, key, sizeof key) <= 0)
		return BC_OK;
	const int *old = strmap_get(&r->prio, key);
	if (old && *old <= prio)
		return BC_OK;
	if (strmap_set(&r->names, key, iv) || strmap_set(&r->prio, key, prio))
		return BC_ENOMEM;
	char stem[AGE_KEY_MAX];
	if (age_stem(key, stem, sizeof stem) >= 4) {
		const int *s = strmap_get(&r->stems, stem);
		if (strmap_set(&r->stems, stem, s && *s != iv ? -2 : iv))
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
		make_key(par->name, pk[0], sizeof pk[0]);
		if (par->iri && *par->iri) {
			iri_words(par->iri, buf, sizeof buf);
			make_key(buf, pk[1], sizeof pk[1]);
		}
		for (int v = 0; v < 2; v++) {
			char key[AGE_KEY_MAX];
			if (v == 0)
				make_key(iv->name, key, sizeof key);
			else if (iv->iri && *iv->iri) {
				iri_words(iv->iri, buf, sizeof buf);
				make_key(buf, key, sizeof key);
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
/* Resolution                                                          */
/* ------------------------------------------------------------------ */

/* Working state for one text. */
typedef struct work {
	bc_age_status kind; /* EXACT, ALIAS or QUALIFIED for a term */
	char note[512];
} work;

static void note_add(char *note, size_t cap, const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 3, 4)))
#endif
	;

static void note_add(char *note, size_t cap, const char *fmt, ...)
{
	size_t n = strlen(note);
	if (n + 3 >= cap)
		return;
	if (n) {
		memcpy(note + n, "; ", 3);
		n += 2;
	}
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(note + n, cap - n, fmt, ap);
	va_end(ap);
}

static span span_of(const bc_resolver *r, int iv)
{
	const bc_interval *x = bc_chart_interval(r->chart, (size_t)iv);
	return (span){iv, iv, x->older_ma, x->younger_ma};
}

/* The finest chart interval holding `ma`: for an older end (younger < ma <= older),
 * for a younger end (younger <= ma < older). Ties: shortest interval. -1 if none. */
static int finest_at(const bc_resolver *r, double ma, int older_end)
{
	int best = -1;
	double bestlen = INFINITY;
	int bestrank = -1;
	for (size_t i = 0; i < bc_chart_count(r->chart); i++) {
		const bc_interval *x = bc_chart_interval(r->chart, i);
		int in = older_end ? (x->younger_ma < ma && ma <= x->older_ma) : (x->younger_ma <= ma && ma < x->older_ma);
		if (!in && x->older_ma == x->younger_ma)
			in = ma == x->older_ma;
		if (!in)
			continue;
		double len = x->older_ma - x->younger_ma;
		if ((int)x->rank > bestrank || ((int)x->rank == bestrank && len < bestlen)) {
			best = (int)i;
			bestlen = len;
			bestrank = (int)x->rank;
		}
	}
	if (best < 0 && r->chart && bc_chart_count(r->chart)) {
		/* The very ends of the chart (0 Ma as an older end, its oldest bound as a younger end). */
		for (size_t i = 0; i < bc_chart_count(r->chart); i++) {
			const bc_interval *x = bc_chart_interval(r->chart, i);
			if ((x->younger_ma == ma || x->older_ma == ma) && ((int)x->rank > bestrank)) {
				best = (int)i;
				bestrank = (int)x->rank;
			}
		}
	}
	return best;
}

/* An alias by the stem of a one-word key ("Senonien" -> Senonian), or NULL. */
static const int *alias_by_stem(const bc_resolver *r, const char *key, size_t n)
{
	char word[AGE_KEY_MAX], stem[AGE_KEY_MAX];
	if (n < 5 || n >= sizeof word || memchr(key, ' ', n))
		return NULL;
	memcpy(word, key, n);
	word[n] = '\0';
	const int *v = strmap_get(&r->alias_stems, word);
	if ((!v || *v < 0) && age_stem(word, stem, sizeof stem) >= 4)
		v = strmap_get(&r->alias_stems, stem);
	return v && *v >= 0 ? v : NULL;
}

/* Looks a key up as a chart name, label or IRI, then (if allowed) an alias, then by stem. */
static int lookup_key(const bc_resolver *r, const char *key, size_t n, int use_alias, span *sp, work *w)
{
	const int *v = strmap_getn(&r->names, key, n);
	if (v) {
		*sp = span_of(r, *v);
		return 1;
	}
	if (use_alias && ((v = strmap_getn(&r->aliases, key, n)) != NULL || (v = alias_by_stem(r, key, n)) != NULL)) {
		const alias *a = &r->alias_v[*v];
		*sp = a->sp;
		if (w) {
			w->kind = BC_AGE_ALIAS;
			const bc_interval *f = bc_chart_interval(r->chart, (size_t)a->sp.from);
			const bc_interval *t = bc_chart_interval(r->chart, (size_t)a->sp.to);
			if (a->sp.from == a->sp.to)
				note_add(w->note, sizeof w->note, "alias '%s' = %s: %s", a->text, f->name, a->note);
			else
				note_add(w->note, sizeof w->note, "alias '%s' = %s to %s: %s", a->text, f->name, t->name, a->note);
		}
		return 1;
	}
	if (n < 5 || memchr(key, ' ', n))
		return 0;
	char word[AGE_KEY_MAX], stem[AGE_KEY_MAX];
	if (n >= sizeof word)
		return 0;
	memcpy(word, key, n);
	word[n] = '\0';
	if (!(v = strmap_get(&r->stems, word)) || *v < 0) {
		if (age_stem(word, stem, sizeof stem) < 4 || !(v = strmap_get(&r->stems, stem)) || *v < 0)
			return 0;
	}
	*sp = span_of(r, *v);
	if (w)
		note_add(w->note, sizeof w->note, "'%s' matched %s by its stem (language suffix rule)", word,
			bc_chart_interval(r->chart, (size_t)*v)->name);
	return 1;
}

/* Splits a key into words: starts and lengths. Returns the count (at most max). */
static int split_words(const char *key, const char **ws, size_t *wl, int max)
{
	int n = 0;
	const char *p = key;
	while (*p && n < max) {
		const char *e = strchr(p, ' ');
		size_t len = e ? (size_t)(e - p) : strlen(p);
		ws[n] = p;
		wl[n++] = len;
		p += len;
		while (*p == ' ')
			p++;
	}
	return *p ? -1 : n;
}

/* Joins words [a, b) of the key into out. */
static size_t join_words(const char **ws, const size_t *wl, int a, int b, char *out, size_t cap)
{
	size_t o = 0;
	for (int i = a; i < b; i++) {
		if (o + wl[i] + 2 > cap)
			return 0;
		if (o)
			out[o++] = ' ';
		memcpy(out + o, ws[i], wl[i]);
		o += wl[i];
	}
	out[o] = '\0';
	return o;
}

static const char *qual_word_name(int q)
{
	static const char *const n[] = {"", "early", "middle", "late", "basal", "uppermost"};
	return n[q];
}

/* Narrows a span by one qualifier (the convention is documented in the note). */
static void apply_qual(const bc_resolver *r, span *sp, int q, work *w, int nested)
{
	double o = sp->older, y = sp->younger, d = o - y;
	char what[300];
	if (nested)
		snprintf(what, sizeof what, "that part");
	else if (sp->from >= 0 && sp->from == sp->to)
		snprintf(what, sizeof what, "%s", bc_chart_interval(r->chart, (size_t)sp->from)->name);
	else
		snprintf(what, sizeof what, "%s to %s", sp->from >= 0 ? bc_chart_interval(r->chart, (size_t)sp->from)->name : "?",
			sp->to >= 0 ? bc_chart_interval(r->chart, (size_t)sp->to)->name : "?");
	static const char *const how[] = {"", "lower third", "middle third", "upper third", "lowest tenth", "highest tenth"};
	switch (q) {
	case Q_EARLY: sp->younger = o - d / 3; break;
	case Q_MIDDLE: sp->older = o - d / 3; sp->younger = o - 2 * d / 3; break;
	case Q_LATE: sp->older = o - 2 * d / 3; break;
	case Q_BASAL: sp->younger = o - d / 10; break;
	case Q_TOP: sp->older = y + d / 10; break;
	default: return;
	}
	sp->from = finest_at(r, sp->older, 1);
	sp->to = finest_at(r, sp->younger, 0);
	w->kind = BC_AGE_QUALIFIED;
	note_add(w->note, sizeof w->note, "%s = %s of %s (convention: %s)", qual_word_name(q), how[q], what,
		q <= Q_LATE ? "equal thirds" : "basal/uppermost = first/last tenth");
}

/* Resolves words [a, n) allowing one positional word at a on a single interval. */
static int lookup_words(const bc_resolver *r, const char **ws, const size_t *wl, int a, int n, span *sp, work *w)
{
	char buf[AGE_KEY_MAX];
	size_t len = join_words(ws, wl, a, n, buf, sizeof buf);
	if (!len)
		return 0;
	if (lookup_key(r, buf, len, 1, sp, w))
		return 1;
	/* "Late Jurassic" / "Upper Jurassic" / "Jurassic superior": the chart's formal series. */
	int q = Q_NONE, first = a, last = n;
	if (n - a >= 2 && (q = qual_of(ws[a], wl[a])) >= Q_EARLY && q <= Q_LATE)
		first = a + 1;
	else if (n - a >= 2 && (q = qual_of(ws[n - 1], wl[n - 1])) >= Q_EARLY && q <= Q_LATE)
		last = n - 1;
	else
		return 0;
	len = join_words(ws, wl, first, last, buf, sizeof buf);
	const int *v = len ? strmap_getn(&r->names, buf, len) : NULL;
	if (!v || r->pos_child[*v][q - Q_EARLY] < 0)
		return 0;
	int child = r->pos_child[*v][q - Q_EARLY];
	*sp = span_of(r, child);
	const char *cname = bc_chart_interval(r->chart, (size_t)child)->name;
	char key[AGE_KEY_MAX];
	make_key(cname, key, sizeof key);
	const char *qw = first == a + 1 ? ws[a] : ws[n - 1];
	size_t ql = first == a + 1 ? wl[a] : wl[n - 1];
	int qtime = (ql == 5 && memcmp(qw, "early", 5) == 0) || (ql == 4 && memcmp(qw, "late", 4) == 0);
	int ctime = strncmp(key, "early ", 6) == 0 || strncmp(key, "late ", 5) == 0;
	if (qtime != ctime)
		note_add(w->note, sizeof w->note, "%s = the chart's %s (Early/Late are the time terms for Lower/Upper)",
			qual_word_name(q), cname);
	return 1;
}

/* Resolves one term (no range separators) from its key. */
static int resolve_term(const bc_resolver *r, const char *key_in, span *sp, work *w)
{
	enum { MAXW = 24 };
	const char *ws[MAXW];
	size_t wl[MAXW];
	int n = split_words(key_in, ws, wl, MAXW);
	if (n <= 0)
		return 0;
	/* Drop filler words and rank words at either end ("the Campanian Stage"). */
	int a = 0;
	while (a < n - 1 && WORD_IN(ws[a], wl[a], age_filler))
		a++;
	w->kind = BC_AGE_EXACT;
	if (lookup_words(r, ws, wl, a, n, sp, w)) /* names that end in a rank word ("3 Serie") */
		return 1;
	while (n - a > 1 && (WORD_IN(ws[n - 1], wl[n - 1], age_rankword) || WORD_IN(ws[n - 1], wl[n - 1], age_filler)))
		n--;
	w->kind = BC_AGE_EXACT;
	if (lookup_words(r, ws, wl, a, n, sp, w))
		return 1;
	/* Leading qualifiers ("late early Campanian", "upper part of the Campanian"). */
	int quals[4], nq = 0, found = 0, i = a;
	for (; i < n - 1 && !found; i++) {
		int q = qual_of(ws[i], wl[i]);
		if (q && nq < 4)
			quals[nq++] = q;
		else if (q || !WORD_IN(ws[i], wl[i], age_filler))
			break;
		if (nq)
			found = lookup_words(r, ws, wl, i + 1, n, sp, w);
	}
	if (found) {
		for (int k = nq - 1; k >= 0; k--)
			apply_qual(r, sp, quals[k], w, k < nq - 1);
		return 1;
	}
	/* Trailing qualifiers ("Campanien supérieur", "Campanian, upper part"). */
	int m = n;
	nq = 0;
	while (m - a > 1 && nq < 4) {
		int q = qual_of(ws[m - 1], wl[m - 1]);
		if (q)
			quals[nq++] = q;
		else if (!WORD_IN(ws[m - 1], wl[m - 1], age_filler))
			break;
		m--;
		if (nq && lookup_words(r, ws, wl, a, m, sp, w)) {
			for (int k = 0; k < nq; k++)
				apply_qual(r, sp, quals[k], w, k > 0);
			return 1;
		}
	}
	/* A German prefix glued on ("Obercampan"). */
	if (n - a == 1) {
		for (size_t g = 0; g < sizeof age_glued / sizeof age_glued[0]; g++) {
			size_t gl = strlen(age_glued[g].w);
			if (wl[a] >= gl + 4 && memcmp(ws[a], age_glued[g].w, gl) == 0) {
				char rest[AGE_KEY_MAX];
				size_t rl = wl[a] - gl;
				if (rl >= sizeof rest)
					return 0;
				memcpy(rest, ws[a] + gl, rl);
				rest[rl] = '\0';
				int q = age_glued[g].q;
				/* Formal series first ("Oberkreide" = Upper Cretaceous). */
				const int *v = strmap_get(&r->names, rest);
				if (v && q <= Q_LATE && r->pos_child[*v][q - Q_EARLY] >= 0) {
					*sp = span_of(r, r->pos_child[*v][q - Q_EARLY]);
					return 1;
				}
				if (lookup_key(r, rest, rl, 1, sp, w)) {
					apply_qual(r, sp, q, w, 0);
					return 1;
				}
			}
		}
	}
	return 0;
}

/* Leading qualifier words of a key, for sharing across a range ("early-late Campanian"). */
static int only_quals(const char *key)
{
	const char *ws[8];
	size_t wl[8];
	int n = split_words(key, ws, wl, 8), any = 0;
	if (n <= 0)
		return 0;
	for (int i = 0; i < n; i++) {
		if (qual_of(ws[i], wl[i]))
			any = 1;
		else if (!WORD_IN(ws[i], wl[i], age_filler))
			return 0;
	}
	return any;
}

/* The key without its leading (or trailing) qualifier and filler words. */
static void strip_quals(const char *key, char *out, size_t cap, int trailing)
{
	const char *ws[24];
	size_t wl[24];
	int n = split_words(key, ws, wl, 24), a = 0;
	out[0] = '\0';
	if (n <= 0)
		return;
	if (!trailing)
		while (a < n - 1 && (qual_of(ws[a], wl[a]) || WORD_IN(ws[a], wl[a], age_filler)))
			a++;
	else
		while (n - a > 1 && (qual_of(ws[n - 1], wl[n - 1]) || WORD_IN(ws[n - 1], wl[n - 1], age_filler)))
			n--;
	join_words(ws, wl, a, n, out, cap);
}

static int key_of_part(const char *folded, size_t len, char *out, size_t cap)
{
	if (len + 1 > cap)
		return 0;
	memcpy(out, folded, len);
	out[len] = '\0';
	bc_text__key(out);
	key_spelling(out);
	return out[0] != '\0';
}

/* Resolves both sides of a split; shares a name across "early-late Campanian". */
static int resolve_pair_parts(const bc_resolver *r, const char *lt, size_t ll, const char *rt, size_t rl, span *a, span *b,
	work *wa, work *wb)
{
	char lk[AGE_KEY_MAX], rk[AGE_KEY_MAX], tmp[AGE_KEY_MAX * 2 + 2], core[AGE_KEY_MAX];
	if (!key_of_part(lt, ll, lk, sizeof lk) || !key_of_part(rt, rl, rk, sizeof rk))
		return 0;
	int okb = resolve_term(r, rk, b, wb);
	if (okb && resolve_term(r, lk, a, wa))
		return 1;
	if (okb && only_quals(lk)) {
		strip_quals(rk, core, sizeof core, 0);
		snprintf(tmp, sizeof tmp, "%s %s", lk, core);
		if (strlen(tmp) < AGE_KEY_MAX && resolve_term(r, tmp, a, wa))
			return 1;
		strip_quals(rk, core, sizeof core, 1);
		snprintf(tmp, sizeof tmp, "%s %s", core, lk);
		if (strlen(tmp) < AGE_KEY_MAX && resolve_term(r, tmp, a, wa))
			return 1;
	}
	if (!okb && only_quals(rk) && resolve_term(r, lk, a, wa)) {
		strip_quals(lk, core, sizeof core, 1);
		snprintf(tmp, sizeof tmp, "%s %s", core, rk);
		if (strlen(tmp) < AGE_KEY_MAX && resolve_term(r, tmp, b, wb))
			return 1;
		strip_quals(lk, core, sizeof core, 0);
		snprintf(tmp, sizeof tmp, "%s %s", rk, core);
		if (strlen(tmp) < AGE_KEY_MAX && resolve_term(r, tmp, b, wb))
			return 1;
	}
	return 0;
}

/* Range separators, tried in this order; `either` ones mean one or the other. */
static const struct { const char *sep; int either; } age_sep[] = {
	{" to ", 0}, {" through ", 0}, {" thru ", 0}, {" until ", 0}, {" bis ", 0}, {" a ", 0}, {" au ", 0},
	{" al ", 0}, {" tot ", 0}, {" and ", 0}, {" & ", 0}, {" + ", 0}, {" und ", 0}, {" et ", 0}, {" y ", 0},
	{" e ", 0}, {" en ", 0}, {" or ", 1}, {" ou ", 1}, {" oder ", 1}, {" o ", 1}, {" - ", 0},
	{" / ", 0}, {"--", 0}, {"-", 0}, {"/", 0}, {", ", 0},
};

/* Combines two spans into a range, older end first. */
static void combine(const bc_resolver *r, span a, span b, span *out, char *note, size_t cap, int *reversed)
{
	(void)r;
	*reversed = 0;
	if (a.older + a.younger < b.older + b.younger) {
		span t = a;
		a = b;
		b = t;
		*reversed = 1;
		note_add(note, cap, "written younger end first; put in order");
	}
	out->older = a.older > b.older ? a.older : b.older;
	out->younger = a.younger < b.younger ? a.younger : b.younger;
	out->from = a.older >= b.older ? a.from : b.from;
	out->to = b.younger <= a.younger ? b.to : a.to;
}

/* True when a '-' or '/' joins two qualifier words ("Lower-Middle Jurassic",
 * "early/late Campanian"): that is a range, not one nested qualifier. */
static int qual_range(const char *s)
{
	for (const char *p = s; *p; p++) {
		if ((*p != '-' && *p != '/') || p == s)
			continue;
		const char *b = p;
		while (b > s && b[-1] == ' ')
			b--;
		const char *bs = b;
		while (bs > s && bs[-1] != ' ' && bs[-1] != '-' && bs[-1] != '/')
			bs--;
		const char *a = p + 1;
		while (*a == ' ')
			a++;
		const char *ae = a;
		while (*ae && *ae != ' ' && *ae != '-' && *ae != '/')
			ae++;
		if (b > bs && ae > a && qual_of(bs, (size_t)(b - bs)) && qual_of(a, (size_t)(ae - a)))
			return 1;
	}
	return 0;
}

/* Resolves a folded name text: one term or a range of two. */
static int resolve_names(const bc_resolver *r, const char *s, span *sp, bc_age_status *status, char *note, size_t cap,
	int *either)
{
	char key[AGE_KEY_MAX];
	work w = {BC_AGE_EXACT, ""};
	*either = 0;
	if (!qual_range(s) && key_of_part(s, strlen(s), key, sizeof key) && resolve_term(r, key, sp, &w)) {
		*status = w.kind;
		if (w.note[0])
			note_add(note, cap, "%s", w.note);
		return 1;
	}
	size_t len = strlen(s);
	for (size_t k = 0; k < sizeof age_sep / sizeof age_sep[0]; k++) {
		const char *sep = age_sep[k].sep;
		size_t sl = strlen(sep);
		for (const char *p = strstr(s, sep); p; p = strstr(p + 1, sep)) {
			size_t ll = (size_t)(p - s);
			if (ll == 0 || ll + sl >= len)
				continue;
			span a, b;
			work wa = {BC_AGE_EXACT, ""}, wb = {BC_AGE_EXACT, ""};
			if (!resolve_pair_parts(r, s, ll, p + sl, len - ll - sl, &a, &b, &wa, &wb))
				continue;
			int rev;
			if (wa.note[0])
				note_add(note, cap, "%s", wa.note);
			if (wb.note[0])
				note_add(note, cap, "%s", wb.note);
			combine(r, a, b, sp, note, cap, &rev);
			*status = BC_AGE_RANGE;
			if (age_sep[k].either) {
				*either = 1;
				note_add(note, cap, "either of two ages; the span covers both");
			}
			return 1;
		}
	}
	return 0;
}

/* ------------------------------------------------------------------ */
/* Numbers                                                             */
/* ------------------------------------------------------------------ */

static const struct { const char *u; double to_ma; const char *name; } age_unit[] = {
	{"millions of years", 1, "Ma"}, {"million years", 1, "Ma"}, {"m.y.a.", 1, "Ma"}, {"m.y.", 1, "Ma"},
	{"m.a.", 1, "Ma"}, {"myr", 1, "Ma"}, {"mya", 1, "Ma"}, {"my", 1, "Ma"}, {"ma", 1, "Ma"},
	{"thousand years", 1e-3, "ka"}, {"k.y.", 1e-3, "ka"}, {"kyr", 1e-3, "ka"}, {"kya", 1e-3, "ka"},
	{"ky", 1e-3, "ka"}, {"ka", 1e-3, "ka"},
	{"billion years", 1e3, "Ga"}, {"gyr", 1e3, "Ga"}, {"gya", 1e3, "Ga"}, {"byr", 1e3, "Ga"},
	{"bya", 1e3, "Ga"}, {"ga", 1e3, "Ga"},
	{"years", 1e-6, "years"}, {"yrs", 1e-6, "years"}, {"yr", 1e-6, "years"},
};

static int is_alpha(char c) { return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (unsigned char)c >= 0x80; }
static int is_digit(char c) { return c >= '0' && c <= '9'; }
static const char *skip_sp(const char *p)
{
	while (*p == ' ')
		p++;
	return p;
}

/* A number with '.' or ',' as the decimal mark (a ',' before exactly three digits
 * after a non-zero integer part is a thousands separator: "1,600" = 1600). */
static int parse_num(const char **pp, double *out)
{
	const char *p = *pp;
	if (!is_digit(*p) && !(*p == '.' && is_digit(p[1])))
		return 0;
	double v = 0;
	int intdigits = 0;
	while (is_digit(*p)) {
		v = v * 10 + (*p++ - '0');
		intdigits++;
		if (intdigits > 15)
			return 0;
	}
	while (*p == ',' && intdigits && v != 0 && is_digit(p[1]) && is_digit(p[2]) && is_digit(p[3]) && !is_digit(p[4])) {
		v = v * 1000 + (p[1] - '0') * 100 + (p[2] - '0') * 10 + (p[3] - '0');
		p += 4;
		if (*p == '.' || *p == ',')
			break;
	}
	if ((*p == '.' || *p == ',') && is_digit(p[1])) {
		double scale = 0.1;
		p++;
		int fd = 0;
		while (is_digit(*p)) {
			if (fd++ < 15)
				v += (*p - '0') * scale;
			scale /= 10;
			p++;
		}
	}
	*pp = p;
	*out = v;
	return 1;
}

static int parse_unit(const char **pp, double *to_ma, const char **name)
{
	const char *p = skip_sp(*pp);
	for (size_t i = 0; i < sizeof age_unit / sizeof age_unit[0]; i++) {
		size_t n = strlen(age_unit[i].u);
		if (strncmp(p, age_unit[i].u, n) == 0 && !is_alpha(p[n])) {
			*to_ma = age_unit[i].to_ma;
			*name = age_unit[i].name;
			*pp = p + n;
			return 1;
		}
	}
	return 0;
}

/* Reads "72 Ma", "83.6-72.1 Ma", "75 ± 2 Ma", "75 +/- 2 Ma", "66 to 72 Ma", "12 ka BP".
 * Returns 1 on success, 0 if the text is not numbers, -1 if numbers but unreadable. */
static int resolve_numbers(const bc_resolver *r, const char *s, span *sp, char *note, size_t cap)
{
	const char *p = s;
	double v1, v2 = NAN, e = NAN, u1 = NAN, u2 = NAN, u;
	const char *n1 = NULL, *n2 = NULL, *nm;
	if (!parse_num(&p, &v1))
		return 0;
	if (parse_unit(&p, &u, &nm)) {
		u1 = u;
		n1 = nm;
	}
	p = skip_sp(p);
	int kind = 0; /* 0 point, 1 range, 2 plus-minus */
	if (strncmp(p, "\xc2\xb1", 2) == 0 || strncmp(p, "+/-", 3) == 0 || strncmp(p, "+-", 2) == 0 ||
	    strncmp(p, "+ / -", 5) == 0) {
		p += p[0] == '+' ? (p[1] == '/' ? 3 : (p[1] == '-' ? 2 : 5)) : 2;
		kind = 2;
		p = skip_sp(p);
		if (!parse_num(&p, &e))
			return -1;
	} else if (*p == '-' || strncmp(p, "to ", 3) == 0 || strncmp(p, "bis ", 4) == 0 || strncmp(p, "a ", 2) == 0 ||
		   strncmp(p, "and ", 4) == 0 || *p == '/') {
		p += *p == '-' || *p == '/' ? 1 : (p[0] == 't' ? 3 : (p[0] == 'b' ? 4 : (p[0] == 'a' && p[1] == 'n' ? 4 : 2)));
		kind = 1;
		p = skip_sp(p);
		if (!parse_num(&p, &v2))
			return -1;
	}
	if (parse_unit(&p, &u, &nm)) {
		u2 = u;
		n2 = nm;
	}
	p = skip_sp(p);
	static const char *const tail[] = {"ago", "bp", "b.p.", "before present", "b2k"};
	for (size_t i = 0; i < sizeof tail / sizeof tail[0]; i++) {
		size_t n = strlen(tail[i]);
		if (strncmp(p, tail[i], n) == 0 && !is_alpha(p[n])) {
			p = skip_sp(p + n);
			break;
		}
	}
	while (*p == '.' || *p == ')' || *p == ' ')
		p++;
	if (*p)
		return -1;
	if (isnan(u1) && isnan(u2)) {
		u1 = u2 = 1;
		note_add(note, cap, "no unit given: Ma assumed");
	} else if (isnan(u1)) {
		u1 = u2;
		n1 = n2;
	} else if (isnan(u2)) {
		u2 = u1;
		n2 = n1;
	}
	if ((n1 && strcmp(n1, "Ma") != 0) || (n2 && strcmp(n2, "Ma") != 0))
		note_add(note, cap, "converted from %s to Ma", n1 && strcmp(n1, "Ma") != 0 ? n1 : n2);
	double older, younger;
	if (kind == 0) {
		older = younger = v1 * u1;
	} else if (kind == 2) {
		older = (v1 + e) * u2;
		younger = (v1 - e) * u2;
		if (younger < 0)
			younger = 0;
		note_add(note, cap, "central value %g with stated error %g", v1 * u2, e * u2);
	} else {
		double a = v1 * u1, b = v2 * u2;
		older = a > b ? a : b;
		younger = a > b ? b : a;
		if (a < b)
			note_add(note, cap, "written younger end first; put in order");
	}
	double limit = r->max_ma > 0 ? r->max_ma : 4600;
	if (older > limit) {
		note_add(note, cap, "%g Ma is older than the chart (%g Ma)", older, limit);
		return -2;
	}
	sp->older = older;
	sp->younger = younger;
	sp->from = finest_at(r, older, 1);
	sp->to = finest_at(r, younger, 0);
	return 1;
}

/* ------------------------------------------------------------------ */
/* Suggestions for unknown text                                        */
/* ------------------------------------------------------------------ */

enum { SUGGEST_K = 3 };
typedef struct suggestions {
	const char *name[SUGGEST_K];
	size_t d[SUGGEST_K];
} suggestions;

static void suggest_consider(suggestions *sg, const char *name, size_t d)
{
	for (int k = 0; k < SUGGEST_K; k++)
		if (sg->name[k] && strcmp(sg->name[k], name) == 0) {
			if (d >= sg->d[k])
				return;
			for (int j = k; j < SUGGEST_K - 1; j++) { /* drop it, then re-insert below */
				sg->name[j] = sg->name[j + 1];
				sg->d[j] = sg->d[j + 1];
			}
			sg->name[SUGGEST_K - 1] = NULL;
			break;
		}
	for (int k = 0; k < SUGGEST_K; k++)
		if (!sg->name[k] || d < sg->d[k] || (d == sg->d[k] && strcmp(name, sg->name[k]) < 0)) {
			for (int j = SUGGEST_K - 1; j > k; j--) {
				sg->name[j] = sg->name[j - 1];
				sg->d[j] = sg->d[j - 1];
			}
			sg->name[k] = name;
			sg->d[k] = d;
			return;
		}
}

/* Byte lengths this far apart cannot be within `max` edits of each other
 * (a code point is 1 to 4 bytes, so allow 4 bytes per edit). */
static int len_near(size_t a, size_t b, size_t max)
{
	return (a > b ? a - b : b - a) <= 4 * max;
}

/* Candidates for a suggestion: near in length, and with the first or the
 * second byte right (a cheap filter; typing slips rarely hit both). */
static int cand_near(const char *key, size_t len, const char *cand, size_t max)
{
	return len_near(len, strlen(cand), max) && (cand[0] == key[0] || (cand[0] && key[0] && cand[1] == key[1]));
}

/* Up to three chart names (or aliases) nearest to `key` by edit distance. */
static void suggest(const bc_resolver *r, const char *key, char *note, size_t cap)
{
	suggestions sg = {{NULL}, {0}};
	size_t len = strlen(key), max = len < 6 ? 2 : len / 3;
	if (!len || len > 64)
		return;
	for (size_t i = 0; i < r->names.cap; i++) {
		if (!r->names.keys[i] || !cand_near(key, len, r->names.keys[i], max))
			continue;
		size_t d = bc_text__edit_distance(key, r->names.keys[i], max);
		if (d <= max)
			suggest_consider(&sg, bc_chart_interval(r->chart, (size_t)r->names.vals[i])->name, d);
	}
	for (size_t i = 0; i < r->aliases.cap; i++) {
		if (!r->aliases.keys[i] || !cand_near(key, len, r->aliases.keys[i], max))
			continue;
		size_t d = bc_text__edit_distance(key, r->aliases.keys[i], max);
		if (d <= max)
			suggest_consider(&sg, r->alias_v[r->aliases.vals[i]].text, d);
	}
	if (!sg.name[0]) {
		note_add(note, cap, "no chart name is close");
		return;
	}
	char list[400] = "";
	for (int k = 0; k < SUGGEST_K && sg.name[k]; k++) {
		size_t n = strlen(list);
		snprintf(list + n, sizeof list - n, "%s%s", k ? ", " : "", sg.name[k]);
	}
	note_add(note, cap, "nearest names: %s", list);
}

/* ------------------------------------------------------------------ */
/* One text, uncached                                                  */
/* ------------------------------------------------------------------ */

static int starts_word(const char *p, const char *w)
{
	size_t n = strlen(w);
	if (strncmp(p, w, n) != 0)
		return 0;
	if (w[n - 1] == '?' || w[n - 1] == '~')
		return (int)n;
	if (p[n] == '.')
		return (int)n + 1;
	if (p[n] == ' ' || p[n] == '\0' || (is_digit(p[n]) && !is_alpha(w[n - 1])))
		return (int)n;
	if (is_digit(p[n]))
		return (int)n;
	return 0;
}

static void resolve_folded(const bc_resolver *r, const char *folded, bc_age *out)
{
	char s[BC_TEXT_MAX + 1];
	char note[512] = "";
	int uncertain = 0, approx = 0;
	size_t o = 0;
	/* Question marks anywhere mean doubt; brackets are only grouping. */
	for (const char *p = folded; *p; p++) {
		if (*p == '?') {
			uncertain = 1;
			continue;
		}
		s[o++] = (*p == '(' || *p == ')' || *p == '[' || *p == ']' || *p == '"') ? ' ' : *p;
	}
	s[o] = '\0';
	/* Re-collapse spaces and trim. */
	{
		size_t k = 0;
		int space = 1;
		for (size_t i = 0; i < o; i++) {
			if (s[i] == ' ') {
				if (!space)
					s[k++] = ' ';
				space = 1;
			} else {
				s[k++] = s[i];
				space = 0;
			}
		}
		while (k && (s[k - 1] == ' ' || s[k - 1] == ',' || s[k - 1] == ';' || s[k - 1] == ':'))
			k--;
		s[k] = '\0';
	}
	if (uncertain)
		note_add(note, sizeof note, "uncertain: '?' in the text");
	char *p = s;
	for (int again = 1; again;) {
		again = 0;
		for (size_t i = 0; i < sizeof age_unsure / sizeof age_unsure[0]; i++) {
			int n = starts_word(p, age_unsure[i]);
			if (n) {
				if (!uncertain || strcmp(age_unsure[i], "?") != 0)
					note_add(note, sizeof note, "uncertain: '%s'", age_unsure[i]);
				uncertain = 1;
				p = (char *)skip_sp(p + n);
				again = 1;
				break;
			}
		}
		for (size_t i = 0; !again && i < sizeof age_approx / sizeof age_approx[0]; i++) {
			int n = starts_word(p, age_approx[i]);
			if (n) {
				approx = 1;
				p = (char *)skip_sp(p + n);
				again = 1;
			}
		}
	}
	/* Trailing "s.l.", "sensu lato" widen nothing but are worth keeping. */
	size_t plen = strlen(p);
	static const char *const lato[] = {" sensu lato", " s.l.", " s.l", " sensu stricto", " s.s.", " s. str."};
	for (size_t i = 0; i < sizeof lato / sizeof lato[0]; i++) {
		size_t n = strlen(lato[i]);
		if (plen > n && strcmp(p + plen - n, lato[i]) == 0) {
			note_add(note, sizeof note, "'%s' noted, not used", lato[i] + 1);
			p[plen - n] = '\0';
			break;
		}
	}
	memset(out, 0, sizeof *out);
	out->older_ma = out->younger_ma = NAN;
	span sp = {-1, -1, NAN, NAN};
	if (!*p) {
		out->status = BC_AGE_UNKNOWN;
		note_add(note, sizeof note, "no age in the text");
		goto finish;
	}
	int numbers = 0; /* 1: starts like a number but is not one we can read */
	if (is_digit(*p) || (*p == '.' && is_digit(p[1]))) {
		int rc = resolve_numbers(r, p, &sp, note, sizeof note);
		if (rc == 1) {
			out->status = BC_AGE_NUMERIC;
			if (approx) {
				note_add(note, sizeof note, "approximate ('c.'/'ca.'/'~')");
				uncertain = 1;
			}
			goto finish;
		}
		if (rc == -2) {
			out->status = BC_AGE_UNKNOWN;
			goto finish;
		}
		numbers = rc == -1; /* maybe a name that starts with a digit ("3 Serie") */
	}
	bc_age_status st;
	int either = 0;
	if (resolve_names(r, p, &sp, &st, note, sizeof note, &either)) {
		out->status = st;
		if (either)
			uncertain = 1;
		if (approx) {
			note_add(note, sizeof note, "uncertain: 'c.'/'ca.'");
			uncertain = 1;
		}
		goto finish;
	}
	out->status = BC_AGE_UNKNOWN;
	if (numbers) {
		note_add(note, sizeof note, "could not read the numbers (expected e.g. '72 Ma', '83.6-72.1 Ma', '75 +/- 2 Ma')");
		goto finish;
	}
	{
		char key[AGE_KEY_MAX];
		if (key_of_part(p, strlen(p), key, sizeof key)) {
			note_add(note, sizeof note, "not recognised");
			suggest(r, key, note, sizeof note);
		} else {
			note_add(note, sizeof note, "not recognised");
		}
	}
finish:
	out->uncertain = uncertain;
	if (out->status != BC_AGE_UNKNOWN) {
		out->older_ma = sp.older;
		out->younger_ma = sp.younger;
		if (sp.from >= 0)
			snprintf(out->from, sizeof out->from, "%s", bc_chart_interval(r->chart, (size_t)sp.from)->name);
		if (sp.to >= 0)
			snprintf(out->to, sizeof out->to, "%s", bc_chart_interval(r->chart, (size_t)sp.to)->name);
	}
	snprintf(out->note, sizeof out->note, "%s", note);
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

static void cache_clear(bc_resolver *r)
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
	const int *hit = len <= AGE_RAW_MAX ? strmap_getn(&r->raw, text, len) : NULL;
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
	hit = strmap_getn(&r->norm, folded, (size_t)n);
	if (hit) {
		slot = *hit;
		cache_get(r, slot, out);
	} else {
		resolve_folded(r, folded, out);
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
			note_add(out->note, sizeof out->note, "earliest: %s", a.note);
		if (b.status == BC_AGE_UNKNOWN)
			note_add(out->note, sizeof out->note, "latest: %s", b.note);
		return BC_OK;
	}
	char note[512] = "";
	if (a.note[0])
		note_add(note, sizeof note, "earliest: %s", a.note);
	if (b.note[0])
		note_add(note, sizeof note, "latest: %s", b.note);
	bc_age *old = &a, *young = &b;
	if (a.older_ma + a.younger_ma < b.older_ma + b.younger_ma) {
		old = &b;
		young = &a;
		note_add(note, sizeof note, "earliest is younger than latest; put in order");
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
/* Alias tables                                                        */
/* ------------------------------------------------------------------ */

/* Resolves an alias target ("Upper Cretaceous", "A|B" alternatives) in the chart, without aliases. */
static int alias_target(const bc_resolver *r, const char *text, span *sp)
{
	char buf[AGE_KEY_MAX];
	const char *p = text;
	while (*p) {
		const char *bar = strchr(p, '|');
		size_t n = bar ? (size_t)(bar - p) : strlen(p);
		if (n < sizeof buf) {
			memcpy(buf, p, n);
			buf[n] = '\0';
			char key[AGE_KEY_MAX];
			if (make_key(buf, key, sizeof key) > 0) {
				const char *ws[16];
				size_t wl[16];
				int nw = split_words(key, ws, wl, 16);
				work w = {BC_AGE_EXACT, ""};
				if (lookup_key(r, key, strlen(key), 0, sp, NULL))
					return 1;
				if (nw > 1 && lookup_words(r, ws, wl, 0, nw, sp, &w) && w.kind == BC_AGE_EXACT)
					return 1;
			}
		}
		p += n;
		if (*p == '|')
			p++;
	}
	return 0;
}

static int alias_add(bc_resolver *r, const char *text, const char *note, span sp)
{
	char key[AGE_KEY_MAX];
	if (make_key(text, key, sizeof key) <= 0)
		return BC_EINVALID;
	const int *old = strmap_get(&r->aliases, key);
	alias a = {bc__strdup(text), bc__strdup(note ? note : ""), sp};
	if (!a.text || !a.note) {
		free(a.text);
		free(a.note);
		return BC_ENOMEM;
	}
	if (old) {
		free(r->alias_v[*old].text);
		free(r->alias_v[*old].note);
		r->alias_v[*old] = a;
		return BC_OK;
	}
	alias *p = bc__grow(r->alias_v, r->nalias, &r->capalias, sizeof *p, 256);
	if (!p) {
		free(a.text);
		free(a.note);
		return BC_ENOMEM;
	}
	r->alias_v = p;
	char stem[AGE_KEY_MAX];
	if (strmap_set(&r->aliases, key, (int)r->nalias) != BC_OK) {
		free(a.text);
		free(a.note);
		return BC_ENOMEM;
	}
	r->alias_v[r->nalias++] = a;
	if (age_stem(key, stem, sizeof stem) >= 4) {
		const int *s = strmap_get(&r->alias_stems, stem);
		if (strmap_set(&r->alias_stems, stem, s && *s != (int)r->nalias - 1 ? -2 : (int)r->nalias - 1))
			return BC_ENOMEM;
	}
	return BC_OK;
}

/* Splits a line at tabs in place; returns the field count (at most max). */
static int split_tabs(char *line, char **f, int max)
{
	int n = 0;
	f[n++] = line;
	for (char *p = line; *p && n < max; p++)
		if (*p == '\t') {
			*p = '\0';
			f[n++] = p + 1;
		}
	return n;
}

/* Parses an alias table. `shipped`: rows whose targets are missing are skipped, not errors. */
static int alias_parse(bc_resolver *r, const char *data, size_t len, const char *path, int shipped, bc_err *err)
{
	enum { MAXF = 32 };
	int col[5] = {-1, -1, -1, -1, -1}; /* alias older younger note source */
	static const char *const want[5] = {"alias", "older", "younger", "note", "source"};
	int header = 0, rc = BC_OK;
	size_t lineno = 0;
	char *copy = bc__strndup(data, len);
	if (!copy)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	/* Staged rows, so that a bad user file changes nothing. */
	struct row { char *alias, *note; span sp; } *rows = NULL;
	size_t nrows = 0, caprows = 0;
	char *save = copy;
	while (save && *save) {
		char *line = save, *nl = strchr(save, '\n');
		if (nl) {
			*nl = '\0';
			save = nl + 1;
		} else
			save = NULL;
		lineno++;
		size_t ll = strlen(line);
		if (ll && line[ll - 1] == '\r')
			line[--ll] = '\0';
		if (!ll || line[0] == '#')
			continue;
		char *f[MAXF];
		int nf = split_tabs(line, f, MAXF);
		if (!header) {
			for (int i = 0; i < nf; i++)
				for (int k = 0; k < 5; k++)
					if (strcmp(f[i], want[k]) == 0)
						col[k] = i;
			for (int k = 0; k < 5; k++)
				if (col[k] < 0 && k != 3) {
					rc = bc_err_set(err, BC_EINVALID, "%s:%zu: %s: header has no '%s' column", path, lineno, want[k], want[k]);
					goto done;
				}
			header = 1;
			continue;
		}
		const char *v[5];
		for (int k = 0; k < 5; k++)
			v[k] = col[k] >= 0 && col[k] < nf ? f[col[k]] : "";
		for (int k = 0; k < 5; k++)
			if (k != 3 && !*v[k]) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%zu: %s: empty%s", path, lineno, want[k],
					k == 4 ? " (every alias needs a source, e.g. 'common practice, no source')" : "");
				goto done;
			}
		span a, b;
		int oka = alias_target(r, v[1], &a), okb = oka && alias_target(r, v[2], &b);
		if (!oka || !okb) {
			if (shipped) {
				if (!r->skipped++ && !(r->first_skipped = bc__strdup(v[0]))) {
					rc = bc_err_set(err, BC_ENOMEM, "out of memory");
					goto done;
				}
				continue;
			}
			rc = bc_err_set(err, BC_EINVALID, "%s:%zu: %s: '%s' is not an interval of chart '%s'", path, lineno,
				!oka ? "older" : "younger", !oka ? v[1] : v[2], bc_chart_name(r->chart));
			goto done;
		}
		if (a.older + a.younger < b.older + b.younger) {
			rc = bc_err_set(err, BC_EINVALID, "%s:%zu: younger: '%s' is older than '%s'", path, lineno, v[2], v[1]);
			goto done;
		}
		struct row *p = bc__grow(rows, nrows, &caprows, sizeof *p, 128);
		if (!p) {
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			goto done;
		}
		rows = p;
		span s = {a.from, b.to, a.older > b.older ? a.older : b.older, a.younger < b.younger ? a.younger : b.younger};
		rows[nrows].alias = (char *)v[0];
		rows[nrows].note = (char *)v[3];
		rows[nrows].sp = s;
		nrows++;
	}
	if (!header) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%zu: alias: no header row", path, lineno);
		goto done;
	}
	for (size_t i = 0; i < nrows; i++) {
		int e = alias_add(r, rows[i].alias, rows[i].note, rows[i].sp);
		if (e == BC_EINVALID)
			continue; /* an alias that folds to nothing can never match */
		if (e) {
			rc = bc_err_set(err, e, "out of memory");
			goto done;
		}
	}
	cache_clear(r);
done:
	free(rows);
	free(copy);
	return rc;
}

int bc_resolver_load_aliases(bc_resolver *r, const char *path, bc_err *err)
{
	char *data = NULL;
	size_t len = 0;
	int rc = bc__read_file(path, &data, &len, err);
	if (rc == BC_OK)
		rc = alias_parse(r, data, len, path, 0, err);
	free(data);
	return rc;
}

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
	if (res && (rc = alias_parse(r, res->data, res->len, res->name, 1, err)) != BC_OK) {
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
	cache_clear(r);
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
