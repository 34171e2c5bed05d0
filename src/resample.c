/*
 * resample.c - the shift table under uncertainty and bias: age/depth
 * resampling draws (threaded, per-draw random streams), reference
 * weighting, depth affinity against the sampled background, subsampling to
 * a quota, and taphonomic sensitivity. Binning, zoning and counting are
 * shift.c's (bc_shift__place, bc_shift__zone, bc_shift__count, and
 * bc_shift_compute for the background and the articulated subset); every
 * rule is stated in doc/shift.md, "Uncertainty and bias". The columns,
 * tests, stamp, methods text and taphonomy table are in resample_out.c.
 */
#include "resample.h"

#include "db.h"
#include "stats.h"

#include <errno.h>
#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <unistd.h>

#define MAX_THREADS 64
#define MAX_DRAWS 1000000u

enum { STREAM_DRAWS = BC_RESAMPLE__STREAM_DRAWS, STREAM_REFS = BC_RESAMPLE__STREAM_REFS, STREAM_QUOTA = BC_RESAMPLE__STREAM_QUOTA };

/* struct bc_resample is in resample.h (resample_out.c writes it out). */

static int oom(bc_err *err) { return bc_err_set(err, BC_ENOMEM, "out of memory"); }

/* ------------------------------------------------------------------ */
/* Random numbers                                                       */
/* ------------------------------------------------------------------ */

/* splitmix64's output function (Steele, Lea & Flood 2014), to mix the key. */
static uint64_t mix64(uint64_t z)
{
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
	z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
	return z ^ (z >> 31);
}

#define GOLDEN 0x9e3779b97f4a7c15ULL

void bc_resample__rng_init(bc_rng *r, uint64_t seed, uint64_t stream, uint64_t index)
{
	uint64_t key = mix64(seed + GOLDEN * (stream + 1));
	key = mix64(key ^ (index + 1) * GOLDEN);
	bc_rng__seed(r, key); /* four splitmix64 outputs from the key */
}

#define rng_next bc_resample__next
#define rng_uniform bc_resample__uniform

/* Uniform on 0 .. n-1 for n <= 2^32 by Lemire's (2019) multiply-and-reject
 * method: exact, and a division only in the rare rejection branch. */
static inline uint32_t rng_below32(bc_rng *r, uint32_t n)
{
	uint64_t m = (rng_next(r) >> 32) * (uint64_t)n;
	uint32_t low = (uint32_t)m;
	if (low < n) {
		uint32_t threshold = (0u - n) % n;
		while (low < threshold) {
			m = (rng_next(r) >> 32) * (uint64_t)n;
			low = (uint32_t)m;
		}
	}
	return (uint32_t)(m >> 32);
}

uint64_t bc_resample__below(bc_rng *r, uint64_t n)
{
	if (n <= UINT32_MAX)
		return rng_below32(r, (uint32_t)n);
	/* Reject the lowest (2^64 mod n) values so every residue is equally likely. */
	uint64_t threshold = (0 - n) % n;
	for (;;) {
		uint64_t x = rng_next(r);
		if (x >= threshold)
			return x % n;
	}
}

static int cmp_double(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;
	return (x > y) - (x < y);
}

/* Quantiles (1-level)/2, 0.5, (1+level)/2 of the finite values among
 * v[0], v[stride], ... (n of them); `tmp` holds n doubles. Returns the
 * share of finite values. */
static double summarise(const double *v, size_t n, size_t stride, double level, double *tmp, double *lo, double *mid, double *hi)
{
	size_t m = 0;
	for (size_t i = 0; i < n; i++)
		if (isfinite(v[i * stride]))
			tmp[m++] = v[i * stride];
	qsort(tmp, m, sizeof *tmp, cmp_double);
	*lo = bc_encounter__quantile(tmp, m, (1 - level) / 2);
	*mid = bc_encounter__quantile(tmp, m, 0.5);
	*hi = bc_encounter__quantile(tmp, m, (1 + level) / 2);
	return n ? (double)m / (double)n : NAN;
}

/* ------------------------------------------------------------------ */
/* The draw engine                                                      */
/* ------------------------------------------------------------------ */

/* One occurrence as the draws see it (24 bytes, so a draw streams through
 * little memory). A drawn age is t = older - u * span, u uniform on [0, 1),
 * so t never exceeds older. bin >= 0: fixed (its age range lies in one
 * bin, or ages are not resampled); bin < 0: the age is drawn and k = -bin - 1
 * is the first bin the range overlaps. zone >= 0: the depth is drawn from
 * dmin[zone] + u * dspan[zone]; Z_SHALLOW/Z_DEEP: fixed; Z_STRADDLE:
 * straddling and not resampled (never in frac_deep). */
typedef struct item {
	double older, span;
	int32_t bin;
	int32_t zone;
} item;

enum { Z_SHALLOW = -1, Z_DEEP = -2, Z_STRADDLE = -3 };

/* Items are stored by kind: runs of L = 2..RUN_MAX bins (segment L), then
 * other drawn items, then fixed ones. */
#define RUN_MAX 16

typedef struct engine {
	const bc_draw_spec *sp;
	double split;
	item *it;
	size_t seg[RUN_MAX + 3]; /* seg[L]..seg[L+1]: runs of L bins (L = 2..RUN_MAX); seg[RUN_MAX+1]..seg[RUN_MAX+2]: other drawn */
	size_t nu, ne;      /* drawn items end at nu; all items end at ne */
	double *dmin, *dspan; /* depth ranges of the items whose depth is drawn */
	uint32_t *base;     /* nbins x 2: counts of the fixed items */
	bc_draw_result *out;
} engine;

/* One worker's share (draws first, first + step, ...) and its scratch,
 * allocated before any thread starts so workers never allocate. */
typedef struct worker {
	engine *e;
	uint32_t *cnt, *mult;
	double *sv, *nv, *xv;
	size_t *idx;
} worker;

