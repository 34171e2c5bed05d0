/*
 * stats.h - the statistics the shift tables use (private to the library).
 * Every function is pure and thread-safe. `level` is a confidence level
 * such as 0.95. Counts are doubles so fractional (overlap-split) counts
 * pass through; functions that need integers say so.
 */
#ifndef BC_STATS_H
#define BC_STATS_H

#include <stddef.h>

/** Inverse of the standard normal CDF, 0 < p < 1. */
double bc_stats__normal_quantile(double p);
/** Upper tail of the standard normal, P(Z > z). */
double bc_stats__normal_sf(double z);
/** Upper tail of the chi-square distribution with `df` degrees of freedom. */
double bc_stats__chi2_sf(double x, double df);

/**
 * Wilson (1927) score interval for x successes of n, without continuity
 * correction. n = 0 gives NaN limits and returns -1 ("no data").
 */
int bc_stats__wilson(double x, double n, double level, double *lo, double *hi);

/**
 * Newcombe (1998b) hybrid score interval (method 10) for p1 - p2,
 * p1 = x1/n1, p2 = x2/n2. Returns -1 when n1 or n2 is 0.
 */
int bc_stats__newcombe_diff(double x1, double n1, double x2, double n2, double level,
			    double *diff, double *lo, double *hi);

/** Two-sided Fisher exact test p for [[a, b], [c, d]] (non-negative integers),
 * summing tables no more probable than the observed (SciPy's and R's rule).
 * A zero margin gives 1; a negative count gives NaN. The cost grows with
 * the spread of the distribution, not the size of the margins. */
double bc_stats__fisher_two_sided(long a, long b, long c, long d);

/** Binomial tails: P(X >= k) and P(X <= k) for X ~ Binomial(n, p).
 * Any k is accepted (k <= 0 or k > n give 0 or 1); n < 0 or p outside
 * [0, 1] gives NaN. Relative precision near 1e-13 up to n = 1e6. */
double bc_stats__binom_sf(long k, long n, double p);
double bc_stats__binom_cdf(long k, long n, double p);

/** Cochran-Armitage trend test over k groups: s successes of n at score x. */
typedef struct bc_trend {
	double z;        /* Armitage z, N denominator (SAS PROC FREQ form) */
	double p;        /* two-sided normal p of z */
	double m2;       /* Mantel M^2 = z^2 (N - 1) / N */
	double p_m2;     /* its chi-square (1 df) p */
} bc_trend;
/* Returns -1 (fields NaN) when k < 2, a group is invalid (s < 0, s > n),
 * or the statistic is undefined (all or none successes, one score only). */
int bc_stats__trend(const double *s, const double *n, const double *x, size_t k, bc_trend *out);

/** Logistic regression of grouped binomial data: s successes of n at x. */
typedef struct bc_logistic {
	double intercept, intercept_se;
	double slope, slope_se;
	double z, p;           /* Wald z and two-sided p of the slope */
	double loglik, loglik_null;
	double lr, lr_p;       /* likelihood-ratio chi-square (1 df) and p */
	int iterations;
	int converged;         /* 0 when separation or non-convergence */
} bc_logistic;
/*
 * `loglik` and `loglik_null` are the Bernoulli log-likelihoods of the
 * expanded 0/1 data (no binomial coefficients), as a logistic fit on one
 * row per occurrence reports them; LR is the same either way. Groups with
 * n = 0 are ignored. Under complete or quasi-complete separation, with all
 * or no successes, or with one distinct score, no estimate exists:
 * converged = 0 and everything but loglik_null is NaN. If IRLS does not
 * converge in 100 iterations the last estimates are kept, converged = 0.
 * Returns -1 when a group is invalid or there is no data, else 0.
 */
int bc_stats__logistic(const double *s, const double *n, const double *x, size_t k, bc_logistic *out);

/**
 * The single most likely breakpoint: the boundary b (1..k-1, groups
 * [0,b) and [b,k)) that maximises the binomial likelihood of two constant
 * proportions; `lr` is 2 (logL_split - logL_constant). Ties go to the
 * first boundary; boundaries leaving an empty segment are skipped.
 * Returns -1 when k < 2, a group is invalid or no boundary is possible.
 */
int bc_stats__breakpoint(const double *s, const double *n, size_t k, size_t *at, double *lr);

#endif
