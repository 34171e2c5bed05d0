/*
 * ranges.c - per-taxon depth ranges through time: for each taxon at a
 * chosen rank, when it was first and last found in each depth zone, how
 * its shallow range ends relative to its deep range given the age ranges,
 * and confidence intervals on range ends from the number of horizons
 * (Strauss & Sadler 1989; Marshall 1990). doc/ranges.md states every rule.
 */
#include "ranges.h"

#include "db.h"
#include "output.h"
#include "plot.h"
#include "resample.h"
#include "shift.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#define CAUTION "Palaeodepths are interpretations, often from environment terms; a range end is the last find, not the last living population " \
	"(the confidence limits assume horizons scattered at random through the true range, which uneven sampling and facies breaks violate); " \
	"an apparent retreat from shallow water carried by one or two occurrences is weak evidence; ranges can also shift through age uncertainty or transport."
#define FIGURE_CAUTION "Palaeodepths are interpretations of the sources; a range ends at the last find, and a shallow range that ends " \
	"early on one or two occurrences is weak evidence of a retreat."
#define EPS 1e-9
#define RANGES_RNG_WORDS "xoshiro256** (Blackman and Vigna 2021), one generator per draw seeded by splitmix64 (Steele, Lea and Flood 2014) from (seed, stream 4, draw index)"

static const char *const rank_names[] = {"genus", "family", "order", "species"};

typedef struct rocc {
	int64_t pk, loc;       /* loc -1: none */
	double older, younger, mid;
	double dmin, dmax;     /* palaeodepth range, m (one stored end stands for both) */
	char *name, *ref;      /* owned */
	int z2, zk;            /* zones at the first boundary / at every boundary; -1 straddling */
} rocc;

struct bc_ranges {
	bc_ranges_options opts;     /* string fields point at the owned copies below */
	char *group, *taxon, *preservation, *timescale;
	char *db_path, *chart_name, *chart_source, *vocabs;
	bc_chart *chart_owned;
	const bc_chart *chart;
	rocc *occ;
	size_t nocc, capocc;
	bc_range_taxon *taxa;
	size_t ntaxa;
	size_t *tfirst;             /* taxon t's occurrences are occ[tfirst[t] .. tfirst[t + 1]) */
	bc_range_zone *zones;       /* ntaxa x (n_zones + 1) with --zones */
	char **strs;                /* interval names, freed with the result */
	size_t nstrs, capstrs;
	bc_ranges_summary sum;
};

static int oom(bc_err *err) { return bc_err_set(err, BC_ENOMEM, "out of memory"); }

/* ------------------------------------------------------------------ */
/* Options and the two rules                                            */
/* ------------------------------------------------------------------ */

int bc_ranges_option_set(bc_ranges_options *o, const char *name, const char *value, bc_err *err)
{
	if (name && value && strcmp(name, "rank") == 0) {
		if (strcasecmp(value, "genus") == 0)
			o->rank = BC_RANGES_GENUS;
		else if (strcasecmp(value, "family") == 0)
			o->rank = BC_RANGES_FAMILY;
		else if (strcasecmp(value, "order") == 0)
			o->rank = BC_RANGES_ORDER;
		else if (strcasecmp(value, "scientificName") == 0 || strcasecmp(value, "species") == 0)
			o->rank = BC_RANGES_SPECIES;
		else
			return bc_err_set(err, BC_EUSAGE, "--rank: '%s' is not genus, family, order or scientificName", value);
		return BC_OK;
	}
	if (name && (strcmp(name, "bins") == 0 || strcmp(name, "span") == 0))
		return bc_err_set(err, BC_EUSAGE, "--%s: ranges are not binned; every occurrence keeps its own age range", name);
	return bc_shift_option_set(&o->sel, name, value, err);
}

double bc_ranges__first_cap(const bc_chart *c, double t)
{
	double base = -INFINITY;
	size_t n = c ? bc_chart_count(c) : 0;
	for (size_t i = 0; i < n; i++) {
		const bc_interval *iv = bc_chart_interval(c, i);
		if (iv->rank == BC_RANK_EON && t > iv->younger_ma + EPS && t <= iv->older_ma + EPS)
			return iv->older_ma;
		base = fmax(base, iv->older_ma);
	}
	return base > -INFINITY && t <= base + EPS ? base : INFINITY;
}

double bc_ranges__extension(size_t h, double level)
{
	if (h < 2 || !(level > 0 && level < 1))
		return NAN;
	/* Strauss & Sadler (1989); Marshall (1990) eq. 1: C = 1 - (1 + r)^-(H-1) */
	return pow(1.0 - level, -1.0 / ((double)h - 1.0)) - 1.0;
}

unsigned bc_ranges__relation(double s_young, double s_old, double f_young, double f_old, double l_young, double l_old)
{
	unsigned bits = 0;
	if (s_old > f_young + EPS)
		bits |= BC_RANGE_ENDS_BEFORE;
	if (s_young < l_old - EPS)
		bits |= BC_RANGE_OUTLASTS;
	if (s_young < f_old - EPS && s_old > l_young + EPS)
		bits |= BC_RANGE_OVERLAPS;
	return bits ? bits : BC_RANGE_OVERLAPS;
}

/* ------------------------------------------------------------------ */
/* Loading                                                              */
/* ------------------------------------------------------------------ */

/* One selected row: the name at the rank first, then the palaeodepth. */
static int load_row(void *ctx, const bc_shift__row *row, bc_err *err)
{
	bc_ranges *r = ctx;
	const bc_shift_options *o = &r->opts.sel;
	const char *name = row->name;
	size_t nl = strlen(name);
	while (nl && name[nl - 1] == ' ')
		nl--;
	while (nl && *name == ' ') {
		name++;
		nl--;
	}
	if (!nl) {
		r->sum.n_no_name++;
		return BC_OK;
	}
	if (isnan(row->dmin) && isnan(row->dmax)) {
		r->sum.n_no_depth++;
		return BC_OK;
	}
	rocc *p = bc__grow(r->occ, r->nocc, &r->capocc, sizeof *p, 1024);
	if (!p)
		return oom(err);
	r->occ = p;
	rocc *x = &r->occ[r->nocc];
	memset(x, 0, sizeof *x);
	if (!(x->name = bc__strndup(name, nl)) || !(x->ref = bc__strdup(row->ref))) {
		free(x->name);
		return oom(err);
	}
	r->nocc++;
	x->pk = row->pk;
	x->loc = row->loc;
	x->older = row->older;
	x->younger = row->younger;
	x->mid = (row->older + row->younger) / 2;
	double dmin = isnan(row->dmin) ? row->dmax : row->dmin, dmax = isnan(row->dmax) ? row->dmin : row->dmax;
	x->dmin = dmin;
	x->dmax = dmax;
	x->z2 = bc_shift__zone(dmin, dmax, o->zones, 1);
	x->zk = bc_shift__zone(dmin, dmax, o->zones, o->n_zones);
	return BC_OK;
}