static inline void count_item(const engine *e, const item *it, size_t b, bc_rng *r, uint32_t *cnt)
{
	int z = -it->zone - 1;
	if (it->zone >= 0) {
		double d = bc_resample__depth(r, e->dmin[it->zone], e->dspan[it->zone]);
		z = bc_shift__zone(d, d, &e->split, 1); /* a point depth never straddles */
	}
	if (z == 0 || z == 1)
		cnt[2 * b + (size_t)z]++;
}

/* Any item: the bin by shift's own point-age rule. */
static inline void draw_item(const engine *e, const item *it, bc_rng *r, uint32_t *cnt)
{
	const bc_draw_spec *sp = e->sp;
	size_t b;
	if (it->bin >= 0) {
		b = (size_t)it->bin;
	} else {
		double t = bc_resample__age(r, it->older, it->span);
		b = bc_shift__point_bin(sp->bins, sp->nbins, t, (size_t)(-(it->bin + 1)));
		if (b == sp->nbins)
			return; /* fell in a gap between bins or outside them */
	}
	count_item(e, it, b, r, cnt);
}

/* A run item: its age range overlaps exactly L contiguous bins k .. k+L-1
 * (each bin's younger bound is the next one's older bound), with
 * older <= bins[k].older and younger above bins[k+L-1].younger by more than
 * rounding. For every t = older - u * span bc_shift__point_bin(t) is then k
 * plus the number of the edges bins[k..k+L-2].younger at or above t (a bin
 * holds its older bound), counted here without a branch on t. The unit
 * test resample_run_fast_path checks the two agree. */
static inline size_t run_bin(const bc_shift__bin *bins, size_t k, size_t L, double t)
{
	size_t b = k;
	for (size_t m = 0; m + 1 < L; m++)
		b += t <= bins[k + m].younger;
	return b;
}

size_t bc_resample__run_bin(const bc_shift__bin *bins, size_t k, size_t L, double t) { return run_bin(bins, k, L, t); }

static inline void draw_run(const engine *e, const item *it, size_t L, bc_rng *r, uint32_t *cnt)
{
	size_t k = (size_t)(-(it->bin + 1));
	double t = bc_resample__age(r, it->older, it->span);
	count_item(e, it, run_bin(e->sp->bins, k, L, t), r, cnt);
}

/* The run length of an age range (2..RUN_MAX), or 0 when it is not a run. */
size_t bc_resample__run_length(const bc_shift__bin *bins, size_t nb, size_t k0, double older, double younger)
{
	if (k0 >= nb || older > bins[k0].older)
		return 0;
	size_t m = k0;
	while (!(bins[m].younger < younger)) {
		if (m + 1 >= nb || bins[m].younger != bins[m + 1].older || m + 1 - k0 >= RUN_MAX)
			return 0;
		m++;
	}
	/* t may fall an ulp or so below younger: keep a margin from the edge */
	if (!(younger - bins[m].younger > 1e-9 * fmax(1.0, fabs(younger))))
		return 0;
	size_t L = m - k0 + 1;
	return L >= 2 ? L : 0;
}

/* Per-draw statistics, computed exactly as shift.c's across-bin tests. */
static void draw_stats(const engine *e, size_t d, const uint32_t *cnt, double *sv, double *nv, double *xv, size_t *idx)
{
	const bc_draw_spec *sp = e->sp;
	bc_draw_result *o = e->out;
	double *frac = &o->frac[d * sp->nbins];
	size_t k = 0;
	double stot = 0, ntot = 0;
	for (size_t b = 0; b < sp->nbins; b++) {
		double m = (double)cnt[2 * b] + (double)cnt[2 * b + 1];
		frac[b] = m > 0 ? (double)cnt[2 * b + 1] / m : NAN;
		if (!(m > 0))
			continue;
		sv[k] = (double)cnt[2 * b + 1];
		nv[k] = m;
		xv[k] = -(sp->bins[b].older + sp->bins[b].younger) / 2;
		idx[k++] = b;
		stot += sv[k - 1];
		ntot += m;
	}
	o->brk[d] = -1;
	o->trend_z[d] = o->trend_p[d] = NAN;
	if (k < 2 || !(stot > 0) || !(stot < ntot))
		return;
	bc_trend tr;
	if (bc_stats__trend(sv, nv, xv, k, &tr) == 0 && isfinite(tr.z)) {
		o->trend_z[d] = tr.z;
		o->trend_p[d] = tr.p;
	}
	size_t at = 0;
	double lr;
	if (bc_stats__breakpoint(sv, nv, k, &at, &lr) == 0 && at >= 1 && at < k)
		o->brk[d] = (int32_t)idx[at];
}

/* One draw over the items, each `mult[j]` times (mult NULL: drawn items once, fixed ones from base). */
static void one_draw(const engine *e, bc_rng *r, const uint32_t *mult, uint32_t *cnt)
{
	size_t nb = e->sp->nbins;
	if (!mult)
		memcpy(cnt, e->base, 2 * nb * sizeof *cnt);
	else
		memset(cnt, 0, 2 * nb * sizeof *cnt);
	if (!mult) {
		for (size_t j = e->seg[2]; j < e->seg[3]; j++)
			draw_run(e, &e->it[j], 2, r, cnt); /* the commonest run, with a constant length */
		for (size_t L = 3; L <= RUN_MAX; L++)
			for (size_t j = e->seg[L]; j < e->seg[L + 1]; j++)
				draw_run(e, &e->it[j], L, r, cnt);
		for (size_t j = e->seg[RUN_MAX + 1]; j < e->nu; j++)
			draw_item(e, &e->it[j], r, cnt);
		return;
	}
	for (size_t L = 2; L <= RUN_MAX; L++)
		for (size_t j = e->seg[L]; j < e->seg[L + 1]; j++)
			for (uint32_t c = 0; c < mult[j]; c++)
				draw_run(e, &e->it[j], L, r, cnt);
	for (size_t j = e->seg[RUN_MAX + 1]; j < e->ne; j++)
		for (uint32_t c = 0; c < mult[j]; c++)
			draw_item(e, &e->it[j], r, cnt);
}

