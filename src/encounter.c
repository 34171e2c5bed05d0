/*
 * encounter.c - injury incidence and the interval between predator
 * encounters from the prevalence of regenerating arms, with intervals
 * propagated by a seeded Monte Carlo. Pure computations: no database.
 */
#include "encounter.h"
#include "stats.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* ---------------------------------------------------------------- */
/* Pseudo-random numbers                                             */
/* ---------------------------------------------------------------- */

static uint64_t rng_splitmix64(uint64_t *x)
{
	uint64_t z = (*x += 0x9e3779b97f4a7c15ULL);
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
	z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
	return z ^ (z >> 31);
}

void bc_rng__seed(bc_rng *r, uint64_t seed)
{
	uint64_t x = seed;
	for (int i = 0; i < 4; i++)
		r->s[i] = rng_splitmix64(&x);
}

uint64_t bc_rng__next(bc_rng *r) { return bc_rng__step(r); }

double bc_rng__uniform(bc_rng *r)
{
	return (double)(bc_rng__next(r) >> 11) * 0x1.0p-53;
}

double bc_rng__normal(bc_rng *r)
{
	double u1 = 1.0 - bc_rng__uniform(r); /* (0, 1]: log is finite */
	double u2 = bc_rng__uniform(r);
	return sqrt(-2.0 * log(u1)) * cos(2.0 * M_PI * u2);
}

double bc_rng__exponential(bc_rng *r, double rate)
{
	return -log(1.0 - bc_rng__uniform(r)) / rate;
}

double bc_rng__gamma(bc_rng *r, double shape)
{
	if (shape < 1.0) {
		/* Gamma(a) = Gamma(a + 1) U^(1/a) (Marsaglia & Tsang 2000, sec. 6). */
		double u = 1.0 - bc_rng__uniform(r);
		return bc_rng__gamma(r, shape + 1.0) * pow(u, 1.0 / shape);
	}
	double d = shape - 1.0 / 3.0, c = 1.0 / sqrt(9.0 * d);
	for (;;) {
		double x = bc_rng__normal(r), v = 1.0 + c * x;
		if (v <= 0.0)
			continue;
		v = v * v * v;
		double u = 1.0 - bc_rng__uniform(r);
		if (u < 1.0 - 0.0331 * x * x * x * x)
			return d * v;
		if (log(u) < 0.5 * x * x + d * (1.0 - v + log(v)))
			return d * v;
	}
}

double bc_rng__beta(bc_rng *r, double a, double b)
{
	double x = bc_rng__gamma(r, a), y = bc_rng__gamma(r, b);
	if (x + y <= 0.0) /* both underflowed (tiny shapes): fall back to the mean */
		return a / (a + b);
	return x / (x + y);
}

long bc_rng__binomial(bc_rng *r, long n, double p)
{
	long k = 0;
	for (long i = 0; i < n; i++)
		if (bc_rng__uniform(r) < p)
			k++;
	return k;
}

double bc_encounter__quantile(const double *sorted, size_t n, double q)
{
	if (n == 0)
		return NAN;
	double h = (double)(n - 1) * q;
	size_t lo = (size_t)floor(h);
	if (lo >= n - 1)
		return sorted[n - 1];
	double w = h - (double)lo;
	if (isinf(sorted[lo]) || isinf(sorted[lo + 1]))
		return w == 0.0 ? sorted[lo] : sorted[lo + 1];
	return sorted[lo] + w * (sorted[lo + 1] - sorted[lo]);
}

/* ---------------------------------------------------------------- */
/* Prevalence -> incidence                                           */
/* ---------------------------------------------------------------- */

const char *bc_incidence_model_name(bc_incidence_model model)
{
	return model == BC_INCIDENCE_POISSON ? "poisson" : "steady-state";
}

int bc_incidence_model_parse(bc_incidence_model *out, const char *name)
{
	if (strcmp(name, "steady-state") == 0)
		*out = BC_INCIDENCE_STEADY_STATE;
	else if (strcmp(name, "poisson") == 0)
		*out = BC_INCIDENCE_POISSON;
	else
		return BC_EUSAGE;
	return BC_OK;
}

double bc_encounter_incidence(double p, double d, bc_incidence_model model)
{
	if (!(p >= 0.0 && p <= 1.0) || !(d > 0.0) || isinf(d))
		return NAN;
	if (p == 1.0)
		return INFINITY;
	if (model == BC_INCIDENCE_POISSON)
		return -log1p(-p) / d;
	return p / ((1.0 - p) * d);
}

double bc_encounter_per_capita(double p, double d)
{
	if (!(p >= 0.0 && p <= 1.0) || !(d > 0.0) || isinf(d))
		return NAN;
	return p / d;
}

/* ---------------------------------------------------------------- */
/* Groups with Monte Carlo intervals                                 */
/* ---------------------------------------------------------------- */

static int cmp_double(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;
	return (x > y) - (x < y);
}

static void group_clear(bc_encounter_group *g)
{
	g->prevalence = g->prevalence_lo = g->prevalence_hi = NAN;
	g->duration = NAN;
	g->incidence = g->incidence_lo = g->incidence_hi = NAN;
	g->per_capita = NAN;
	g->interval = g->interval_lo = g->interval_hi = NAN;
	g->ratio = g->ratio_lo = g->ratio_hi = NAN;
}

static double safe_inverse(double v)
{
	if (isnan(v))
		return NAN;
	if (v == 0.0)
		return INFINITY;
	return 1.0 / v;
}