static int load(bc_ranges *r, bc_db *db, bc_err *err)
{
	bc_shift__selected sel;
	int rc = bc_shift__select(db, &r->opts.sel, rank_names[r->opts.rank], load_row, r, &sel, err);
	r->sum.n_selected = sel.n_selected;
	r->sum.n_no_coordinates = sel.n_no_coordinates;
	r->sum.n_outside_region = sel.n_outside_region;
	memcpy(r->sum.data_sha256, sel.data_sha256, sizeof r->sum.data_sha256);
	return rc;
}

/* ------------------------------------------------------------------ */
/* Per taxon                                                            */
/* ------------------------------------------------------------------ */

static int occ_cmp(const void *a, const void *b)
{
	const rocc *x = a, *y = b;
	int c = strcmp(x->name, y->name);
	return c ? c : (x->pk > y->pk) - (x->pk < y->pk);
}

static int str_cmp(const void *a, const void *b) { return strcmp(*(const char *const *)a, *(const char *const *)b); }
static int i64_cmp(const void *a, const void *b)
{
	int64_t x = *(const int64_t *)a, y = *(const int64_t *)b;
	return (x > y) - (x < y);
}
static int dbl_cmp(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;
	return (x > y) - (x < y);
}

/* Scratch space for distinct counts, sized for the largest taxon. */
typedef struct scratch {
	const char **refs;
	int64_t *locs;
	double *mids;
} scratch;

static void distinct_refs_locs(const rocc *const *v, size_t n, scratch *s, size_t *nref, size_t *nloc)
{
	size_t kr = 0, kl = 0;
	for (size_t i = 0; i < n; i++) {
		if (*v[i]->ref)
			s->refs[kr++] = v[i]->ref;
		if (v[i]->loc >= 0)
			s->locs[kl++] = v[i]->loc;
	}
	qsort(s->refs, kr, sizeof *s->refs, str_cmp);
	qsort(s->locs, kl, sizeof *s->locs, i64_cmp);
	*nref = *nloc = 0;
	for (size_t i = 0; i < kr; i++)
		*nref += i == 0 || strcmp(s->refs[i], s->refs[i - 1]) != 0;
	for (size_t i = 0; i < kl; i++)
		*nloc += i == 0 || s->locs[i] != s->locs[i - 1];
}

/* The finest chart interval holding age t: an older bound belongs to the
 * interval below it (younger < t <= older), a younger bound to the one
 * above it (younger <= t < older). */
static const char *interval_at(const bc_chart *c, double t, int older_side)
{
	static const bc_rank ranks[] = {BC_RANK_AGE, BC_RANK_EPOCH, BC_RANK_PERIOD, BC_RANK_ERA, BC_RANK_EON};
	if (!c || !isfinite(t))
		return NULL;
	for (size_t k = 0; k < sizeof ranks / sizeof ranks[0]; k++)
		for (size_t i = 0; i < bc_chart_count(c); i++) {
			const bc_interval *iv = bc_chart_interval(c, i);
			if (iv->rank != ranks[k])
				continue;
			if (older_side ? (t > iv->younger_ma + EPS && t <= iv->older_ma + EPS)
				       : (t >= iv->younger_ma - EPS && t < iv->older_ma - EPS))
				return iv->name;
		}
	return NULL;
}

static int keep_str(bc_ranges *r, char *s)
{
	if (!s)
		return -1;
	char **p = bc__grow(r->strs, r->nstrs, &r->capstrs, sizeof *p, 64);
	if (!p) {
		free(s);
		return -1;
	}
	r->strs = p;
	r->strs[r->nstrs++] = s;
	return 0;
}

static int span_name(bc_ranges *r, double older, double younger, const char **out)
{
	const char *a = interval_at(r->chart, older, 1), *b = interval_at(r->chart, younger, 0);
	char buf[300];
	*out = "";
	if (!a && !b)
		return 0;
	if (a && b && strcmp(a, b) == 0)
		snprintf(buf, sizeof buf, "%s", a);
	else
		snprintf(buf, sizeof buf, "%s-%s", a ? a : "?", b ? b : "?");
	if (keep_str(r, bc__strdup(buf)))
		return -1;
	*out = r->strs[r->nstrs - 1];
	return 0;
}

static int zone_fill(bc_ranges *r, bc_range_zone *z, const rocc *const *v, size_t n, scratch *s)
{
	memset(z, 0, sizeof *z);
	z->first_older_ma = z->first_younger_ma = z->last_older_ma = z->last_younger_ma = NAN;
	z->ci_extension = z->first_ci_ma = z->last_ci_ma = NAN;
	z->first_interval = z->last_interval = "";
	z->n = n;
	if (!n)
		return 0;
	double maxo = -INFINITY, maxy = -INFINITY, mino = INFINITY, miny = INFINITY;
	for (size_t i = 0; i < n; i++) {
		maxo = fmax(maxo, v[i]->older);
		maxy = fmax(maxy, v[i]->younger);
		mino = fmin(mino, v[i]->older);
		miny = fmin(miny, v[i]->younger);
		s->mids[i] = v[i]->mid;
	}
	z->first_older_ma = maxo;
	z->first_younger_ma = maxy;
	z->last_older_ma = mino;
	z->last_younger_ma = miny;
	distinct_refs_locs(v, n, s, &z->n_references, &z->n_localities);
	qsort(s->mids, n, sizeof *s->mids, dbl_cmp);
	for (size_t i = 0; i < n; i++)
		z->n_horizons += i == 0 || s->mids[i] - s->mids[i - 1] > EPS;
	z->ci_extension = bc_ranges__extension(z->n_horizons, r->opts.sel.level);
	if (isfinite(z->ci_extension)) {
		double range = s->mids[n - 1] - s->mids[0];
		double base = bc_ranges__first_cap(r->chart, s->mids[n - 1]);
		z->first_ci_ma = s->mids[n - 1] + z->ci_extension * range;
		z->last_ci_ma = s->mids[0] - z->ci_extension * range;
		if (z->first_ci_ma > base) {
			z->first_ci_ma = base;
			z->ci_capped |= BC_RANGE_CAPPED_FIRST;
		}
		if (z->last_ci_ma < 0) {
			z->last_ci_ma = 0;
			z->ci_capped |= BC_RANGE_CAPPED_LAST;
		}
	}
	if (span_name(r, maxo, maxy, &z->first_interval) || span_name(r, mino, miny, &z->last_interval))
		return -1;
	return 0;
}