static int online_processors(void);

/* Draw d on the scratch of worker `thread` (bc_resample__parallel). */
static void work(void *ctx, int thread, size_t d)
{
	worker *w = &((worker *)ctx)[thread];
	const engine *e = w->e;
	const bc_draw_spec *sp = e->sp;
	uint32_t *cnt = w->cnt, *mult = w->mult;
	bc_rng r;
	bc_resample__rng_init(&r, sp->seed, STREAM_DRAWS, d);
	if (sp->bootstrap) {
		/* n picks with replacement, kept as multiplicities; the picked
		 * items are then drawn in storage order (same distribution,
		 * and memory is read in sequence rather than at random) */
		memset(mult, 0, e->ne * sizeof *mult);
		for (size_t i = 0; i < e->ne; i++)
			mult[rng_below32(&r, (uint32_t)e->ne)]++;
	}
	one_draw(e, &r, mult, cnt);
	draw_stats(e, d, cnt, w->sv, w->nv, w->xv, w->idx);
}

/* One thread's share of bc_resample__parallel. */
typedef struct share {
	bc_resample__draw_fn fn;
	void *ctx;
	int thread, nt;
	size_t draws;
	pthread_t tid;
	int started;
} share;

static void *share_run(void *arg)
{
	share *sh = arg;
	for (size_t d = (size_t)sh->thread; d < sh->draws; d += (size_t)sh->nt)
		sh->fn(sh->ctx, sh->thread, d);
	return NULL;
}

void bc_resample__parallel(int nt, size_t draws, bc_resample__draw_fn fn, void *ctx)
{
	share sh[MAX_THREADS];
	if (nt < 1)
		nt = 1;
	if (nt > MAX_THREADS)
		nt = MAX_THREADS;
	for (int t = 0; t < nt; t++)
		sh[t] = (share){fn, ctx, t, nt, draws, 0, 0};
	/* Thread t runs draws t, t + nt, ...; every draw writes only its own
	 * slots, so the results do not depend on scheduling. A thread that
	 * cannot be started has its share run here. */
	for (int t = 1; t < nt; t++)
		sh[t].started = pthread_create(&sh[t].tid, NULL, share_run, &sh[t]) == 0;
	share_run(&sh[0]);
	for (int t = 1; t < nt; t++) {
		if (sh[t].started)
			pthread_join(sh[t].tid, NULL);
		else
			share_run(&sh[t]);
	}
}

int bc_resample__thread_count(int threads, size_t draws)
{
	int nt = threads > 0 ? threads : online_processors();
	if (nt > MAX_THREADS)
		nt = MAX_THREADS;
	if ((size_t)nt > draws)
		nt = draws ? (int)draws : 1;
	return nt;
}

static void workers_free(worker *w, int nt)
{
	for (int t = 0; w && t < nt; t++) {
		free(w[t].cnt);
		free(w[t].mult);
		free(w[t].sv);
		free(w[t].nv);
		free(w[t].xv);
		free(w[t].idx);
	}
	free(w);
}

void bc_resample__draws_free(bc_draw_result *r)
{
	if (!r)
		return;
	free(r->frac);
	free(r->brk);
	free(r->trend_z);
	free(r->trend_p);
	memset(r, 0, sizeof *r);
}

static int online_processors(void)
{
	long n = sysconf(_SC_NPROCESSORS_ONLN);
	return n < 1 ? 1 : n > MAX_THREADS ? MAX_THREADS : (int)n;
}