/* Percentile limits of `v` (sorted in place), with the limits the data
 * cannot set (see bc_encounter_compute) overridden by the caller. */
static void percentiles(double *v, size_t n, double level, double *lo, double *hi)
{
	qsort(v, n, sizeof *v, cmp_double);
	*lo = bc_encounter__quantile(v, n, (1.0 - level) / 2.0);
	*hi = bc_encounter__quantile(v, n, (1.0 + level) / 2.0);
}

static int validate(const bc_encounter_group *g, size_t i, bc_err *err)
{
	if (!(g->n >= 0.0) || !(g->x >= 0.0) || g->x > g->n || isinf(g->n))
		return bc_err_set(err, BC_EINVALID, "group %zu: regenerating count %g of %g examined is not a count between 0 and n", i + 1, g->x, g->n);
	if (g->n > 0.0 && (!(g->duration_min > 0.0) || !(g->duration_max >= g->duration_min) || isinf(g->duration_max)))
		return bc_err_set(err, BC_EINVALID, "group %zu: duration range %g-%g days is not positive and ordered", i + 1, g->duration_min, g->duration_max);
	return BC_OK;
}

int bc_encounter_compute(bc_encounter_group *groups, size_t k, size_t ref,
			 const bc_encounter_mc *mc, bc_err *err)
{
	double *draws = NULL, *work = NULL;
	int rc = BC_OK;
	if (!mc || mc->draws < 0 || !(mc->level > 0.0 && mc->level < 1.0))
		return bc_err_set(err, BC_EUSAGE, "Monte Carlo options: draws must be >= 0 and the level between 0 and 1");
	if (k > 0 && ref >= k)
		return bc_err_set(err, BC_EUSAGE, "reference group %zu does not exist (%zu groups)", ref + 1, k);
	for (size_t i = 0; i < k; i++)
		if ((rc = validate(&groups[i], i, err)) != BC_OK)
			return rc;

	/* Point estimates. */
	for (size_t i = 0; i < k; i++) {
		bc_encounter_group *g = &groups[i];
		group_clear(g);
		if (g->n <= 0.0)
			continue;
		g->prevalence = g->x / g->n;
		bc_stats__wilson(g->x, g->n, mc->level, &g->prevalence_lo, &g->prevalence_hi);
		g->duration = 0.5 * (g->duration_min + g->duration_max);
		g->incidence = bc_encounter_incidence(g->prevalence, g->duration, mc->model);
		g->per_capita = bc_encounter_per_capita(g->prevalence, g->duration);
		g->interval = safe_inverse(g->incidence);
	}
	for (size_t i = 0; i < k; i++)
		if (groups[ref].n > 0.0 && groups[i].n > 0.0)
			groups[i].ratio = i == ref ? 1.0 : groups[i].incidence / groups[ref].incidence;
	if (mc->draws == 0 || k == 0)
		return BC_OK;

	/* Draws: one row of k incidences per draw, stored group-major. */
	size_t nd = (size_t)mc->draws;
	if (nd > ((size_t)-1) / sizeof(double) / k) {
		return bc_err_set(err, BC_ENOMEM, "out of memory (%zu draws of %zu groups)", nd, k);
	}
	draws = bc__malloc(nd * k * sizeof *draws);
	work = bc__malloc(nd * sizeof *work);
	if (!draws || !work) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory (%zu Monte Carlo draws)", nd);
		goto done;
	}
	bc_rng rng;
	bc_rng__seed(&rng, mc->seed);
	for (size_t d = 0; d < nd; d++) {
		double u_shared = bc_rng__uniform(&rng);
		for (size_t i = 0; i < k; i++) {
			const bc_encounter_group *g = &groups[i];
			/* Always consume the same numbers per group, so one group's
			 * draws do not depend on whether another has data. */
			double u = mc->shared_duration ? u_shared : bc_rng__uniform(&rng);
			double p = bc_rng__beta(&rng, g->x + 0.5, g->n - g->x + 0.5);
			if (g->n <= 0.0) {
				draws[i * nd + d] = NAN;
				continue;
			}
			double dur = g->duration_min + u * (g->duration_max - g->duration_min);
			draws[i * nd + d] = bc_encounter_incidence(p, dur, mc->model);
		}
	}
	for (size_t i = 0; i < k; i++) {
		bc_encounter_group *g = &groups[i];
		if (g->n <= 0.0)
			continue;
		memcpy(work, draws + i * nd, nd * sizeof *work);
		percentiles(work, nd, mc->level, &g->incidence_lo, &g->incidence_hi);
		if (g->x == 0.0)
			g->incidence_lo = 0.0; /* the data cannot exclude a rate of zero */
		if (g->x == g->n)
			g->incidence_hi = INFINITY; /* nor any rate, however high */
		g->interval_lo = safe_inverse(g->incidence_hi);
		g->interval_hi = safe_inverse(g->incidence_lo);
		const bc_encounter_group *r = &groups[ref];
		if (r->n <= 0.0)
			continue;
		if (i == ref) {
			g->ratio = g->ratio_lo = g->ratio_hi = 1.0;
			continue;
		}
		for (size_t d = 0; d < nd; d++)
			work[d] = draws[i * nd + d] / draws[ref * nd + d];
		percentiles(work, nd, mc->level, &g->ratio_lo, &g->ratio_hi);
		if (g->x == 0.0 || r->x == r->n)
			g->ratio_lo = 0.0;
		if (r->x == 0.0 || g->x == g->n)
			g->ratio_hi = INFINITY;
	}
done:
	free(draws);
	free(work);
	return rc;
}