static void relate(bc_range_taxon *t, bc_ranges_summary *u)
{
	const bc_range_zone *sh = &t->shallow, *dp = &t->deep;
	t->relation = 0;
	t->retreat_supported = -1;
	if (!sh->n || !dp->n) {
		if (sh->n)
			u->n_shallow_only++;
		else if (dp->n)
			u->n_deep_only++;
		else
			u->n_straddle_only++;
		return;
	}
	u->n_both++;
	t->relation = bc_ranges__relation(sh->last_younger_ma, sh->last_older_ma, dp->first_younger_ma, dp->first_older_ma,
		dp->last_younger_ma, dp->last_older_ma);
	if (t->relation == BC_RANGE_ENDS_BEFORE)
		u->n_ends_before++;
	else if (t->relation == BC_RANGE_OVERLAPS)
		u->n_overlaps++;
	else if (t->relation == BC_RANGE_OUTLASTS)
		u->n_outlasts++;
	else
		u->n_unresolved++;
	if (!(t->relation & BC_RANGE_OUTLASTS)) {
		/* The shallow range certainly ends no later than the deep one. */
		t->retreat_supported = isfinite(sh->last_ci_ma) && sh->last_ci_ma >= dp->last_older_ma - EPS;
		if (t->retreat_supported)
			u->n_retreat_supported++;
		else
			u->n_retreat_weak++;
	}
}

static int per_taxon(bc_ranges *r, bc_err *err)
{
	const bc_shift_options *o = &r->opts.sel;
	size_t nz = o->zones_given ? o->n_zones + 1 : 0;
	scratch s = {0};
	const rocc **v = NULL, **w = NULL;
	int rc = BC_OK;
	qsort(r->occ, r->nocc, sizeof *r->occ, occ_cmp);
	for (size_t i = 0; i < r->nocc; i++)
		r->ntaxa += i == 0 || strcmp(r->occ[i].name, r->occ[i - 1].name) != 0;
	r->taxa = bc__calloc(r->ntaxa, sizeof *r->taxa);
	r->tfirst = bc__calloc(r->ntaxa + 1, sizeof *r->tfirst);
	r->zones = nz ? bc__calloc(r->ntaxa * nz, sizeof *r->zones) : NULL;
	s.refs = bc__calloc(r->nocc, sizeof *s.refs);
	s.locs = bc__calloc(r->nocc, sizeof *s.locs);
	s.mids = bc__calloc(r->nocc, sizeof *s.mids);
	v = bc__calloc(r->nocc, sizeof *v);
	w = bc__calloc(r->nocc, sizeof *w);
	if (!r->taxa || !r->tfirst || (nz && !r->zones) || !s.refs || !s.locs || !s.mids || !v || !w) {
		rc = oom(err);
		goto done;
	}
	size_t t = 0;
	for (size_t i = 0; i < r->nocc && rc == BC_OK;) {
		size_t j = i;
		while (j < r->nocc && strcmp(r->occ[j].name, r->occ[i].name) == 0)
			j++;
		bc_range_taxon *x = &r->taxa[t];
		x->taxon = r->occ[i].name;
		x->n = j - i;
		r->tfirst[t] = i;
		r->tfirst[t + 1] = j;
		x->has_draws = 0;
		x->draws_both = x->p_ends_before = x->p_overlaps = x->p_outlasts = NAN;
		for (size_t k = i; k < j; k++) {
			v[k - i] = &r->occ[k];
			x->n_straddle += r->occ[k].z2 < 0;
		}
		distinct_refs_locs(v, x->n, &s, &x->n_references, &x->n_localities);
		for (int zone = 0; zone < 2 && rc == BC_OK; zone++) {
			size_t m = 0;
			for (size_t k = i; k < j; k++)
				if (r->occ[k].z2 == zone)
					w[m++] = &r->occ[k];
			if (zone_fill(r, zone ? &x->deep : &x->shallow, w, m, &s))
				rc = oom(err);
		}
		for (size_t zone = 0; zone < nz && rc == BC_OK; zone++) {
			size_t m = 0;
			for (size_t k = i; k < j; k++)
				if (r->occ[k].zk == (int)zone)
					w[m++] = &r->occ[k];
			if (zone_fill(r, &r->zones[t * nz + zone], w, m, &s))
				rc = oom(err);
		}
		x->zones = nz ? &r->zones[t * nz] : NULL;
		relate(x, &r->sum);
		t++;
		i = j;
	}
	r->sum.n_taxa = r->ntaxa;
	r->sum.n_used = r->nocc;
done:
	free(s.refs);
	free(s.locs);
	free(s.mids);
	free(v);
	free(w);
	return rc;
}

/* ------------------------------------------------------------------ */
/* Resampling draws                                                     */
/* ------------------------------------------------------------------ */

/* Per thread, per taxon: draws ending before, overlapping, outlasting, and
 * draws with both zones (the denominator). Integer sums do not depend on
 * which thread ran a draw, so the shares are the same for any --threads. */
enum { DRAW_ENDS_BEFORE = 0, DRAW_OVERLAPS = 1, DRAW_OUTLASTS = 2, DRAW_BOTH = 3, DRAW_SLOTS = 4 };

typedef struct range_draws {
	const bc_ranges *r;
	uint32_t *cnt;              /* threads x ntaxa x DRAW_SLOTS */
} range_draws;

/* One draw (doc/ranges.md, "Resampling draws"): each occurrence, in table
 * order, first gets a depth when it straddles the first boundary, then an
 * age within its range, from the draw's own stream, both as shift's draws
 * make them (bc_resample__depth, bc_resample__age); then per taxon the
 * last shallow age s against the first (f) and last (l) deep ages. */