int bc_resample__draws(bc_draw_result *out, const bc_draw_spec *sp, double split, bc_err *err)
{
	engine e;
	worker *w = NULL;
	item *tmp = NULL;
	uint8_t *cat = NULL;
	int rc = BC_OK, nt = 0;
	memset(&e, 0, sizeof e);
	e.sp = sp;
	e.split = split;
	e.out = out;
	memset(out, 0, sizeof *out);
	out->draws = sp->draws;
	out->nbins = sp->nbins;
	size_t nd = sp->draws, nb = sp->nbins, n = sp->n ? sp->n : 1;
	if (sp->n > UINT32_MAX / 2)
		return bc_err_set(err, BC_EUSAGE, "resampling draws: at most %u occurrences", UINT32_MAX / 2);
	out->frac = bc__malloc((nd * nb > 0 ? nd * nb : 1) * sizeof *out->frac);
	out->brk = bc__malloc((nd ? nd : 1) * sizeof *out->brk);
	out->trend_z = bc__malloc((nd ? nd : 1) * sizeof *out->trend_z);
	out->trend_p = bc__malloc((nd ? nd : 1) * sizeof *out->trend_p);
	e.it = bc__malloc(n * sizeof *e.it);
	tmp = bc__malloc(n * sizeof *tmp);
	cat = bc__malloc(n);
	e.dmin = bc__malloc(n * sizeof *e.dmin);
	e.dspan = bc__malloc(n * sizeof *e.dspan);
	e.base = bc__calloc(2 * nb + 1, sizeof *e.base);
	if (!out->frac || !out->brk || !out->trend_z || !out->trend_p || !e.it || !tmp || !cat || !e.dmin || !e.dspan || !e.base) {
		rc = oom(err);
		goto done;
	}
	/* Each occurrence's item and kind: 2..RUN_MAX a run, RUN_MAX + 1 other
	 * drawn, RUN_MAX + 2 fixed, 0 never counted; then a stable counting
	 * sort by kind. Depth ranges are numbered in occurrence order. */
	size_t count[RUN_MAX + 4] = {0}, nd_depth = 0;
	for (size_t i = 0; i < sp->n; i++) {
		const bc_shift__occ *o = &sp->occ[i];
		cat[i] = 0;
		if (sp->span_rule == BC_SPAN_MAX && o->older - o->younger > sp->span_max_myr)
			continue;
		size_t k0 = nb;
		size_t major = bc_shift__place(sp->bins, nb, o->older, o->younger, &k0, NULL, NULL);
		if (major == nb)
			continue; /* overlaps no bin: never counted */
		item it = {o->older, o->older - o->younger, (int32_t)major, Z_SHALLOW};
		size_t L = 0;
		if ((sp->what & BC_RESAMPLE_AGE) && o->older > o->younger) {
			/* fixed when [younger, older] lies inside one bin */
			size_t k = bc_shift__point_bin(sp->bins, nb, o->younger, k0);
			if (!(k < nb && sp->bins[k].older >= o->older)) {
				it.bin = -(int32_t)k0 - 1;
				L = bc_resample__run_length(sp->bins, nb, k0, o->older, o->younger);
			}
		}
		int drawn_depth = o->zone2 == BC_SHIFT__STRADDLE && (sp->what & BC_RESAMPLE_DEPTH);
		if (drawn_depth) {
			it.zone = (int32_t)nd_depth;
			e.dmin[nd_depth] = o->dmin;
			e.dspan[nd_depth++] = o->dmax - o->dmin;
		} else {
			it.zone = o->zone2 == BC_SHIFT__STRADDLE ? Z_STRADDLE : o->zone2 == BC_SHIFT__DEEP ? Z_DEEP : Z_SHALLOW;
		}
		cat[i] = (uint8_t)(L ? L : it.bin < 0 || drawn_depth ? RUN_MAX + 1 : RUN_MAX + 2);
		out->n_pop++;
		out->n_age_drawn += it.bin < 0;
		out->n_depth_drawn += (size_t)drawn_depth;
		tmp[i] = it;
		count[cat[i]]++;
	}
	e.seg[2] = 0;
	for (size_t c = 2; c <= RUN_MAX + 1; c++)
		e.seg[c + 1] = e.seg[c] + count[c];
	e.nu = e.seg[RUN_MAX + 2];
	e.ne = e.nu + count[RUN_MAX + 2];
	{
		size_t pos[RUN_MAX + 3];
		memcpy(pos, e.seg, sizeof pos);
		for (size_t i = 0; i < sp->n; i++) {
			if (!cat[i])
				continue;
			e.it[pos[cat[i]]++] = tmp[i];
			if (cat[i] == RUN_MAX + 2 && tmp[i].zone != Z_STRADDLE)
				e.base[2 * (size_t)tmp[i].bin + (size_t)(-tmp[i].zone - 1)]++;
		}
	}
	free(tmp);
	tmp = NULL;
	nt = bc_resample__thread_count(sp->threads, nd);
	w = bc__calloc((size_t)nt, sizeof *w);
	if (!w) {
		rc = oom(err);
		goto done;
	}
	for (int t = 0; t < nt; t++) {
		worker *x = &w[t];
		x->e = &e;
		x->cnt = bc__malloc(2 * nb * sizeof *x->cnt + 1);
		x->mult = sp->bootstrap ? bc__malloc((e.ne ? e.ne : 1) * sizeof *x->mult) : NULL;
		x->sv = bc__malloc(nb * sizeof *x->sv + 1);
		x->nv = bc__malloc(nb * sizeof *x->nv + 1);
		x->xv = bc__malloc(nb * sizeof *x->xv + 1);
		x->idx = bc__malloc(nb * sizeof *x->idx + 1);
		if (!x->cnt || (sp->bootstrap && !x->mult) || !x->sv || !x->nv || !x->xv || !x->idx) {
			rc = oom(err);
			goto done;
		}
	}
	bc_resample__parallel(nt, nd, work, w);
	out->threads_used = nt;
done:
	workers_free(w, nt);
	free(tmp);
	free(cat);
	free(e.it);
	free(e.dmin);
	free(e.dspan);
	free(e.base);
	if (rc)
		bc_resample__draws_free(out);
	return rc;
}

/* ------------------------------------------------------------------ */
/* Depth affinity                                                       */
/* ------------------------------------------------------------------ */

void bc_resample__affinity(bc_affinity *out, const double *k, const double *n, const double *K, const double *N,
			   size_t nb, int pooled, double alpha)
{
	double sk = 0, sn = 0, sK = 0, sN = 0, w = 0;
	for (size_t b = 0; b < nb; b++) {
		double kb = round(k[b]), nbv = round(n[b]), Kb = round(K[b]), Nb = round(N[b]);
		if (!(nbv > 0) || !(Nb > 0))
			continue;
		sk += kb;
		sn += nbv;
		sK += Kb;
		sN += Nb;
		w += nbv * (Kb / Nb);
	}
	out->k = sk;
	out->n = sn;
	out->p0 = out->expected = out->p_deep = out->p_shallow = NAN;
	out->verdict = "none";
	if (!(sn > 0))
		return;
	out->p0 = pooled ? sK / sN : w / sn;
	out->expected = sn * out->p0;
	out->p_deep = bc_stats__binom_sf((long)sk, (long)sn, out->p0);
	out->p_shallow = bc_stats__binom_cdf((long)sk, (long)sn, out->p0);
	if (out->p_deep <= alpha)
		out->verdict = "deep";
	else if (out->p_shallow <= alpha)
		out->verdict = "shallow";
}

/* ------------------------------------------------------------------ */
/* Options                                                              */
/* ------------------------------------------------------------------ */

static int parse_count(const char *s, unsigned long long max, unsigned long long *out)
{
	char *end;
	if (!*s || *s == '-' || *s == '+' || *s == ' ')
		return -1;
	errno = 0;
	unsigned long long v = strtoull(s, &end, 10);
	if (*end || errno || v > max)
		return -1;
	*out = v;
	return 0;
}

static int parse_flag(const char *v)
{
	if (!strcmp(v, "1") || !strcasecmp(v, "yes") || !strcasecmp(v, "true") || !strcasecmp(v, "on"))
		return 1;
	if (!strcmp(v, "0") || !strcasecmp(v, "no") || !strcasecmp(v, "false") || !strcasecmp(v, "off"))
		return 0;
	return -1;
}

