/*
 * stats.c - the statistics behind the shift tables: normal and chi-square
 * tails, Wilson and Newcombe intervals, Fisher's exact test, binomial
 * tails, the Cochran-Armitage trend test, grouped logistic regression and
 * the single most likely breakpoint. Every function is pure: no globals,
 * no allocation, safe to call from any thread.
 */
#include "stats.h"

#include <float.h>
#include <math.h>

#define STATS_SQRT2 1.41421356237309504880
#define STATS_LN_SQRT_2PI 0.91893853320467274178 /* log(sqrt(2 pi)) */
#define STATS_SQRT_2PI 2.50662827463100050242
#define STATS_2PI 6.28318530717958647693

/* ------------------------------------------------------------------ */
/* Normal and chi-square distributions                                 */
/* ------------------------------------------------------------------ */

double bc_stats__normal_sf(double z)
{
	return 0.5 * erfc(z / STATS_SQRT2);
}

/*
 * Acklam's rational approximation to the normal quantile (P. J. Acklam,
 * "An algorithm for computing the inverse normal cumulative distribution
 * function", 2003; relative error below 1.15e-9), followed by one Halley
 * step on the exact CDF written with erfc, which brings it to within a few
 * units in the last place.
 */
double bc_stats__normal_quantile(double p)
{
	static const double a[6] = {-3.969683028665376e+01, 2.209460984245205e+02, -2.759285104469687e+02,
				    1.383577518672690e+02, -3.066479806614716e+01, 2.506628277459239e+00};
	static const double b[5] = {-5.447609879822406e+01, 1.615858368580409e+02, -1.556989798598866e+02,
				    6.680131188771972e+01, -1.328068155288572e+01};
	static const double c[6] = {-7.784894002430293e-03, -3.223964580411365e-01, -2.400758277161838e+00,
				    -2.549732539343734e+00, 4.374664141464968e+00, 2.938163982698783e+00};
	static const double d[4] = {7.784695709041462e-03, 3.224671290700398e-01, 2.445134137142996e+00,
				    3.754408661907416e+00};
	const double p_low = 0.02425, p_high = 1 - p_low;
	double x, q, r;

	if (isnan(p) || p < 0 || p > 1)
		return NAN;
	if (p == 0)
		return -INFINITY;
	if (p == 1)
		return INFINITY;
	if (p < p_low) {
		q = sqrt(-2 * log(p));
		x = (((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) /
		    ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
	} else if (p <= p_high) {
		q = p - 0.5;
		r = q * q;
		x = (((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q /
		    (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1);
	} else {
		q = sqrt(-2 * log1p(-p));
		x = -(((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) /
		    ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
	}
	/* Halley refinement. In the upper tail work with the upper-tail
	 * probability so the error term keeps its relative precision. */
	double e;
	if (x > 0)
		e = (1 - p) - 0.5 * erfc(x / STATS_SQRT2);
	else
		e = 0.5 * erfc(-x / STATS_SQRT2) - p;
	double u = e * STATS_SQRT_2PI * exp(x * x / 2);
	return x - u / (1 + x * u / 2);
}

/*
 * Regularised upper incomplete gamma Q(a, x) by the series for P (x < a + 1)
 * or the modified-Lentz continued fraction for Q (otherwise), as in Press et
 * al., Numerical Recipes in C, 2nd ed., section 6.2 (gser / gcf).
 */
static double stats_gamma_q(double a, double x)
{
	const double eps = 1e-16, tiny = 1e-300;
	int sign;
	double lpre = -x + a * log(x) - lgamma_r(a, &sign);
	if (x < a + 1) {
		double ap = a, sum = 1 / a, del = sum;
		for (int i = 0; i < 10000; i++) {
			ap += 1;
			del *= x / ap;
			sum += del;
			if (fabs(del) < fabs(sum) * eps)
				break;
		}
		return 1 - sum * exp(lpre);
	}
	double b = x + 1 - a, c = 1 / tiny, d = 1 / b, h = d;
	for (int i = 1; i < 10000; i++) {
		double an = -i * (i - a);
		b += 2;
		d = an * d + b;
		if (fabs(d) < tiny)
			d = tiny;
		c = b + an / c;
		if (fabs(c) < tiny)
			c = tiny;
		d = 1 / d;
		double del = d * c;
		h *= del;
		if (fabs(del - 1) < eps)
			break;
	}
	return exp(lpre) * h;
}

double bc_stats__chi2_sf(double x, double df)
{
	if (isnan(x) || isnan(df) || df <= 0)
		return NAN;
	if (x <= 0)
		return 1;
	if (isinf(x))
		return 0;
	if (df == 1) /* exact and more accurate: P(Z^2 > x) */
		return erfc(sqrt(x / 2));
	if (df == 2)
		return exp(-x / 2);
	return stats_gamma_q(df / 2, x / 2);
}

/* ------------------------------------------------------------------ */
/* Intervals for proportions                                           */
/* ------------------------------------------------------------------ */

static double stats_z_two_sided(double level)
{
	return bc_stats__normal_quantile(1 - (1 - level) / 2);
}

/* Wilson with a given z; see bc_stats__wilson. */
static int stats_wilson_z(double x, double n, double z, double *lo, double *hi)
{
	*lo = *hi = NAN;
	if (!(n > 0) || !(x >= 0) || !(x <= n) || isinf(n) || !(z > 0) || isinf(z))
		return -1;
	double p = x / n, q = 1 - p, z2 = z * z;
	double centre = (x + z2 / 2) / (n + z2);
	double half = z * sqrt(n * p * q + z2 / 4) / (n + z2);
	*lo = x == 0 ? 0 : fmax(0, centre - half);
	*hi = x == n ? 1 : fmin(1, centre + half);
	return 0;
}

int bc_stats__wilson(double x, double n, double level, double *lo, double *hi)
{
	if (!(level > 0 && level < 1)) {
		*lo = *hi = NAN;
		return -1;
	}
	return stats_wilson_z(x, n, stats_z_two_sided(level), lo, hi);
}

int bc_stats__newcombe_diff(double x1, double n1, double x2, double n2, double level,
			    double *diff, double *lo, double *hi)
{
	double l1, u1, l2, u2;
	*diff = *lo = *hi = NAN;
	if (!(level > 0 && level < 1))
		return -1;
	double z = stats_z_two_sided(level);
	if (stats_wilson_z(x1, n1, z, &l1, &u1) != 0 || stats_wilson_z(x2, n2, z, &l2, &u2) != 0)
		return -1;
	double p1 = x1 / n1, p2 = x2 / n2, d = p1 - p2;
	*diff = d;
	*lo = d - sqrt((p1 - l1) * (p1 - l1) + (u2 - p2) * (u2 - p2));
	*hi = d + sqrt((u1 - p1) * (u1 - p1) + (p2 - l2) * (p2 - l2));
	return 0;
}

/* ------------------------------------------------------------------ */
/* Binomial and hypergeometric probabilities                           */
/* ------------------------------------------------------------------ */

/*
 * Loader's saddle-point evaluation of binomial probabilities (C. Loader,
 * "Fast and accurate computation of binomial probabilities", 2000): the
 * Stirling-series remainder stirlerr(n) = log(n!) - log(sqrt(2 pi n)(n/e)^n)
 * and the deviance term bd0(x, np) = x log(x/np) + np - x, each computed
 * without cancellation. log(n!) from lgamma alone loses about 1e-9 in
 * relative precision at n = 1e6; this keeps near full precision.
 */
static double stats_stirlerr(double n)
{
	const double s0 = 1.0 / 12, s1 = 1.0 / 360, s2 = 1.0 / 1260, s3 = 1.0 / 1680, s4 = 1.0 / 1188;
	if (n <= 15) { /* the value is small, so lgamma's absolute error is harmless */
		int sign; /* lgamma_r: plain lgamma writes the global signgam */
		return lgamma_r(n + 1, &sign) - (n + 0.5) * log(n) + n - STATS_LN_SQRT_2PI;
	}
	double nn = n * n;
	if (n > 500)
		return (s0 - s1 / nn) / n;
	if (n > 80)
		return (s0 - (s1 - s2 / nn) / nn) / n;
	if (n > 35)
		return (s0 - (s1 - (s2 - s3 / nn) / nn) / nn) / n;
	return (s0 - (s1 - (s2 - (s3 - s4 / nn) / nn) / nn) / nn) / n;
}

static double stats_bd0(double x, double np)
{
	if (fabs(x - np) < 0.1 * (x + np)) {
		double v = (x - np) / (x + np), s = (x - np) * v, ej = 2 * x * v;
		v *= v;
		for (int j = 1; j < 1000; j++) {
			ej *= v;
			double s1 = s + ej / (2 * j + 1);
			if (s1 == s)
				return s1;
			s = s1;
		}
		return s;
	}
	return x * log(x / np) + np - x;
}

/* log P(X = x) for X ~ Binomial(n, p), q = 1 - p, 0 <= x <= n integers. */
static double stats_log_dbinom(double x, double n, double p, double q)
{
	if (p == 0)
		return x == 0 ? 0 : -INFINITY;
	if (q == 0)
		return x == n ? 0 : -INFINITY;
	if (x == 0) {
		if (n == 0)
			return 0;
		return p < 0.1 ? -stats_bd0(n, n * q) - n * p : n * log(q);
	}
	if (x == n)
		return q < 0.1 ? -stats_bd0(n, n * p) - n * q : n * log(p);
	double lc = stats_stirlerr(n) - stats_stirlerr(x) - stats_stirlerr(n - x) - stats_bd0(x, n * p) -
		    stats_bd0(n - x, n * q);
	double lf = log(STATS_2PI) + log(x) + log1p(-x / n);
	return lc - 0.5 * lf;
}

/*
 * log P(A = a) for the hypergeometric count in the first cell of a 2 x 2
 * table with row totals r1, r2 and first column total c1, written as a
 * ratio of three binomial probabilities with a common p (as R's dhyper).
 */
static double stats_log_dhyper(double a, double r1, double r2, double c1)
{
	double n = r1 + r2, p = c1 / n, q = (n - c1) / n;
	return stats_log_dbinom(a, r1, p, q) + stats_log_dbinom(c1 - a, r2, p, q) - stats_log_dbinom(c1, n, p, q);
}

/*
 * A ratio recurrence t(i+1) = t(i) * ratio(i) summed outward from a
 * starting term 1 (so the result is relative to the start, and no term
 * underflows before it matters). The terms must be non-increasing with
 * non-increasing ratios (log-concave, true past the mode of the binomial
 * and hypergeometric); the loop stops once the geometric bound on the
 * rest falls below 1e-17 of the sum.
 */
typedef double (*stats_ratio_fn)(double i, const double *par);

static double stats_sum_outward(double from, double to, double step, stats_ratio_fn ratio, const double *par)
{
	double sum = 1, t = 1;
	for (double i = from; step > 0 ? i < to : i > to; i += step) {
		double r = ratio(i, par);
		t *= r;
		sum += t;
		if (r < 1 && t * r / (1 - r) < sum * 1e-17)
			break;
		if (t == 0)
			break;
	}
	return sum;
}

/* Binomial: P(i+1)/P(i) and P(i-1)/P(i); par = {n, p, q}. */
static double stats_binom_up(double i, const double *par)
{
	return (par[0] - i) / (i + 1) * (par[1] / par[2]);
}

static double stats_binom_down(double i, const double *par)
{
	return i / (par[0] - i + 1) * (par[2] / par[1]);
}

/* log P(X >= k) summed upward from k, for k above the mode. */
static double stats_binom_log_upper(double k, double n, double p, double q)
{
	const double par[3] = {n, p, q};
	return stats_log_dbinom(k, n, p, q) + log(stats_sum_outward(k, n, 1, stats_binom_up, par));
}

/* log P(X <= k) summed downward from k, for k below the mode. */
static double stats_binom_log_lower(double k, double n, double p, double q)
{
	const double par[3] = {n, p, q};
	return stats_log_dbinom(k, n, p, q) + log(stats_sum_outward(k, 0, -1, stats_binom_down, par));
}

/*
 * Both tails by summation in log space: the tail that does not hold the
 * mode is summed directly from its inner end; the other is one minus the
 * opposite tail, which is then at least about one half and so keeps its
 * relative precision.
 */
double bc_stats__binom_sf(long k, long n, double p)
{
	if (n < 0 || isnan(p) || p < 0 || p > 1)
		return NAN;
	if (k <= 0)
		return 1;
	if (k > n)
		return 0;
	if (p == 0)
		return 0;
	if (p == 1)
		return 1;
	double q = 1 - p, dn = (double)n, dk = (double)k;
	double mode = floor((dn + 1) * p);
	if (dk > mode)
		return exp(stats_binom_log_upper(dk, dn, p, q));
	return fmax(0, 1 - exp(stats_binom_log_lower(dk - 1, dn, p, q)));
}

double bc_stats__binom_cdf(long k, long n, double p)
{
	if (n < 0 || isnan(p) || p < 0 || p > 1)
		return NAN;
	if (k < 0)
		return 0;
	if (k >= n)
		return 1;
	if (p == 0)
		return 1;
	if (p == 1)
		return 0;
	double q = 1 - p, dn = (double)n, dk = (double)k;
	double mode = floor((dn + 1) * p);
	if (dk < mode)
		return exp(stats_binom_log_lower(dk, dn, p, q));
	return fmax(0, 1 - exp(stats_binom_log_upper(dk + 1, dn, p, q)));
}

/* ------------------------------------------------------------------ */
/* Fisher's exact test                                                 */
/* ------------------------------------------------------------------ */

/* Hypergeometric ratios; par = {r1, r2, c1}. */
static double stats_hyper_up(double a, const double *par)
{
	return (par[0] - a) * (par[2] - a) / ((a + 1) * (par[1] - par[2] + a + 1));
}

static double stats_hyper_down(double a, const double *par)
{
	return a * (par[1] - par[2] + a) / ((par[0] - a + 1) * (par[2] - a + 1));
}

/*
 * The support is [lo, hi] with the mode m; the probabilities rise on
 * [lo, m] and fall on [m, hi]. Tables no more probable than the observed
 * one (within a relative 1e-7, the tolerance of SciPy and R) form a
 * prefix [lo, L] and a suffix [R, hi]; their ends are found by bisection
 * and each tail is summed outward from its inner end, so the cost depends
 * on the spread of the distribution, not on the size of the margins.
 */
double bc_stats__fisher_two_sided(long a, long b, long c, long d)
{
	if (a < 0 || b < 0 || c < 0 || d < 0)
		return NAN;
	double r1 = (double)a + (double)b, r2 = (double)c + (double)d, c1 = (double)a + (double)c;
	double n = r1 + r2;
	if (r1 == 0 || r2 == 0 || c1 == 0 || c1 == n)
		return 1;
	const double par[3] = {r1, r2, c1};
	double lo = fmax(0, c1 - r2), hi = fmin(r1, c1);
	double mode = floor((r1 + 1) * (c1 + 1) / (n + 2));
	mode = fmin(fmax(mode, lo), hi);
	double thresh = stats_log_dhyper((double)a, r1, r2, c1) + log1p(1e-7);

	double total = 0;
	/* Left tail: the largest L in [lo, mode] with log p(L) <= thresh. */
	if (stats_log_dhyper(lo, r1, r2, c1) <= thresh) {
		double good = lo, bad = mode + 1; /* p(good) <= thresh; bad is past the prefix */
		if (stats_log_dhyper(mode, r1, r2, c1) <= thresh)
			good = mode;
		else
			bad = mode;
		while (bad - good > 1) {
			double mid = floor((good + bad) / 2);
			if (stats_log_dhyper(mid, r1, r2, c1) <= thresh)
				good = mid;
			else
				bad = mid;
		}
		total += exp(stats_log_dhyper(good, r1, r2, c1) +
			     log(stats_sum_outward(good, lo, -1, stats_hyper_down, par)));
	}
	/* Right tail: the smallest R in [mode + 1, hi] with log p(R) <= thresh. */
	if (mode + 1 <= hi && stats_log_dhyper(hi, r1, r2, c1) <= thresh) {
		double good = hi, bad = mode;
		if (stats_log_dhyper(mode + 1, r1, r2, c1) <= thresh)
			good = mode + 1;
		while (good - bad > 1) {
			double mid = floor((good + bad) / 2);
			if (stats_log_dhyper(mid, r1, r2, c1) <= thresh)
				good = mid;
			else
				bad = mid;
		}
		total += exp(stats_log_dhyper(good, r1, r2, c1) +
			     log(stats_sum_outward(good, hi, 1, stats_hyper_up, par)));
	}
	return fmin(1, total);
}

/* ------------------------------------------------------------------ */
/* Trend in proportions                                                */
/* ------------------------------------------------------------------ */

/* A group is usable when 0 <= s <= n and n is finite; n = 0 adds nothing. */
static int stats_group_ok(double s, double n)
{
	return isfinite(s) && isfinite(n) && s >= 0 && s <= n;
}

int bc_stats__trend(const double *s, const double *n, const double *x, size_t k, bc_trend *out)
{
	out->z = out->p = out->m2 = out->p_m2 = NAN;
	if (k < 2)
		return -1;
	double big_n = 0, big_s = 0, sum_nx = 0;
	for (size_t i = 0; i < k; i++) {
		if (!stats_group_ok(s[i], n[i]) || !isfinite(x[i]))
			return -1;
		big_n += n[i];
		big_s += s[i];
		sum_nx += n[i] * x[i];
	}
	if (!(big_n > 0))
		return -1;
	double pbar = big_s / big_n, xbar = sum_nx / big_n, t = 0, sxx = 0;
	for (size_t i = 0; i < k; i++) {
		t += s[i] * (x[i] - xbar);
		sxx += n[i] * (x[i] - xbar) * (x[i] - xbar);
	}
	double v = pbar * (1 - pbar) * sxx;
	if (!(v > 0)) /* all in one outcome, or one score only */
		return -1;
	out->z = t / sqrt(v);
	out->p = 2 * bc_stats__normal_sf(fabs(out->z));
	out->m2 = out->z * out->z * (big_n - 1) / big_n;
	out->p_m2 = bc_stats__chi2_sf(out->m2, 1);
	return 0;
}

/* ------------------------------------------------------------------ */
/* Grouped logistic regression                                         */
/* ------------------------------------------------------------------ */

/* s log(mu) + (n - s) log(1 - mu), with 0 log 0 = 0. eta = logit(mu). */
static double stats_loglik_eta(double s, double n, double eta)
{
	/* log(mu) = -log1p(exp(-eta)), log(1 - mu) = -log1p(exp(eta)), overflow-safe */
	double lmu = eta > 0 ? -log1p(exp(-eta)) : eta - log1p(exp(eta));
	double l1mu = eta > 0 ? -eta - log1p(exp(-eta)) : -log1p(exp(eta));
	double ll = 0;
	if (s > 0)
		ll += s * lmu;
	if (n - s > 0)
		ll += (n - s) * l1mu;
	return ll;
}

static double stats_loglik_p(double s, double n, double p)
{
	double ll = 0;
	if (s > 0)
		ll += s * log(p);
	if (n - s > 0)
		ll += (n - s) * log1p(-p);
	return ll;
}

/* 1 / (1 + exp(-eta)) without overflow. */
static double stats_expit(double eta)
{
	if (eta >= 0)
		return 1 / (1 + exp(-eta));
	double e = exp(eta);
	return e / (1 + e);
}

/*
 * The IRLS weight n mu (1 - mu) and working response eta + (s - n mu) / w
 * of one group; the first step starts from mu = (s + 0.5) / (n + 1).
 */
static void logistic_working(double s, double n, int first, double eta, double *w, double *zw)
{
	double mu;
	if (first) {
		mu = (s + 0.5) / (n + 1);
		eta = log(mu / (1 - mu));
	} else {
		mu = stats_expit(eta);
	}
	*w = n * mu * (1 - mu);
	if (!(*w > 0))
		*w = DBL_MIN;
	*zw = eta + (s - n * mu) / *w;
}

int bc_stats__logistic(const double *s, const double *n, const double *x, size_t k, bc_logistic *out)
{
	*out = (bc_logistic){.intercept = NAN, .intercept_se = NAN, .slope = NAN, .slope_se = NAN,
			     .z = NAN, .p = NAN, .loglik = NAN, .loglik_null = NAN, .lr = NAN, .lr_p = NAN,
			     .iterations = 0, .converged = 0};
	double big_n = 0, big_s = 0;
	/* Separation in one dimension: every success at scores >= every
	 * failure's score (or the reverse); then the MLE does not exist. */
	double min_succ = INFINITY, max_succ = -INFINITY, min_fail = INFINITY, max_fail = -INFINITY;
	double min_x = INFINITY, max_x = -INFINITY;
	for (size_t i = 0; i < k; i++) {
		if (!stats_group_ok(s[i], n[i]) || !isfinite(x[i]))
			return -1;
		if (n[i] == 0)
			continue;
		big_n += n[i];
		big_s += s[i];
		min_x = fmin(min_x, x[i]);
		max_x = fmax(max_x, x[i]);
		if (s[i] > 0) {
			min_succ = fmin(min_succ, x[i]);
			max_succ = fmax(max_succ, x[i]);
		}
		if (n[i] - s[i] > 0) {
			min_fail = fmin(min_fail, x[i]);
			max_fail = fmax(max_fail, x[i]);
		}
	}
	if (!(big_n > 0))
		return -1;
	double pbar = big_s / big_n;
	out->loglik_null = stats_loglik_p(big_s, big_n, pbar);
	if (big_s == 0 || big_s == big_n || min_x == max_x || max_fail <= min_succ || max_succ <= min_fail)
		return 0; /* no finite estimate: converged stays 0 */

	/* IRLS (Fisher scoring; the observed and expected information agree
	 * for the canonical logit link). Start as statsmodels' GLM does, from
	 * mu = (s + 0.5) / (n + 1), and stop when the deviance changes by
	 * less than 1e-12 (relative to 1 + |deviance|). */
	double b0 = 0, b1 = 0, dev_old = INFINITY;
	int it;
	for (it = 0; it < 100; it++) {
		/* One weighted least-squares step of the working response on
		 * x, written about the weighted mean of x for stability. */
		double sw = 0, swx = 0, swz = 0, sxx = 0, sxz = 0;
		for (size_t i = 0; i < k; i++) {
			double w, zw;
			if (n[i] > 0) {
				logistic_working(s[i], n[i], it == 0, b0 + b1 * x[i], &w, &zw);
				sw += w;
				swx += w * x[i];
				swz += w * zw;
			}
		}
		double xm = swx / sw, zm = swz / sw;
		for (size_t i = 0; i < k; i++) {
			double w, zw;
			if (n[i] > 0) {
				logistic_working(s[i], n[i], it == 0, b0 + b1 * x[i], &w, &zw);
				sxx += w * (x[i] - xm) * (x[i] - xm);
				sxz += w * (x[i] - xm) * (zw - zm);
			}
		}
		if (!(sxx > 0))
			break;
		b1 = sxz / sxx;
		b0 = zm - b1 * xm;
		double ll = 0;
		for (size_t i = 0; i < k; i++)
			if (n[i] > 0)
				ll += stats_loglik_eta(s[i], n[i], b0 + b1 * x[i]);
		double dev = -2 * ll; /* differs from the deviance by a constant */
		out->loglik = ll;
		if (fabs(dev - dev_old) <= 1e-12 * (1 + fabs(dev))) {
			it++;
			out->converged = 1;
			break;
		}
		dev_old = dev;
	}
	out->iterations = it;
	out->intercept = b0;
	out->slope = b1;

	/* Standard errors from the inverse information at the estimate. */
	double sw = 0, swx = 0;
	for (size_t i = 0; i < k; i++) {
		if (n[i] == 0)
			continue;
		double mu = stats_expit(b0 + b1 * x[i]), w = n[i] * mu * (1 - mu);
		sw += w;
		swx += w * x[i];
	}
	double xm = swx / sw, sxx = 0;
	for (size_t i = 0; i < k; i++) {
		if (n[i] == 0)
			continue;
		double mu = stats_expit(b0 + b1 * x[i]), w = n[i] * mu * (1 - mu);
		sxx += w * (x[i] - xm) * (x[i] - xm);
	}
	out->slope_se = sqrt(1 / sxx);
	out->intercept_se = sqrt(1 / sw + xm * xm / sxx);
	out->z = out->slope / out->slope_se;
	out->p = 2 * bc_stats__normal_sf(fabs(out->z));
	out->lr = fmax(0, 2 * (out->loglik - out->loglik_null));
	out->lr_p = bc_stats__chi2_sf(out->lr, 1);
	if (!out->converged || !isfinite(out->slope) || !isfinite(out->slope_se))
		out->converged = 0;
	return 0;
}

/* ------------------------------------------------------------------ */
/* Breakpoint                                                          */
/* ------------------------------------------------------------------ */

int bc_stats__breakpoint(const double *s, const double *n, size_t k, size_t *at, double *lr)
{
	*at = 0;
	*lr = NAN;
	if (k < 2)
		return -1;
	double big_s = 0, big_n = 0;
	for (size_t i = 0; i < k; i++) {
		if (!stats_group_ok(s[i], n[i]))
			return -1;
		big_s += s[i];
		big_n += n[i];
	}
	if (!(big_n > 0))
		return -1;
	double l_const = stats_loglik_p(big_s, big_n, big_s / big_n);
	double best = -INFINITY, ls = 0, ln = 0;
	for (size_t b = 1; b < k; b++) {
		ls += s[b - 1];
		ln += n[b - 1];
		double rs = big_s - ls, rn = big_n - ln;
		if (!(ln > 0) || !(rn > 0))
			continue; /* an empty segment is no split */
		double l = stats_loglik_p(ls, ln, ls / ln) + stats_loglik_p(rs, rn, rs / rn);
		if (l > best) {
			best = l;
			*at = b;
		}
	}
	if (*at == 0)
		return -1;
	*lr = fmax(0, 2 * (best - l_const));
	return 0;
}