static void range_draw(void *ctx, int thread, size_t d)
{
	const range_draws *x = ctx;
	const bc_ranges *r = x->r;
	const bc_shift_options *o = &r->opts.sel;
	uint32_t *cnt = &x->cnt[(size_t)thread * r->ntaxa * DRAW_SLOTS];
	int age = (o->resample & BC_RESAMPLE_AGE) != 0, depth = (o->resample & BC_RESAMPLE_DEPTH) != 0;
	bc_rng g;
	bc_resample__rng_init(&g, o->seed, BC_RESAMPLE__STREAM_RANGES, d);
	for (size_t t = 0; t < r->ntaxa; t++) {
		double s = INFINITY, f = -INFINITY, l = INFINITY;
		for (size_t i = r->tfirst[t]; i < r->tfirst[t + 1]; i++) {
			const rocc *q = &r->occ[i];
			int z = q->z2;
			if (z < 0) {
				if (!depth)
					continue; /* straddling, in no zone */
				double dd = bc_resample__depth(&g, q->dmin, q->dmax - q->dmin);
				z = bc_shift__zone(dd, dd, o->zones, 1);
			}
			double a = age && q->older > q->younger ? bc_resample__age(&g, q->older, q->older - q->younger) : q->mid;
			if (z == 0) {
				s = fmin(s, a);
			} else {
				f = fmax(f, a);
				l = fmin(l, a);
			}
		}
		if (!isfinite(s) || !isfinite(f))
			continue;
		uint32_t *c = &cnt[t * DRAW_SLOTS];
		c[DRAW_BOTH]++;
		c[s > f ? DRAW_ENDS_BEFORE : s < l ? DRAW_OUTLASTS : DRAW_OVERLAPS]++;
	}
}

static int run_draws(bc_ranges *r, bc_err *err)
{
	const bc_shift_options *o = &r->opts.sel;
	int nt = bc_resample__thread_count(o->threads, o->draws);
	range_draws x = {r, bc__calloc((size_t)nt * r->ntaxa * DRAW_SLOTS + 1, sizeof *x.cnt)};
	if (!x.cnt)
		return oom(err);
	bc_resample__parallel(nt, o->draws, range_draw, &x);
	for (size_t t = 0; t < r->ntaxa; t++) {
		uint64_t c[DRAW_SLOTS] = {0};
		for (int k = 0; k < nt; k++)
			for (int j = 0; j < DRAW_SLOTS; j++)
				c[j] += x.cnt[((size_t)k * r->ntaxa + t) * DRAW_SLOTS + (size_t)j];
		bc_range_taxon *y = &r->taxa[t];
		y->has_draws = 1;
		y->draws_both = (double)c[DRAW_BOTH] / (double)o->draws;
		if (c[DRAW_BOTH]) {
			y->p_ends_before = (double)c[DRAW_ENDS_BEFORE] / (double)c[DRAW_BOTH];
			y->p_overlaps = (double)c[DRAW_OVERLAPS] / (double)c[DRAW_BOTH];
			y->p_outlasts = (double)c[DRAW_OUTLASTS] / (double)c[DRAW_BOTH];
		}
	}
	r->sum.n_draws = o->draws;
	for (size_t i = 0; i < r->nocc; i++) {
		const rocc *q = &r->occ[i];
		int drawn_depth = q->z2 < 0 && (o->resample & BC_RESAMPLE_DEPTH);
		r->sum.n_depth_drawn += (size_t)drawn_depth;
		r->sum.n_age_drawn += (size_t)((q->z2 >= 0 || drawn_depth) && (o->resample & BC_RESAMPLE_AGE) && q->older > q->younger);
	}
	free(x.cnt);
	return BC_OK;
}

/* ------------------------------------------------------------------ */
/* Compute                                                              */
/* ------------------------------------------------------------------ */

void bc_ranges_free(bc_ranges *r)
{
	if (!r)
		return;
	free(r->group);
	free(r->taxon);
	free(r->preservation);
	free(r->timescale);
	free(r->db_path);
	free(r->chart_name);
	free(r->chart_source);
	free(r->vocabs);
	bc_chart_free(r->chart_owned);
	for (size_t i = 0; i < r->nocc; i++) {
		free(r->occ[i].name);
		free(r->occ[i].ref);
	}
	free(r->occ);
	free(r->taxa);
	free(r->tfirst);
	free(r->zones);
	for (size_t i = 0; i < r->nstrs; i++)
		free(r->strs[i]);
	free(r->strs);
	free(r);
}

int bc_ranges_compute(bc_ranges **out, bc_db *db, const bc_ranges_options *opts, bc_err *err)
{
	*out = NULL;
	int rc = BC_OK;
	const bc_shift_options *o = &opts->sel;
	if (!o->n_zones || o->n_zones > BC_SHIFT_MAX_ZONES)
		return bc_err_set(err, BC_EUSAGE, "ranges: no depth boundary (--split or --zones)");
	if (!(o->level > 0 && o->level < 1))
		return bc_err_set(err, BC_EUSAGE, "--level: %g is not between 0 and 1", o->level);
	if ((unsigned)opts->rank > BC_RANGES_SPECIES)
		return bc_err_set(err, BC_EUSAGE, "ranges: unknown rank %d", (int)opts->rank);
	int rc0 = bc_resample__check(o, err);
	if (rc0)
		return rc0;
	if (o->bootstrap || o->weight_references || o->background || o->quota || o->taphonomy)
		return bc_err_set(err, BC_EUSAGE, "--%s: a shift table option; ranges take --draws, --seed, --threads and --resample only",
			o->bootstrap ? "bootstrap" : o->weight_references ? "weight-references" : o->background ? "background" : o->quota ? "quota" : "taphonomy");
	if (o->draws && !o->resample)
		return bc_err_set(err, BC_EUSAGE, "--resample none: ranges draw ages and depths only, so there would be nothing to draw");
	bc_ranges *r = bc__calloc(1, sizeof *r);
	if (!r)
		return oom(err);
	r->opts = *opts;
	bc_shift_options *so = &r->opts.sel;
	if (bc_shift__dup_opt(&r->group, &so->group) || bc_shift__dup_opt(&r->taxon, &so->taxon) ||
	    bc_shift__dup_opt(&r->preservation, &so->preservation) || bc_shift__dup_opt(&r->timescale, &so->timescale) || !(r->db_path = bc__strdup(bc_db_path(db)))) {
		rc = oom(err);
		goto done;
	}
	so->bins_file = NULL;
	r->chart = so->chart;
	if (!r->chart) {
		if ((rc = bc_timescale_get(&r->chart_owned, db, so->timescale, err)) != BC_OK)
			goto done;
		r->chart = r->chart_owned;
	}
	if (!(r->chart_name = bc__strdup(bc_chart_name(r->chart))) || !(r->chart_source = bc__strdup(bc_chart_source(r->chart)))) {
		rc = oom(err);
		goto done;
	}
	if ((rc = bc_shift__vocabs(&r->vocabs, db, err)) || (rc = load(r, db, err)))
		goto done;
	const bc_shift__excluded ex[] = {
		{r->sum.n_no_coordinates, "no coordinates (--region)"}, {r->sum.n_outside_region, "outside the region"},
		{r->sum.n_no_name, "no name at the rank"}, {r->sum.n_no_depth, "no palaeodepth"},
	};
	rc = bc_shift__nothing_left(err, r->db_path, so, r->sum.n_selected, r->nocc, ex, sizeof ex / sizeof ex[0], "compare");
	if (rc == BC_OK)
		rc = per_taxon(r, err);
	if (rc == BC_OK && so->draws)
		rc = run_draws(r, err);
done:
	if (rc) {
		bc_ranges_free(r);
		return rc;
	}
	*out = r;
	return BC_OK;
}