int bc_resample__option_set(bc_shift_options *o, const char *name, const char *value, bc_err *err)
{
	unsigned long long v;
	if (!strcmp(name, "draws")) {
		if (parse_count(value, MAX_DRAWS, &v) || v == 0)
			return bc_err_set(err, BC_EUSAGE, "--draws: '%s' is not a number of draws from 1 to %u", value, MAX_DRAWS);
		o->draws = (size_t)v;
		return BC_OK;
	}
	if (!strcmp(name, "seed")) {
		if (parse_count(value, UINT64_MAX, &v))
			return bc_err_set(err, BC_EUSAGE, "--seed: '%s' is not a whole number from 0 to 18446744073709551615", value);
		o->seed = (uint64_t)v;
		return BC_OK;
	}
	if (!strcmp(name, "threads")) {
		if (parse_count(value, MAX_THREADS, &v))
			return bc_err_set(err, BC_EUSAGE, "--threads: '%s' is not a number of threads from 0 (one per processor) to %d", value, MAX_THREADS);
		o->threads = (int)v;
		return BC_OK;
	}
	if (!strcmp(name, "resample")) {
		unsigned what = 0;
		if (!strcmp(value, "none"))
			what = 0;
		else if (!strcmp(value, "age"))
			what = BC_RESAMPLE_AGE;
		else if (!strcmp(value, "depth"))
			what = BC_RESAMPLE_DEPTH;
		else if (!strcmp(value, "age,depth") || !strcmp(value, "depth,age"))
			what = BC_RESAMPLE_AGE | BC_RESAMPLE_DEPTH;
		else
			return bc_err_set(err, BC_EUSAGE, "--resample: '%s' is not age,depth, age, depth or none", value);
		o->resample = what;
		return BC_OK;
	}
	if (!strcmp(name, "background")) {
		if (!strcmp(value, "binned"))
			o->background = BC_BACKGROUND_BINNED;
		else if (!strcmp(value, "pooled"))
			o->background = BC_BACKGROUND_POOLED;
		else if (!strcmp(value, "none"))
			o->background = BC_BACKGROUND_NONE;
		else
			return bc_err_set(err, BC_EUSAGE, "--background: '%s' is not binned or pooled", value);
		return BC_OK;
	}
	if (!strcmp(name, "quota")) {
		if (parse_count(value, 100000000ULL, &v) || v == 0)
			return bc_err_set(err, BC_EUSAGE, "--quota: '%s' is not a positive number of occurrences", value);
		o->quota = (size_t)v;
		return BC_OK;
	}
	static const char *const flags[] = {"bootstrap", "weight-references", "background-with-focal", "taphonomy"};
	for (size_t i = 0; i < sizeof flags / sizeof flags[0]; i++) {
		if (strcmp(name, flags[i]) != 0)
			continue;
		int f = parse_flag(value);
		if (f < 0)
			return bc_err_set(err, BC_EUSAGE, "--%s: '%s' is not yes or no", name, value);
		if (i == 0)
			o->bootstrap = f;
		else if (i == 1)
			o->weight_references = f;
		else if (i == 2)
			o->background_with_focal = f;
		else
			o->taphonomy = f;
		return BC_OK;
	}
	return 1;
}

int bc_resample__wanted(const bc_shift_options *o)
{
	return o->draws || o->weight_references || o->background || o->quota || o->taphonomy;
}

int bc_resample__check(const bc_shift_options *o, bc_err *err)
{
	if (o->bootstrap && !o->draws)
		return bc_err_set(err, BC_EUSAGE, "--bootstrap: needs --draws N (the number of bootstrap draws)");
	if (o->background_with_focal && !o->background)
		return bc_err_set(err, BC_EUSAGE, "--background-with-focal: needs --background binned or --background pooled");
	if (o->taphonomy && o->preservation)
		return bc_err_set(err, BC_EUSAGE, "--taphonomy compares articulated material with all preservation; it cannot be combined with --preservation");
	if (o->draws > MAX_DRAWS)
		return bc_err_set(err, BC_EUSAGE, "--draws: at most %u", MAX_DRAWS);
	if (o->resample & ~(unsigned)(BC_RESAMPLE_AGE | BC_RESAMPLE_DEPTH))
		return bc_err_set(err, BC_EUSAGE, "--resample: unknown flags");
	return BC_OK;
}

/* ------------------------------------------------------------------ */
/* The parts                                                            */
/* ------------------------------------------------------------------ */

static size_t replicates(const bc_shift_options *o) { return o->draws ? o->draws : BC_SHIFT_DEFAULT_REPLICATES; }

static int run_draws(bc_shift *s, bc_err *err)
{
	struct bc_resample *rs = s->rs;
	const bc_shift_options *o = &s->opts;
	bc_draw_spec sp = {s->occ, s->nocc, s->bins, s->nbins, (int)o->span, o->span_max_myr, o->resample, o->bootstrap,
		o->draws, o->seed, o->threads};
	int rc = bc_resample__draws(&rs->dr, &sp, o->zones[0], err);
	if (rc)
		return rc;
	rs->has_draws = 1;
	rs->n_pop = rs->dr.n_pop;
	rs->n_age_drawn = rs->dr.n_age_drawn;
	rs->n_depth_drawn = rs->dr.n_depth_drawn;
	size_t nd = o->draws, nb = s->nbins;
	double *tmp = bc__malloc((nd ? nd : 1) * sizeof *tmp);
	size_t *hist = bc__calloc(nb + 1, sizeof *hist);
	if (!tmp || !hist) {
		free(tmp);
		free(hist);
		return oom(err);
	}
	for (size_t b = 0; b < nb; b++) {
		bc_shift_bin *x = &s->out[b];
		x->has_draws = 1;
		x->draw_defined = summarise(&rs->dr.frac[b], nd, nb, o->level, tmp, &x->draw_lo, &x->draw_mid, &x->draw_hi);
	}
	for (size_t d = 0; d < nd; d++)
		if (rs->dr.brk[d] >= 0)
			hist[rs->dr.brk[d]]++;
	size_t mode = nb;
	for (size_t b = 0; b < nb; b++) {
		s->out[b].draw_break_share = (double)hist[b] / (double)nd;
		if (hist[b] && (mode == nb || hist[b] > hist[mode]))
			mode = b; /* ties: the older boundary */
	}
	bc_shift_tests *t = &s->tests;
	t->n_draws = nd;
	summarise(rs->dr.trend_z, nd, 1, o->level, tmp, &t->draw_trend_z_lo, &t->draw_trend_z_mid, &t->draw_trend_z_hi);
	size_t sig = 0;
	for (size_t d = 0; d < nd; d++)
		sig += rs->dr.trend_p[d] < 1 - o->level;
	t->draw_trend_sig_share = (double)sig / (double)nd;
	if (mode < nb && mode > 0) {
		t->draw_break_mode_share = (double)hist[mode] / (double)nd;
		t->draw_break_after = s->out[mode].name;
		/* name the nearest older bin with data, as the observed breakpoint does */
		size_t before = mode - 1;
		while (before > 0 && !(s->out[before].n_shallow + s->out[before].n_deep > 0))
			before--;
		t->draw_break_before = s->out[before].name;
	}
	free(tmp);
	free(hist);
	return BC_OK;
}

