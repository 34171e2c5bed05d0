/*
 * age_parse.c - resolution of one folded text (doc/age-resolution.md):
 * uncertainty and approximation words, chart names, labels, aliases and
 * stems, qualifiers, ranges of two terms, and the nearest names suggested
 * for text that matches nothing. Numbers are read by age_number.c.
 */
#include "age.h"
#include "text.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

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

/* ------------------------------------------------------------------ */
/* Resolution                                                          */
/* ------------------------------------------------------------------ */

/* Working state for one text. */
typedef struct work {
	bc_age_status kind; /* EXACT, ALIAS or QUALIFIED for a term */
	char note[512];
} work;

static span span_of(const bc_resolver *r, int iv)
{
	const bc_interval *x = bc_chart_interval(r->chart, (size_t)iv);
	return (span){iv, iv, x->older_ma, x->younger_ma};
}

/* The finest chart interval holding `ma`: for an older end (younger < ma <= older),
 * for a younger end (younger <= ma < older). Ties: shortest interval. -1 if none. */
int bc_age__finest_at(const bc_resolver *r, double ma, int older_end)
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
	const int *v = bc_age__strmap_get(&r->alias_stems, word);
	if ((!v || *v < 0) && bc_age__stem(word, stem, sizeof stem) >= 4)
		v = bc_age__strmap_get(&r->alias_stems, stem);
	return v && *v >= 0 ? v : NULL;
}