size_t bc_ranges_count(const bc_ranges *r) { return r->ntaxa; }
const bc_range_taxon *bc_ranges_taxon_at(const bc_ranges *r, size_t i) { return i < r->ntaxa ? &r->taxa[i] : NULL; }
const bc_ranges_summary *bc_ranges_summary_get(const bc_ranges *r) { return &r->sum; }

/* ------------------------------------------------------------------ */
/* Output                                                               */
/* ------------------------------------------------------------------ */

static const char *relation_text(unsigned rel, char *buf, size_t cap)
{
	static const struct { unsigned bit; const char *s; } names[] = {
		{BC_RANGE_ENDS_BEFORE, "ends_before"}, {BC_RANGE_OVERLAPS, "overlaps"}, {BC_RANGE_OUTLASTS, "outlasts"},
	};
	size_t k = 0;
	buf[0] = '\0';
	for (size_t i = 0; i < 3; i++)
		if (rel & names[i].bit)
			k += (size_t)snprintf(buf + k, cap - k, "%s%s", k ? "|" : "", names[i].s);
	return buf;
}

static const char *taxon_relation(const bc_range_taxon *t, char *buf, size_t cap)
{
	if (t->shallow.n && t->deep.n)
		return relation_text(t->relation, buf, cap);
	return t->shallow.n ? "shallow_only" : t->deep.n ? "deep_only" : "straddling_only";
}

static const struct { const char *suffix; bc_col_type type; int digits; } zone_cols[] = {
	{"n", BC_COL_COUNT, 0}, {"references", BC_COL_COUNT, 0}, {"localities", BC_COL_COUNT, 0},
	{"horizons", BC_COL_COUNT, 0}, {"first_older_ma", BC_COL_REAL, -1}, {"first_younger_ma", BC_COL_REAL, -1},
	{"first_interval", BC_COL_TEXT, 0}, {"last_older_ma", BC_COL_REAL, -1}, {"last_younger_ma", BC_COL_REAL, -1},
	{"last_interval", BC_COL_TEXT, 0}, {"first_ci_ma", BC_COL_REAL, 2}, {"last_ci_ma", BC_COL_REAL, 2},
	{"ci_capped", BC_COL_TEXT, 0},
};
enum { ZCOL_FIRST_INTERVAL = 6, ZCOL_LAST_INTERVAL = 9, ZCOL_CAPPED = 12 };
#define N_ZONE_COLS (sizeof zone_cols / sizeof zone_cols[0])

static int put_zone(bc_table *t, size_t col, const bc_range_zone *z, bc_err *err)
{
	const double num[] = {(double)z->n, (double)z->n_references, (double)z->n_localities, (double)z->n_horizons,
		z->first_older_ma, z->first_younger_ma, NAN, z->last_older_ma, z->last_younger_ma, NAN, z->first_ci_ma, z->last_ci_ma, NAN};
	static const char *const capped[] = {"no", "first", "last", "first|last"};
	for (size_t c = 0; c < N_ZONE_COLS; c++) {
		if (zone_cols[c].type != BC_COL_TEXT) {
			bc_output__set_num(t, col + c, num[c]);
			continue;
		}
		const char *s = c == ZCOL_FIRST_INTERVAL ? z->first_interval : c == ZCOL_LAST_INTERVAL ? z->last_interval
			      : isfinite(z->ci_extension) ? capped[z->ci_capped & 3] : NULL;
		if (z->n && s && *s) {
			int rc = bc_output__set_text(t, col + c, s, err);
			if (rc)
				return rc;
		}
	}
	return BC_OK;
}

static void describe_options(const bc_ranges *r, bc_buf *b)
{
	const bc_shift_options *o = &r->opts.sel;
	if (o->group)
		bc__buf_printf(b, " --group '%s'", o->group);
	if (o->taxon)
		bc__buf_printf(b, " --taxon '%s'", o->taxon);
	if (o->preservation)
		bc__buf_printf(b, " --preservation '%s'", o->preservation);
	if (o->has_region)
		bc__buf_printf(b, " --region %g,%g,%g,%g", o->region[0], o->region[1], o->region[2], o->region[3]);
	if (o->timescale)
		bc__buf_printf(b, " --timescale '%s'", o->timescale);
	bc__buf_printf(b, " --rank %s", r->opts.rank == BC_RANGES_SPECIES ? "scientificName" : rank_names[r->opts.rank]);
	bc__buf_printf(b, " --%s ", o->zones_given ? "zones" : "split");
	for (size_t i = 0; i < o->n_zones; i++)
		bc__buf_printf(b, "%s%g", i ? "," : "", o->zones[i]);
	bc__buf_printf(b, " --level %g", o->level);
	bc_resample__describe_options(o, b);
}