/* Reference weighting: in each bin every reference present (and one unit
 * for all occurrences without a reference) weighs 1, shared equally by its
 * shallow and deep occurrences there; so the weighted share is the mean of
 * the units' own deep shares. Interval: bootstrap over units (all bins at
 * once, so the dependence between bins through shared references stays). */
typedef struct refentry {
	uint32_t unit, bin;
	double share;
} refentry;

static int run_refw(bc_shift *s, bc_err *err)
{
	struct bc_resample *rs = s->rs;
	const bc_shift_options *o = &s->opts;
	size_t nb = s->nbins, U = s->nref + 1, stride = bc_shift__stride(0), nrep = replicates(o);
	size_t *off = bc__calloc(U + 1, sizeof *off);
	bc_shift__occ *g = bc__malloc((s->nocc ? s->nocc : 1) * sizeof *g);
	double *cnt = bc__malloc(nb * stride * sizeof *cnt);
	refentry *ent = NULL;
	size_t nent = 0, cap = 0;
	double *num = bc__calloc(nb, sizeof *num), *den = bc__calloc(nb, sizeof *den);
	double *rep = NULL, *tmp = NULL;
	uint32_t *mult = bc__calloc(U, sizeof *mult);
	int rc = BC_OK;
	if (!off || !g || !cnt || !num || !den || !mult) {
		rc = oom(err);
		goto done;
	}
	/* group the occurrences by unit (counting sort, stable) */
	for (size_t i = 0; i < s->nocc; i++)
		off[(s->occ[i].ref >= 0 ? (size_t)s->occ[i].ref : s->nref) + 1]++;
	for (size_t u = 0; u < U; u++)
		off[u + 1] += off[u];
	{
		size_t *pos = bc__malloc(U * sizeof *pos);
		if (!pos) {
			rc = oom(err);
			goto done;
		}
		memcpy(pos, off, U * sizeof *pos);
		for (size_t i = 0; i < s->nocc; i++)
			g[pos[s->occ[i].ref >= 0 ? (size_t)s->occ[i].ref : s->nref]++] = s->occ[i];
		free(pos);
	}
	/* each unit's counts per bin, by shift's own counting and span rule */
	for (size_t u = 0; u < U; u++) {
		if (off[u + 1] == off[u])
			continue;
		bc_shift__tally tally;
		rc = bc_shift__count(cnt, NULL, NULL, &tally, g + off[u], off[u + 1] - off[u], s->bins, nb, (int)o->span,
			o->span_max_myr, 0, 0, 0, err);
		if (rc)
			goto done;
		int any = 0;
		for (size_t b = 0; b < nb; b++) {
			double sh = cnt[b * stride + BC_SHIFT__C_SHALLOW], dp = cnt[b * stride + BC_SHIFT__C_DEEP];
			if (!(sh + dp > 0))
				continue;
			refentry *p = bc__grow(ent, nent, &cap, sizeof *p, 1024);
			if (!p) {
				rc = oom(err);
				goto done;
			}
			ent = p;
			ent[nent++] = (refentry){(uint32_t)u, (uint32_t)b, dp / (sh + dp)};
			any = 1;
		}
		rs->n_units += (size_t)any;
	}
	for (size_t e = 0; e < nent; e++) {
		num[ent[e].bin] += ent[e].share;
		den[ent[e].bin] += 1;
	}
	for (size_t b = 0; b < nb; b++) {
		s->out[b].n_ref_units = den[b];
		s->out[b].refw_frac_deep = den[b] > 0 ? num[b] / den[b] : NAN;
	}
	rep = bc__malloc(nrep * nb * sizeof *rep);
	tmp = bc__malloc(nrep * sizeof *tmp);
	if (!rep || !tmp) {
		rc = oom(err);
		goto done;
	}
	/* the units that occur at all are resampled; empty units never weigh */
	size_t *live = bc__malloc((U ? U : 1) * sizeof *live), nlive = 0;
	if (!live) {
		rc = oom(err);
		goto done;
	}
	for (size_t u = 0; u < U; u++)
		if (off[u + 1] > off[u])
			live[nlive++] = u;
	for (size_t r = 0; r < nrep; r++) {
		bc_rng g2;
		bc_resample__rng_init(&g2, o->seed, STREAM_REFS, r);
		memset(mult, 0, U * sizeof *mult);
		for (size_t i = 0; i < nlive; i++)
			mult[live[bc_resample__below(&g2, nlive)]]++;
		memset(num, 0, nb * sizeof *num);
		memset(den, 0, nb * sizeof *den);
		for (size_t e = 0; e < nent; e++) {
			double c = mult[ent[e].unit];
			num[ent[e].bin] += c * ent[e].share;
			den[ent[e].bin] += c;
		}
		for (size_t b = 0; b < nb; b++)
			rep[r * nb + b] = den[b] > 0 ? num[b] / den[b] : NAN;
	}
	free(live);
	for (size_t b = 0; b < nb; b++) {
		double mid;
		summarise(&rep[b], nrep, nb, o->level, tmp, &s->out[b].refw_lo, &mid, &s->out[b].refw_hi);
	}
	rs->has_refw = 1;
	rs->replicates = nrep;
done:
	free(off);
	free(g);
	free(cnt);
	free(ent);
	free(num);
	free(den);
	free(rep);
	free(tmp);
	free(mult);
	return rc;
}