/* Looks a key up as a chart name, label or IRI, then (if allowed) an alias, then by stem. */
static int lookup_key(const bc_resolver *r, const char *key, size_t n, int use_alias, span *sp, work *w)
{
	const int *v = bc_age__strmap_getn(&r->names, key, n);
	if (v) {
		*sp = span_of(r, *v);
		return 1;
	}
	if (use_alias && ((v = bc_age__strmap_getn(&r->aliases, key, n)) != NULL || (v = alias_by_stem(r, key, n)) != NULL)) {
		const alias *a = &r->alias_v[*v];
		*sp = a->sp;
		if (w) {
			w->kind = BC_AGE_ALIAS;
			const bc_interval *f = bc_chart_interval(r->chart, (size_t)a->sp.from);
			const bc_interval *t = bc_chart_interval(r->chart, (size_t)a->sp.to);
			if (a->sp.from == a->sp.to)
				bc__note_add(w->note, sizeof w->note, "alias '%s' = %s: %s", a->text, f->name, a->note);
			else
				bc__note_add(w->note, sizeof w->note, "alias '%s' = %s to %s: %s", a->text, f->name, t->name, a->note);
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
	if (!(v = bc_age__strmap_get(&r->stems, word)) || *v < 0) {
		if (bc_age__stem(word, stem, sizeof stem) < 4 || !(v = bc_age__strmap_get(&r->stems, stem)) || *v < 0)
			return 0;
	}
	*sp = span_of(r, *v);
	if (w)
		bc__note_add(w->note, sizeof w->note, "'%s' matched %s by its stem (language suffix rule)", word,
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
	sp->from = bc_age__finest_at(r, sp->older, 1);
	sp->to = bc_age__finest_at(r, sp->younger, 0);
	w->kind = BC_AGE_QUALIFIED;
	bc__note_add(w->note, sizeof w->note, "%s = %s of %s (convention: %s)", qual_word_name(q), how[q], what,
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
	const int *v = len ? bc_age__strmap_getn(&r->names, buf, len) : NULL;
	if (!v || r->pos_child[*v][q - Q_EARLY] < 0)
		return 0;
	int child = r->pos_child[*v][q - Q_EARLY];
	*sp = span_of(r, child);
	const char *cname = bc_chart_interval(r->chart, (size_t)child)->name;
	char key[AGE_KEY_MAX];
	bc_age__make_key(cname, key, sizeof key);
	const char *qw = first == a + 1 ? ws[a] : ws[n - 1];
	size_t ql = first == a + 1 ? wl[a] : wl[n - 1];
	int qtime = (ql == 5 && memcmp(qw, "early", 5) == 0) || (ql == 4 && memcmp(qw, "late", 4) == 0);
	int ctime = strncmp(key, "early ", 6) == 0 || strncmp(key, "late ", 5) == 0;
	if (qtime != ctime)
		bc__note_add(w->note, sizeof w->note, "%s = the chart's %s (Early/Late are the time terms for Lower/Upper)",
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
				const int *v = bc_age__strmap_get(&r->names, rest);
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
	bc_age__key_spelling(out);
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
		bc__note_add(note, cap, "written younger end first; put in order");
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
			bc__note_add(note, cap, "%s", w.note);
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
				bc__note_add(note, cap, "%s", wa.note);
			if (wb.note[0])
				bc__note_add(note, cap, "%s", wb.note);
			combine(r, a, b, sp, note, cap, &rev);
			*status = BC_AGE_RANGE;
			if (age_sep[k].either) {
				*either = 1;
				bc__note_add(note, cap, "either of two ages; the span covers both");
			}
			return 1;
		}
	}
	return 0;
}

/* Resolves an alias target ("Upper Cretaceous", "A|B" alternatives) in the chart, without aliases. */
int bc_age__alias_target(const bc_resolver *r, const char *text, span *sp)
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
			if (bc_age__make_key(buf, key, sizeof key) > 0) {
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
		bc__note_add(note, cap, "no chart name is close");
		return;
	}
	char list[400] = "";
	for (int k = 0; k < SUGGEST_K && sg.name[k]; k++) {
		size_t n = strlen(list);
		snprintf(list + n, sizeof list - n, "%s%s", k ? ", " : "", sg.name[k]);
	}
	bc__note_add(note, cap, "nearest names: %s", list);
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
	if (p[n] == ' ' || p[n] == '\0' || (bc_age__is_digit(p[n]) && !bc_age__is_alpha(w[n - 1])))
		return (int)n;
	if (bc_age__is_digit(p[n]))
		return (int)n;
	return 0;
}

void bc_age__resolve_folded(const bc_resolver *r, const char *folded, bc_age *out)
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
		bc__note_add(note, sizeof note, "uncertain: '?' in the text");
	char *p = s;
	for (int again = 1; again;) {
		again = 0;
		for (size_t i = 0; i < sizeof age_unsure / sizeof age_unsure[0]; i++) {
			int n = starts_word(p, age_unsure[i]);
			if (n) {
				if (!uncertain || strcmp(age_unsure[i], "?") != 0)
					bc__note_add(note, sizeof note, "uncertain: '%s'", age_unsure[i]);
				uncertain = 1;
				p = (char *)bc_age__skip_sp(p + n);
				again = 1;
				break;
			}
		}
		for (size_t i = 0; !again && i < sizeof age_approx / sizeof age_approx[0]; i++) {
			int n = starts_word(p, age_approx[i]);
			if (n) {
				approx = 1;
				p = (char *)bc_age__skip_sp(p + n);
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
			bc__note_add(note, sizeof note, "'%s' noted, not used", lato[i] + 1);
			p[plen - n] = '\0';
			break;
		}
	}
	memset(out, 0, sizeof *out);
	out->older_ma = out->younger_ma = NAN;
	span sp = {-1, -1, NAN, NAN};
	if (!*p) {
		out->status = BC_AGE_UNKNOWN;
		bc__note_add(note, sizeof note, "no age in the text");
		goto finish;
	}
	int numbers = 0; /* 1: starts like a number but is not one we can read */
	if (bc_age__is_digit(*p) || (*p == '.' && bc_age__is_digit(p[1]))) {
		int rc = bc_age__resolve_numbers(r, p, &sp, note, sizeof note);
		if (rc == 1) {
			out->status = BC_AGE_NUMERIC;
			if (approx) {
				bc__note_add(note, sizeof note, "approximate ('c.'/'ca.'/'~')");
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
			bc__note_add(note, sizeof note, "uncertain: 'c.'/'ca.'");
			uncertain = 1;
		}
		goto finish;
	}
	out->status = BC_AGE_UNKNOWN;
	if (numbers) {
		bc__note_add(note, sizeof note, "could not read the numbers (expected e.g. '72 Ma', '83.6-72.1 Ma', '75 +/- 2 Ma')");
		goto finish;
	}
	{
		char key[AGE_KEY_MAX];
		if (key_of_part(p, strlen(p), key, sizeof key)) {
			bc__note_add(note, sizeof note, "not recognised");
			suggest(r, key, note, sizeof note);
		} else {
			bc__note_add(note, sizeof note, "not recognised");
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