static int build_table(const bc_ranges *r, bc_table **out, bc_err *err)
{
	bc_table *t = NULL;
	bc_buf b = {0};
	const bc_shift_options *o = &r->opts.sel;
	size_t nz = o->zones_given ? o->n_zones + 1 : 0;
	int rc = bc_output__table_new(&t, "taxa", err);
	if (rc)
		return rc;
	static const struct { const char *name; bc_col_type type; } head[] = {
		{"taxon", BC_COL_TEXT}, {"n", BC_COL_COUNT}, {"n_straddle", BC_COL_COUNT}, {"n_references", BC_COL_COUNT},
		{"n_localities", BC_COL_COUNT}, {"relation", BC_COL_TEXT}, {"retreat_supported", BC_COL_TEXT},
	};
	const size_t nhead = sizeof head / sizeof head[0];
	for (size_t i = 0; rc == BC_OK && i < nhead; i++)
		rc = bc_output__add_column(t, head[i].name, head[i].type, 0, err);
	char name[64];
	for (size_t g = 0; rc == BC_OK && g < 2 + nz; g++)
		for (size_t c = 0; rc == BC_OK && c < N_ZONE_COLS; c++) {
			if (g < 2)
				snprintf(name, sizeof name, "%s_%s", g ? "deep" : "shallow", zone_cols[c].suffix);
			else
				snprintf(name, sizeof name, "zone%zu_%s", g - 1, zone_cols[c].suffix);
			rc = bc_output__add_column(t, name, zone_cols[c].type, zone_cols[c].digits, err);
		}
	static const char *const draw_cols[] = {"p_ends_before", "p_overlaps", "p_outlasts", "draws_both_zones"};
	size_t col_draws = nhead + (2 + nz) * N_ZONE_COLS;
	for (size_t c = 0; rc == BC_OK && r->sum.n_draws && c < 4; c++)
		rc = bc_output__add_column(t, draw_cols[c], BC_COL_REAL, 3, err);
	for (size_t i = 0; rc == BC_OK && i < r->ntaxa; i++) {
		const bc_range_taxon *x = &r->taxa[i];
		char rel[64];
		rc = bc_output__add_row(t, err);
		if (rc == BC_OK)
			rc = bc_output__set_text(t, 0, x->taxon, err);
		if (rc == BC_OK) {
			bc_output__set_num(t, 1, (double)x->n);
			bc_output__set_num(t, 2, (double)x->n_straddle);
			bc_output__set_num(t, 3, (double)x->n_references);
			bc_output__set_num(t, 4, (double)x->n_localities);
			rc = bc_output__set_text(t, 5, taxon_relation(x, rel, sizeof rel), err);
		}
		if (rc == BC_OK && x->retreat_supported >= 0)
			rc = bc_output__set_text(t, 6, x->retreat_supported ? "yes" : "no", err);
		if (rc == BC_OK)
			rc = put_zone(t, nhead, &x->shallow, err);
		if (rc == BC_OK)
			rc = put_zone(t, nhead + N_ZONE_COLS, &x->deep, err);
		for (size_t z = 0; rc == BC_OK && z < nz; z++)
			rc = put_zone(t, nhead + (2 + z) * N_ZONE_COLS, &x->zones[z], err);
		if (rc == BC_OK && x->has_draws) {
			const double p[] = {x->p_ends_before, x->p_overlaps, x->p_outlasts, x->draws_both};
			for (size_t c = 0; c < 4; c++)
				bc_output__set_num(t, col_draws + c, p[c]);
		}
	}
	if (rc == BC_OK) {
		bc__buf_printf(&b, "Depth ranges per %s: ", r->opts.rank == BC_RANGES_SPECIES ? "scientific name" : rank_names[r->opts.rank]);
		bc_plot__selection_words(&b, o);
		bc__buf_puts(&b, "; ");
		bc_plot__zoning_words(&b, o);
		bc__buf_printf(&b, "; chart %s; range-end limits at %g %% confidence (Marshall 1990).", r->chart_name, 100 * o->level);
		rc = b.data ? bc_output__set_caption(t, b.data, err) : oom(err);
		bc__buf_free(&b);
	}
	if (rc == BC_OK)
		rc = bc_output__set_tests_title(t, "Taxa by relation", err);
	const bc_ranges_summary *u = &r->sum;
	const bc_meta_section T = BC_META_TESTS, S = BC_META_STAMP;
	const struct { const char *key; size_t v; } counts[] = {
		{"taxa", u->n_taxa}, {"taxa_shallow_only", u->n_shallow_only}, {"taxa_deep_only", u->n_deep_only},
		{"taxa_straddling_only", u->n_straddle_only}, {"taxa_in_both_zones", u->n_both},
		{"shallow_ends_before_deep_begins", u->n_ends_before}, {"shallow_ends_within_deep_range", u->n_overlaps},
		{"shallow_outlasts_deep", u->n_outlasts}, {"relation_unresolved_by_ages", u->n_unresolved},
		{"retreat_supported", u->n_retreat_supported}, {"retreat_weak", u->n_retreat_weak},
	};
	for (size_t i = 0; rc == BC_OK && i < sizeof counts / sizeof counts[0]; i++)
		rc = bc_output__meta_num(t, T, counts[i].key, (double)counts[i].v, 0, err);
	if (rc == BC_OK)
		rc = bc_shift__stamp_source(t, r->db_path, r->chart_name, r->chart_source, r->vocabs, err);
	describe_options(r, &b);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "options", err, "%s", b.data ? b.data + 1 : "");
	bc__buf_free(&b);
	bc_plot__selection_words(&b, o);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "selection", err, "%s", b.data ? b.data : "");
	bc__buf_free(&b);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "rank", err, "%s", r->opts.rank == BC_RANGES_GENUS
			? "genus (the genus column, else the first word of scientificName)"
			: r->opts.rank == BC_RANGES_SPECIES ? "scientificName as stored" : rank_names[r->opts.rank]);
	bc_plot__zoning_words(&b, o);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "zones", err, "%s%s", b.data ? b.data : "",
			o->zones_given ? "; zoneK columns use every boundary, shallow_/deep_ columns and the relation the first" : "");
	bc__buf_free(&b);
	if (rc == BC_OK)
		rc = bc_shift__stamp_zone_rule(t, "in no zone", err);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "range_ends", err, "first_older_ma/first_younger_ma: the largest older and younger bounds in the zone, so the first occurrence "
			"lies between them; last_older_ma/last_younger_ma: the smallest, so the last occurrence lies between them; intervals: the finest chart interval "
			"holding each (an older bound belongs to the interval below it, a younger bound to the one above it)");
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "relation", err, "of the last shallow occurrence (s) to the deep range (first f, last l): ends_before s older than f, "
			"overlaps l <= s <= f, outlasts s younger than l; several joined by | when the age bounds allow each (bounds that only touch do not)");
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "ci_method", err, "Strauss & Sadler (1989) / Marshall (1990) confidence interval on one end of a stratigraphic range, "
			"classical form: horizons = distinct midpoint ages in the zone (H), observed range R = oldest minus youngest midpoint, "
			"r = (1 - C)^(-1/(H-1)) - 1 at C = %g; last_ci_ma = youngest midpoint - r R (not below 0), first_ci_ma = oldest midpoint + r R; "
			"none for H < 2. Assumes horizons scattered at random (uniformly) through the true range", o->level);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "ci_capped", err, "first: first_ci_ma reached beyond the older bound of the chart's eon holding the oldest horizon "
			"(or beyond the chart) and is held there; last: last_ci_ma reached beyond the present and is held at 0 Ma; "
			"a held limit says only that the data do not bound that end (few horizons: H = 2 gives r = 19 at C = 0.95)");
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "retreat_supported", err, "yes when the shallow range certainly ends no later than the deep one (no outlasts) and last_ci_ma "
			"of the shallow zone is still no younger than the deep zone's last_older_ma; no when it ends first but the limit reaches the deep range's end, "
			"or there is one shallow horizon only; NA otherwise");
	if (rc == BC_OK)
		rc = bc_shift__stamp_data(t, o, u->data_sha256, u->n_selected, u->n_no_coordinates, u->n_outside_region, err);
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, S, "excluded_no_name_at_rank", (double)u->n_no_name, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, S, "excluded_no_palaeodepth", (double)u->n_no_depth, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, S, "used", (double)u->n_used, 0, err);
	if (rc == BC_OK && !u->n_draws)
		rc = bc_output__meta_text(t, S, "draws", err, "none (--draws N estimates how often each relation occurs under age and depth uncertainty)");
	if (rc == BC_OK && u->n_draws)
		rc = bc_output__meta_text(t, S, "draws", err, "%zu draws, seed %llu; in each, %s%s%s; random numbers: " RANGES_RNG_WORDS,
			u->n_draws, (unsigned long long)o->seed,
			o->resample & BC_RESAMPLE_AGE ? "every age range wider than a point gives an age drawn uniformly within it (as shift --draws)" : "every occurrence sits at its midpoint age",
			o->resample & BC_RESAMPLE_DEPTH ? "; every depth range straddling the first boundary gives a depth drawn uniformly within it, and so a zone" : "; straddling occurrences stay in no zone",
			"");
	if (rc == BC_OK && u->n_draws)
		rc = bc_output__meta_num(t, S, "draws_ages_drawn", (double)u->n_age_drawn, 0, err);
	if (rc == BC_OK && u->n_draws)
		rc = bc_output__meta_num(t, S, "draws_depths_drawn", (double)u->n_depth_drawn, 0, err);
	if (rc == BC_OK && u->n_draws)
		rc = bc_output__meta_text(t, S, "draws_relation", err, "per draw, s = the youngest drawn shallow age, f and l = the oldest and youngest drawn deep ages: "
			"ends_before s > f, outlasts s < l, overlaps otherwise; p_ends_before, p_overlaps, p_outlasts = their shares among the draws in which the taxon "
			"had shallow and deep occurrences (draws_both_zones = the share of all draws with both); the age ranges and depths are drawn independently "
			"for each occurrence, so occurrences from one bed are not kept together");
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "caution", err, "%s", CAUTION);
	if (rc) {
		bc_output__table_free(t);
		return rc;
	}
	*out = t;
	return BC_OK;
}