/* Subsampling: `quota` of a bin's shallow + deep occurrences (rounded
 * counts) drawn without replacement, `nrep` times; bins with fewer stay NA. */
static int run_quota(bc_shift *s, bc_err *err)
{
	const bc_shift_options *o = &s->opts;
	size_t nb = s->nbins, nrep = replicates(o);
	double *rep = bc__malloc(nrep * nb * sizeof *rep), *tmp = bc__malloc(nrep * sizeof *tmp);
	if (!rep || !tmp) {
		free(rep);
		free(tmp);
		return oom(err);
	}
	for (size_t r = 0; r < nrep; r++) {
		bc_rng g;
		bc_resample__rng_init(&g, o->seed, STREAM_QUOTA, r);
		for (size_t b = 0; b < nb; b++) {
			uint64_t dp = (uint64_t)llround(s->out[b].n_deep), m = dp + (uint64_t)llround(s->out[b].n_shallow);
			if (m < o->quota) {
				rep[r * nb + b] = NAN;
				continue;
			}
			uint64_t k = 0;
			for (size_t j = 0; j < o->quota; j++, m--)
				if (bc_resample__below(&g, m) < dp) {
					k++;
					dp--;
				}
			rep[r * nb + b] = (double)k / (double)o->quota;
		}
	}
	for (size_t b = 0; b < nb; b++)
		summarise(&rep[b], nrep, nb, o->level, tmp, &s->out[b].quota_lo, &s->out[b].quota_mid, &s->out[b].quota_hi);
	s->rs->has_quota = 1;
	s->rs->replicates = nrep;
	free(rep);
	free(tmp);
	return BC_OK;
}

/* A plain table of a subset of the same data: same bins, zones and rules,
 * no uncertainty options. An empty subset gives *out = NULL and `note`. */
static int subset(bc_shift **out, bc_shift *s, bc_db *db, const bc_chart *chart, int clear_selection,
		  const char *preservation, char *note, size_t notelen, bc_err *err)
{
	bc_shift_options o = s->opts;
	o.chart = chart;
	o.draws = 0;
	o.bootstrap = 0;
	o.weight_references = 0;
	o.background = BC_BACKGROUND_NONE;
	o.background_with_focal = 0;
	o.quota = 0;
	o.taphonomy = 0;
	if (clear_selection)
		o.group = o.taxon = o.preservation = NULL;
	if (preservation)
		o.preservation = preservation;
	bc_err e = {0};
	*out = NULL;
	int rc = bc_shift_compute(out, db, &o, &e);
	if (rc == BC_EINVALID) {
		snprintf(note, notelen, "%s", e.msg);
		return BC_OK;
	}
	if (rc && err)
		*err = e;
	return rc;
}

const bc_shift_bin *bc_resample__same_bin(const bc_shift *t, const bc_shift_bin *b)
{
	if (!t)
		return NULL;
	for (size_t j = 0; j < t->nbins; j++)
		if (t->out[j].older_ma == b->older_ma && t->out[j].younger_ma == b->younger_ma)
			return &t->out[j];
	return NULL;
}

static int run_background(bc_shift *s, bc_db *db, const bc_chart *chart, bc_err *err)
{
	const bc_shift_options *o = &s->opts;
	bc_shift *bg = NULL;
	char note[1100] = "";
	int rc = subset(&bg, s, db, chart, 1, NULL, note, sizeof note, err);
	if (rc)
		return rc;
	size_t nb = s->nbins;
	double *k = bc__calloc(nb + 1, sizeof *k), *n = bc__calloc(nb + 1, sizeof *n);
	double *K = bc__calloc(nb + 1, sizeof *K), *N = bc__calloc(nb + 1, sizeof *N);
	if (!k || !n || !K || !N) {
		rc = oom(err);
		goto done;
	}
	s->rs->bg_selected = bg ? bg->sum.n_used : 0;
	for (size_t b = 0; b < nb; b++) {
		bc_shift_bin *x = &s->out[b];
		const bc_shift_bin *y = bc_resample__same_bin(bg, x);
		double Kb = y ? y->n_deep : 0, Nb = y ? y->n_deep + y->n_shallow : 0;
		if (!o->background_with_focal) {
			Kb -= x->n_deep;
			Nb -= x->n_deep + x->n_shallow;
		}
		/* guard against rounding with --span split */
		Kb = fmax(0, Kb);
		Nb = fmax(Kb, Nb);
		x->bg_n = Nb;
		x->bg_deep = Kb;
		x->bg_frac_deep = Nb > 0 ? Kb / Nb : NAN;
		k[b] = x->n_deep;
		n[b] = x->n_deep + x->n_shallow;
		K[b] = Kb;
		N[b] = Nb;
		/* per bin: the binned and pooled forms agree */
		bc_affinity a;
		bc_resample__affinity(&a, &k[b], &n[b], &K[b], &N[b], 1, 0, 1 - o->level);
		x->affinity_p_deep = a.p_deep;
		x->affinity_p_shallow = a.p_shallow;
	}
	bc_affinity a;
	bc_resample__affinity(&a, k, n, K, N, nb, o->background == BC_BACKGROUND_POOLED, 1 - o->level);
	bc_shift_tests *t = &s->tests;
	t->aff_k = a.k;
	t->aff_n = a.n;
	t->aff_p0 = a.p0;
	t->aff_expected = a.expected;
	t->aff_p_deep = a.p_deep;
	t->aff_p_shallow = a.p_shallow;
	t->aff_verdict = a.verdict;
	s->rs->has_bg = 1;
done:
	free(k);
	free(n);
	free(K);
	free(N);
	bc_shift_free(bg);
	return rc;
}

/* The transport flag (doc/shift.md): the full-data trend is significant
 * (two-sided Cochran-Armitage p < 1 - level) and articulated material alone
 * does not support it, i.e. NOT (its trend z has the same sign AND (it is
 * significant itself OR its logistic slope has the same sign and at least
 * half the full-data slope)). */
static void taphonomy_verdict(bc_shift *s)
{
	bc_shift_tests *t = &s->tests;
	const bc_shift *a = s->rs->art;
	double alpha = 1 - s->opts.level;
	t->art_bins_tested = a ? a->tests.n_bins_tested : 0;
	t->art_trend_z = a ? a->tests.trend_z : NAN;
	t->art_trend_p = a ? a->tests.trend_p : NAN;
	t->art_logit_slope = a ? a->tests.logit_slope : NAN;
	t->art_logit_p = a ? a->tests.logit_p : NAN;
	t->transport_flag = 0;
	if (!(t->trend_p < alpha)) {
		t->taphonomy_verdict = "no significant trend in the full data: nothing for transport to explain";
		return;
	}
	int same_sign = isfinite(t->art_trend_z) && (t->art_trend_z > 0) == (t->trend_z > 0) && t->art_trend_z != 0;
	int art_sig = t->art_trend_p < alpha;
	int half = isfinite(t->art_logit_slope) && isfinite(t->logit_slope) && t->art_logit_slope * t->logit_slope > 0 &&
		   fabs(t->art_logit_slope) >= 0.5 * fabs(t->logit_slope);
	if (same_sign && art_sig) {
		t->taphonomy_verdict = "the trend holds in articulated material alone";
	} else if (same_sign && half) {
		t->taphonomy_verdict = "articulated material alone shows the same direction and at least half the slope, but not significantly (fewer occurrences); not flagged";
	} else {
		t->transport_flag = 1;
		t->taphonomy_verdict = a ? "FLAG: the shift is carried by disarticulated or unclassified material; articulated material alone does not show it (loose ossicles may have been transported)"
					 : "FLAG: there is no articulated material to confirm the shift; it rests on disarticulated or unclassified material (loose ossicles may have been transported)";
	}
}

static int run_taphonomy(bc_shift *s, bc_db *db, const bc_chart *chart, bc_err *err)
{
	struct bc_resample *rs = s->rs;
	int rc = subset(&rs->art, s, db, chart, 0, "articulated", rs->art_note, sizeof rs->art_note, err);
	if (rc == BC_OK)
		rc = subset(&rs->dis, s, db, chart, 0, "disarticulated", rs->dis_note, sizeof rs->dis_note, err);
	if (rc)
		return rc;
	for (size_t b = 0; b < s->nbins; b++) {
		bc_shift_bin *x = &s->out[b];
		const bc_shift_bin *y = bc_resample__same_bin(rs->art, x);
		x->art_n = y ? y->n_shallow + y->n_deep : 0;
		x->art_frac_deep = y ? y->frac_deep : NAN;
		x->art_lo = y ? y->frac_deep_lo : NAN;
		x->art_hi = y ? y->frac_deep_hi : NAN;
	}
	taphonomy_verdict(s);
	rs->has_taph = 1;
	return BC_OK;
}

void bc_resample__free(struct bc_resample *rs)
{
	if (!rs)
		return;
	bc_resample__draws_free(&rs->dr);
	bc_shift_free(rs->art);
	bc_shift_free(rs->dis);
	free(rs);
}

int bc_resample__run(bc_shift *s, bc_db *db, const bc_chart *chart, bc_err *err)
{
	const bc_shift_options *o = &s->opts;
	for (size_t b = 0; b < s->nbins; b++) {
		bc_shift_bin *x = &s->out[b];
		x->has_draws = 0;
		x->draw_lo = x->draw_mid = x->draw_hi = x->draw_defined = x->draw_break_share = NAN;
		x->refw_frac_deep = x->refw_lo = x->refw_hi = x->n_ref_units = NAN;
		x->bg_n = x->bg_deep = x->bg_frac_deep = x->affinity_p_deep = x->affinity_p_shallow = NAN;
		x->quota_lo = x->quota_mid = x->quota_hi = NAN;
		x->art_n = x->art_frac_deep = x->art_lo = x->art_hi = NAN;
	}
	bc_shift_tests *t = &s->tests;
	t->n_draws = 0;
	t->draw_trend_z_lo = t->draw_trend_z_mid = t->draw_trend_z_hi = t->draw_trend_sig_share = t->draw_break_mode_share = NAN;
	t->draw_break_before = t->draw_break_after = NULL;
	t->aff_k = t->aff_n = t->aff_p0 = t->aff_expected = t->aff_p_deep = t->aff_p_shallow = NAN;
	t->aff_verdict = NULL;
	t->art_bins_tested = 0;
	t->art_trend_z = t->art_trend_p = t->art_logit_slope = t->art_logit_p = NAN;
	t->transport_flag = 0;
	t->taphonomy_verdict = NULL;
	if (!bc_resample__wanted(o))
		return BC_OK;
	if (!(s->rs = bc__calloc(1, sizeof *s->rs)))
		return oom(err);
	int rc = BC_OK;
	if (o->draws && (o->resample || o->bootstrap))
		rc = run_draws(s, err);
	if (rc == BC_OK && o->weight_references)
		rc = run_refw(s, err);
	if (rc == BC_OK && o->quota)
		rc = run_quota(s, err);
	if (rc == BC_OK && o->background)
		rc = run_background(s, db, chart, err);
	if (rc == BC_OK && o->taphonomy)
		rc = run_taphonomy(s, db, chart, err);
	return rc;
}