int bc_ranges_write(const bc_ranges *r, FILE *f, bc_format format, bc_err *err)
{
	bc_table *t = NULL;
	int rc = build_table(r, &t, err);
	if (rc == BC_OK)
		rc = bc_output__write(t, f, format, err);
	bc_output__table_free(t);
	return rc;
}

/* The references of the methods paragraph, alphabetical. Details not
 * checked against the publications are marked (doc/ranges.md). */
static const char REF_BLACKMAN[] =
	"Blackman D, Vigna S (2021) Scrambled linear pseudorandom number generators. ACM Transactions on Mathematical Software 47(4):36 "
	"[volume and article number from memory].\n";
static const char REF_STEELE[] =
	"Steele GL, Lea D, Flood CH (2014) Fast splittable pseudorandom number generators. OOPSLA 2014 [from memory].\n";
static const char REFERENCES[] =
	"Cohen KM, Finney SC, Gibbard PL, Fan J-X (2013; updated) The ICS International Chronostratigraphic Chart. Episodes 36(3):199-204 "
	"[volume and pages from memory].\n"
	"Marshall CR (1990) Confidence intervals on stratigraphic ranges. Paleobiology 16(1):1-10 [volume and pages from memory].\n";
static const char REF_STRAUSS[] =
	"Strauss D, Sadler PM (1989) Classical confidence intervals and Bayesian probability estimates for ends of local taxon ranges. "
	"Mathematical Geology 21(4):411-427 [from memory].\n";

int bc_ranges_write_methods(const bc_ranges *r, FILE *f, bc_err *err)
{
	const bc_shift_options *o = &r->opts.sel;
	const bc_ranges_summary *u = &r->sum;
	bc_buf b = {0}, w = {0};
	int bad = 0;
	bad |= bc_plot__selection_words(&w, o);
	bad |= bc__buf_printf(&b, "Occurrences were selected from a bathychron %s database (%s; data SHA-256 in the table's stamp); %zu matched",
		BC_VERSION, w.data ? w.data : "", u->n_selected);
	bc__buf_free(&w);
	const bc_shift__excluded ex[] = {
		{u->n_no_coordinates, "had no coordinates (--region)"}, {u->n_outside_region, "lay outside the region"},
		{u->n_no_name, "had no name at the rank"}, {u->n_no_depth, "had no palaeodepth"},
	};
	bc_shift__excluded_words(&w, ex, sizeof ex / sizeof ex[0]);
	if (w.len)
		bad |= bc__buf_printf(&b, ", of which were left out: %s", w.data);
	bc__buf_free(&w);
	bad |= bc__buf_printf(&b, "; %zu occurrences of %zu taxa (%s) were used. ", u->n_used, u->n_taxa,
		r->opts.rank == BC_RANGES_GENUS ? "genera: the genus column, else the first word of the scientific name"
		: r->opts.rank == BC_RANGES_SPECIES ? "scientific names as stored" : r->opts.rank == BC_RANGES_FAMILY ? "families" : "orders");
	bad |= bc__buf_printf(&b, "An occurrence was classed as shallow when its palaeodepth range lay above %g m (maximum <= %g m and minimum < %g m), "
		"deep when it lay at or below %g m, and straddling otherwise (in neither range). ", o->zones[0], o->zones[0], o->zones[0], o->zones[0]);
	bad |= bc__buf_printf(&b, "For each taxon and zone, the first and last occurrences are given as the age bounds within which they must lie "
		"(the largest and the smallest older and younger bounds among the zone's occurrences), named by the finest interval of the "
		"International Chronostratigraphic Chart (release %s; Cohen et al. 2013, updated); how the last shallow occurrence stands to the deep range "
		"(before it begins, within it, or after it ends) is reported with every possibility those bounds allow. ", r->chart_name);
	bad |= bc__buf_printf(&b, "Confidence limits at %g%% on each range end follow the classical method of Strauss & Sadler (1989) and Marshall (1990): "
		"with H horizons (distinct occurrence midpoints) spanning an observed range R, the end lies within rR beyond the outermost horizon, "
		"r = (1 - C)^(-1/(H-1)) - 1, assuming horizons scattered at random through the true range; no limit was computed for fewer than two horizons. "
		"A limit on the first occurrence reaching beyond the older bound of the chart's eon holding the oldest horizon was held at that bound, and one on "
		"the last occurrence reaching beyond the present at 0 Ma (marked ci_capped): such a limit says only that the data do not bound that end. ",
		100 * o->level);
	bad |= bc__buf_printf(&b, "Of the %zu taxa, %zu occurred in both zones: the shallow range certainly ended before the deep one began in %zu, "
		"within it in %zu, after it in %zu, and the age bounds allowed more than one of these in %zu; "
		"an end of the shallow range before the deep one's survived the confidence limit in %zu. ",
		u->n_taxa, u->n_both, u->n_ends_before, u->n_overlaps, u->n_outlasts, u->n_unresolved, u->n_retreat_supported);
	if (u->n_draws) {
		int age = (o->resample & BC_RESAMPLE_AGE) != 0, depth = (o->resample & BC_RESAMPLE_DEPTH) != 0;
		bad |= bc__buf_printf(&b, "How often each relation holds under age%s uncertainty was estimated from %zu draws (seed %llu; xoshiro256**, "
			"Blackman & Vigna 2021, one generator per draw seeded by splitmix64, Steele et al. 2014) in which ",
			depth ? " and depth" : "", u->n_draws, (unsigned long long)o->seed);
		if (age)
			bad |= bc__buf_printf(&b, "each occurrence's age was drawn uniformly within its age range (%zu of them wider than a point)", u->n_age_drawn);
		else
			bad |= bc__buf_puts(&b, "each occurrence was placed at its midpoint age");
		if (depth)
			bad |= bc__buf_printf(&b, " and each depth range straddling %g m gave a depth drawn uniformly within it (%zu straddling)",
				o->zones[0], u->n_depth_drawn);
		bad |= bc__buf_puts(&b, "; per taxon, the share of draws with both shallow and deep occurrences in which the youngest shallow age was older "
			"than the oldest deep age, lay within the deep range, or was younger than the youngest deep age is reported. ");
	}
	bad |= bc__buf_puts(&b, CAUTION "\n\nReferences\n\n");
	if (u->n_draws)
		bad |= bc__buf_puts(&b, REF_BLACKMAN);
	bad |= bc__buf_puts(&b, REFERENCES);
	if (u->n_draws)
		bad |= bc__buf_puts(&b, REF_STEELE);
	bad |= bc__buf_puts(&b, REF_STRAUSS);
	int rc = BC_OK;
	if (bad || !b.data)
		rc = oom(err);
	else if (fwrite(b.data, 1, b.len, f) != b.len)
		rc = bc_err_set(err, BC_EIO, "writing the methods paragraph failed");
	bc__buf_free(&b);
	return rc;
}

/* ------------------------------------------------------------------ */
/* Figure                                                               */
/* ------------------------------------------------------------------ */

static void plot_zone(bc_plot_zone_range *p, const bc_range_zone *z)
{
	p->n = (double)z->n;
	p->first_older_ma = z->first_older_ma;
	p->first_younger_ma = z->first_younger_ma;
	p->last_older_ma = z->last_older_ma;
	p->last_younger_ma = z->last_younger_ma;
	p->last_ci_ma = z->last_ci_ma;
}

int bc_ranges_plot(const char *path, const bc_ranges *r, const struct bc_plot_options *opt, bc_err *err)
{
	bc_plot_options o = BC_PLOT_OPTIONS_INIT;
	bc_plot_format fmt;
	bc_buf cap = {0};
	int rc = bc_plot_format_from_path(&fmt, path, err);
	if (rc != BC_OK)
		return rc;
	if (opt)
		o = *opt;
	o.level = r->opts.sel.level;
	o.no_caveat = 1; /* the ranges caution replaces the shift figure's */
	bc_plot_taxon_range *v = bc__calloc(r->ntaxa ? r->ntaxa : 1, sizeof *v);
	if (!v)
		return oom(err);
	for (size_t i = 0; i < r->ntaxa; i++) {
		v[i].label = r->taxa[i].taxon;
		plot_zone(&v[i].shallow, &r->taxa[i].shallow);
		plot_zone(&v[i].deep, &r->taxa[i].deep);
	}
	if (o.caption) {
		if (bc__buf_printf(&cap, "%s%s" FIGURE_CAUTION, o.caption, *o.caption ? " " : "") || !cap.data) {
			free(v);
			return oom(err);
		}
		o.caption = cap.data;
	} else {
		size_t nstr = 0;
		for (size_t i = 0; i < r->ntaxa; i++)
			nstr += r->taxa[i].n_straddle;
		int bad = 0;
		bad |= bc__buf_printf(&cap, "Range of each %s in shallow and deep water; selection: ",
			r->opts.rank == BC_RANGES_SPECIES ? "species" : rank_names[r->opts.rank]);
		bad |= bc_plot__selection_words(&cap, &r->opts.sel);
		bad |= bc__buf_puts(&cap, "; ");
		bad |= bc_plot__zoning_words(&cap, &r->opts.sel);
		bad |= bc__buf_printf(&cap, "; %zu occurrences of %zu taxa (%zu straddling, in neither bar). "
			"Solid: the taxon certainly lived in the zone then; tinted: the age ranges of the first and last occurrences allow it. "
			"Tick: %g %% confidence limit on the younger end from the number of horizons (Marshall 1990); none for one horizon. "
			"Arrow: the limit lies beyond the axis. Numbers: shallow | deep occurrences. Chart %s. " FIGURE_CAUTION,
			r->sum.n_used, r->ntaxa, nstr, 100 * r->opts.sel.level, r->chart_name);
		if (bad || !cap.data) {
			bc__buf_free(&cap);
			free(v);
			return oom(err);
		}
		o.caption = cap.data;
	}
	rc = bc_plot_ranges(path, v, r->ntaxa, r->chart, &o, err);
	bc__buf_free(&cap);
	free(v);
	return rc;
}
