/*
 * test_stats.c - the statistics module against published and computed
 * check values (../shared/check-values.md; each check names its source).
 */
#include "test.h"
#include "stats.h"

#include <time.h>

/* |a - b| <= rel * |b| */
#define CHECK_REL(a, b, rel) CHECK_NEAR((a), (b), (rel) * fabs((double)(b)))

/* Wilson (1927) score interval; check-values.md §1. */
TEST(stats_wilson_published)
{
	double lo, hi;
	/* Newcombe RG (1998a) Statistics in Medicine 17:857-872, Table II, method 3
	 * (table number from memory; 4-dp values from memory, reproduced by
	 * statsmodels proportion_confint(method='wilson')); full values computed. */
	CHECK_INT(bc_stats__wilson(81, 263, 0.95, &lo, &hi), 0);
	CHECK_NEAR(lo, 0.2553, 5e-5); /* Newcombe 1998a Table II (from memory) */
	CHECK_NEAR(hi, 0.3662, 5e-5); /* Newcombe 1998a Table II (from memory) */
	CHECK_NEAR(lo, 0.2552885199, 1e-9); /* computed: statsmodels = own closed form */
	CHECK_NEAR(hi, 0.3662095770, 1e-9); /* computed: statsmodels = own closed form */
	CHECK_INT(bc_stats__wilson(15, 148, 0.95, &lo, &hi), 0);
	CHECK_NEAR(lo, 0.0624, 5e-5); /* Newcombe 1998a Table II (from memory) */
	CHECK_NEAR(hi, 0.1605, 5e-5); /* Newcombe 1998a Table II (from memory) */
	CHECK_NEAR(lo, 0.0623863995, 1e-9); /* computed: statsmodels */
	CHECK_NEAR(hi, 0.1604872417, 1e-9); /* computed: statsmodels */
	CHECK_INT(bc_stats__wilson(0, 20, 0.95, &lo, &hi), 0);
	CHECK(lo == 0); /* check-values.md §1 edge case: x = 0 gives lower = 0 exactly */
	CHECK_NEAR(hi, 0.1611, 5e-5); /* Newcombe 1998a Table II (from memory) */
	CHECK_NEAR(hi, 0.1611251581, 1e-9); /* computed: statsmodels */
	CHECK_INT(bc_stats__wilson(1, 29, 0.95, &lo, &hi), 0);
	CHECK_NEAR(lo, 0.0061, 5e-5); /* Newcombe 1998a Table II (from memory) */
	CHECK_NEAR(hi, 0.1718, 5e-5); /* Newcombe 1998a Table II (from memory) */
	CHECK_NEAR(lo, 0.0061132143, 1e-9); /* computed: statsmodels */
	CHECK_NEAR(hi, 0.1717552188, 1e-9); /* computed: statsmodels */
}

TEST(stats_wilson_computed_and_edges)
{
	double lo, hi;
	/* Wilson 1927 closed form; computed with statsmodels proportion_confint
	 * (check-values.md §1, "computed (own = statsmodels)"). */
	CHECK_INT(bc_stats__wilson(0, 10, 0.95, &lo, &hi), 0);
	CHECK(lo == 0); /* check-values.md §1: x = 0 gives lower = 0 exactly */
	CHECK_NEAR(hi, 0.2775327999, 1e-9); /* computed: statsmodels */
	CHECK_INT(bc_stats__wilson(10, 10, 0.95, &lo, &hi), 0);
	CHECK_NEAR(lo, 0.7224672001, 1e-9); /* computed: statsmodels */
	CHECK(hi == 1); /* check-values.md §1: x = n gives upper = 1 exactly */
	CHECK_INT(bc_stats__wilson(5, 25, 0.95, &lo, &hi), 0);
	CHECK_NEAR(lo, 0.0886058469, 1e-9); /* computed: statsmodels */
	CHECK_NEAR(hi, 0.3913095037, 1e-9); /* computed: statsmodels */
	CHECK_INT(bc_stats__wilson(1, 1, 0.95, &lo, &hi), 0);
	CHECK_NEAR(lo, 0.2065493144, 1e-9); /* computed: statsmodels */
	CHECK(hi == 1); /* check-values.md §1: x = n gives upper = 1 exactly */
	/* check-values.md §1: n = 0 is undefined, "no data", not 0/0. */
	CHECK_INT(bc_stats__wilson(0, 0, 0.95, &lo, &hi), -1);
	CHECK(isnan(lo) && isnan(hi));
	/* Bad input is refused, not clamped (common practice, no source). */
	CHECK_INT(bc_stats__wilson(3, 2, 0.95, &lo, &hi), -1);
	CHECK_INT(bc_stats__wilson(-1, 2, 0.95, &lo, &hi), -1);
	CHECK_INT(bc_stats__wilson(1, 2, 1.0, &lo, &hi), -1);
}

/* Newcombe (1998b) hybrid score interval, method 10; check-values.md §2. */
TEST(stats_newcombe_published)
{
	static const struct {
		double x1, n1, x2, n2, d, lo4, hi4, lo, hi;
	} rows[] = {
		/* Newcombe RG (1998b) Statistics in Medicine 17:873-890, Table II,
		 * method 10 (table number and 4-dp values from memory; full values
		 * computed: own formula = statsmodels confint_proportions_2indep(method='newcomb')) */
		{56, 70, 48, 80, 0.2, 0.0524, 0.3339, 0.0524314724, 0.3338726540},
		{9, 10, 3, 10, 0.6, 0.1705, 0.8090, 0.1705227239, 0.8090179735},
		{6, 7, 2, 7, 4.0 / 7, 0.0582, 0.8062, 0.0582279275, 0.8062496375},
		{5, 56, 0, 29, 5.0 / 56, -0.0381, 0.1926, -0.0381371479, 0.1925600139},
		{0, 10, 0, 20, 0, -0.1611, 0.2775, -0.1611251581, 0.2775327999},
		{10, 10, 0, 20, 1, 0.6791, 1.0000, 0.6790860371, 1},
	};
	for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
		double d, lo, hi;
		CHECK_INT(bc_stats__newcombe_diff(rows[i].x1, rows[i].n1, rows[i].x2, rows[i].n2, 0.95, &d, &lo, &hi), 0);
		CHECK_NEAR(d, rows[i].d, 1e-12);
		CHECK_NEAR(lo, rows[i].lo4, 5e-5); /* Newcombe 1998b Table II (from memory) */
		CHECK_NEAR(hi, rows[i].hi4, 5e-5); /* Newcombe 1998b Table II (from memory) */
		CHECK_NEAR(lo, rows[i].lo, 1e-9); /* computed: statsmodels */
		CHECK_NEAR(hi, rows[i].hi, 1e-9); /* computed: statsmodels */
	}
	double d, lo, hi;
	CHECK_INT(bc_stats__newcombe_diff(10, 10, 0, 20, 0.95, &d, &lo, &hi), 0);
	CHECK(hi == 1); /* check-values.md §2 note: the upper limit of 10/10 - 0/20 is exactly 1 */
	/* check-values.md §2, formula above (computed: own = statsmodels) */
	CHECK_INT(bc_stats__newcombe_diff(81, 263, 15, 148, 0.95, &d, &lo, &hi), 0);
	/* d = 81/263 - 15/148 exactly; check-values.md prints 0.2066329, which
	 * differs from the exact 0.20663344 in the 7th digit (a typo there). */
	CHECK_NEAR(d, 81.0 / 263 - 15.0 / 148, 1e-15);
	CHECK_NEAR(d, 0.2066329, 1e-6);
	CHECK_NEAR(lo, 0.1274251666, 1e-9);
	CHECK_NEAR(hi, 0.2766933652, 1e-9);
	/* check-values.md §2 note: swapping the samples swaps and negates the limits. */
	double d2, lo2, hi2;
	CHECK_INT(bc_stats__newcombe_diff(15, 148, 81, 263, 0.95, &d2, &lo2, &hi2), 0);
	CHECK_NEAR(lo2, -hi, 1e-15);
	CHECK_NEAR(hi2, -lo, 1e-15);
	/* stats.h contract: an empty sample has no interval. */
	CHECK_INT(bc_stats__newcombe_diff(0, 0, 3, 10, 0.95, &d, &lo, &hi), -1);
	CHECK(isnan(lo) && isnan(hi));
}

/* Fisher's exact test, two-sided; check-values.md §3 (exact rationals). */
TEST(stats_fisher_check_values)
{
	/* Fisher RA (1935) The Design of Experiments, ch. II; Agresti (2002) §3.5
	 * (textbook one-sided 0.243 from memory); computed: scipy = exact rational 17/35 */
	CHECK_REL(bc_stats__fisher_two_sided(3, 1, 1, 3), 17.0 / 35, 1e-10);
	/* Fisher 1935 (1 chance in 70, one-sided); computed: 1/35 two-sided */
	CHECK_REL(bc_stats__fisher_two_sided(4, 0, 0, 4), 1.0 / 35, 1e-10);
	/* SciPy reference guide, scipy.stats.fisher_exact example, SciPy 1.10
	 * (published, seen); computed: exact rational 5/143 */
	CHECK_REL(bc_stats__fisher_two_sided(8, 2, 1, 5), 5.0 / 143, 1e-10);
	/* computed: scipy = exact rational (check-values.md §3) */
	CHECK_REL(bc_stats__fisher_two_sided(1, 9, 11, 3), 41.0 / 14858, 1e-10);
	CHECK_REL(bc_stats__fisher_two_sided(12, 5, 3, 10), 628.0 / 24795, 1e-10);
	CHECK_REL(bc_stats__fisher_two_sided(7, 3, 3, 7), 8263.0 / 46189, 1e-10);
	CHECK_REL(bc_stats__fisher_two_sided(10, 0, 0, 10), 1.0 / 92378, 1e-10);
	CHECK_REL(bc_stats__fisher_two_sided(0, 5, 5, 0), 1.0 / 126, 1e-10);
}

TEST(stats_fisher_large_margins)
{
	/* The test is invariant under swapping rows or columns (definition of
	 * the two-sided rule, check-values.md §3). */
	double p = bc_stats__fisher_two_sided(480000, 520000, 500000, 500000);
	CHECK(p > 0 && p < 1e-100); /* 48 % vs 50 % of a million each: far from chance */
	CHECK_REL(bc_stats__fisher_two_sided(520000, 480000, 500000, 500000), p, 1e-9);
	CHECK_REL(bc_stats__fisher_two_sided(500000, 500000, 480000, 520000), p, 1e-9);
	double q = bc_stats__fisher_two_sided(300210, 699790, 299790, 700210);
	CHECK_REL(bc_stats__fisher_two_sided(699790, 300210, 700210, 299790), q, 1e-9);
	CHECK(q > 0.3 && q < 0.7); /* a difference of 0.04 percentage points */
	/* A table equal to the expected one has p = 1 (all tables count). */
	CHECK_NEAR(bc_stats__fisher_two_sided(500000, 500000, 500000, 500000), 1, 1e-9);
	CHECK_NEAR(bc_stats__fisher_two_sided(0, 0, 3, 4), 1, 0); /* empty row: nothing to test */
	CHECK(isnan(bc_stats__fisher_two_sided(-1, 0, 3, 4)));
	/* Speed: the shift table calls this per pair of bins (common practice,
	 * no source): 200 million-sized tables well under a second. */
	clock_t t0 = clock();
	double acc = 0;
	for (long i = 0; i < 200; i++)
		acc += bc_stats__fisher_two_sided(400000 + i * 97, 600000 - i * 13, 350000 + i * 31, 650000);
	double secs = (double)(clock() - t0) / CLOCKS_PER_SEC;
	CHECK(acc >= 0);
	CHECK_MSG(secs < 2.0, "200 large Fisher tests took %.2f s", secs);
}

/* Binomial tails; check-values.md §12 (computed: scipy binom.sf, binomtest,
 * exact rational sum). */
TEST(stats_binomial_tails_check_values)
{
	/* pooled p0 = 0.36, taxon included: exact rational
	 * 53959135757542929 / 37252902984619140625 = 0.00144845452124 */
	CHECK_REL(bc_stats__binom_sf(11, 14, 0.36), 0.00144845452124, 1e-9);
	CHECK_REL(bc_stats__binom_cdf(11, 14, 0.36), 0.9998074853, 1e-9);
	/* pooled, taxon excluded: p0 = 169/486 (computed, scipy) */
	CHECK_REL(bc_stats__binom_sf(11, 14, 169.0 / 486), 0.001039416809, 1e-9);
	CHECK_REL(bc_stats__binom_cdf(11, 14, 169.0 / 486), 0.9998686654, 1e-9);
	/* bin-weighted p0 = 5/14 (computed, scipy; printed to 9 significant
	 * digits, so the tolerance allows its rounding) */
	CHECK_REL(bc_stats__binom_sf(11, 14, 5.0 / 14), 0.00134235956, 4e-9);
	CHECK_REL(bc_stats__binom_cdf(11, 14, 5.0 / 14), 0.9998236617, 1e-9);
	/* further cases, p0 = 0.36 (computed, scipy) */
	CHECK_REL(bc_stats__binom_sf(3, 10, 0.36), 0.7594627439, 1e-9);
	CHECK_REL(bc_stats__binom_cdf(3, 10, 0.36), 0.4867715657, 1e-9);
	CHECK_REL(bc_stats__binom_cdf(0, 12, 0.36), pow(0.64, 12), 1e-12); /* 0.64^12 = 0.004722366483 */
	CHECK_REL(bc_stats__binom_sf(12, 12, 0.36), pow(0.36, 12), 1e-12); /* 0.36^12 = 4.738381338e-06 */
	CHECK(bc_stats__binom_sf(0, 12, 0.36) == 1);  /* P(X >= 0) = 1 */
	CHECK(bc_stats__binom_cdf(12, 12, 0.36) == 1); /* P(X <= n) = 1 */
}

TEST(stats_binomial_tails_large_n)
{
	/* Identities of the binomial distribution (definition, no outside
	 * source): P(X >= k) + P(X <= k - 1) = 1; P(X >= n) = p^n;
	 * P(X <= 0) = q^n; with p = 1/2, P(X >= n/2 + j) = P(X <= n/2 - j). */
	long n = 1000000;
	for (long k = 499000; k <= 501000; k += 250)
		CHECK_NEAR(bc_stats__binom_sf(k, n, 0.5) + bc_stats__binom_cdf(k - 1, n, 0.5), 1, 1e-14);
	for (long j = 1; j < 3000; j += 331)
		CHECK_REL(bc_stats__binom_sf(n / 2 + j, n, 0.5), bc_stats__binom_cdf(n / 2 - j, n, 0.5), 1e-11);
	CHECK_REL(bc_stats__binom_sf(n, n, 0.9999995), exp((double)n * log(0.9999995)), 1e-9);
	CHECK_REL(bc_stats__binom_cdf(0, n, 2e-6), exp((double)n * log1p(-2e-6)), 1e-9);
	/* far tail: about 10 standard deviations above the mean is ~ 1e-23
	 * (normal approximation, order of magnitude only; common practice) */
	double t = bc_stats__binom_sf(505000, n, 0.5);
	CHECK(t > 1e-25 && t < 1e-21);
	CHECK(isnan(bc_stats__binom_sf(1, 10, 1.5)));
}

/* Cochran-Armitage trend test; check-values.md §4. */
TEST(stats_trend_malformation)
{
	/* Mills & Graubard (1987) data as used by Agresti (2007) §2.5 Table 2.7
	 * and Agresti (2002) §3.4 (M^2 = 6.57 / 6.6, P = 0.01; from memory);
	 * 6-dp values computed (own Armitage and Mantel, statsmodels). */
	const double s[] = {48, 38, 5, 1, 1};
	const double n[] = {17114, 14502, 793, 127, 38};
	const double x1[] = {0, 0.5, 1.5, 4.0, 7.0};
	bc_trend t;
	CHECK_INT(bc_stats__trend(s, n, x1, 5, &t), 0);
	CHECK_NEAR(t.z, 2.563227, 1e-6);        /* computed: own Armitage (N form) */
	CHECK_NEAR(t.p, 0.0103704, 1e-6);       /* computed: trend.py p2 */
	CHECK_NEAR(t.m2, 6.569932, 1e-6);       /* computed: Mantel (N-1) r^2 */
	CHECK_NEAR(t.m2, 6.57, 0.005);          /* Agresti 2002 §3.4, M^2 = 6.57 (from memory) */
	CHECK_NEAR(t.p_m2, 0.010372, 1e-6);     /* computed: statsmodels p = 0.0103716 */
	CHECK_NEAR(t.p_m2, 0.01, 0.005);        /* Agresti 2007 §2.5, P = 0.01 (from memory) */
	CHECK_NEAR(sqrt(t.m2), 2.563188, 1e-6); /* statsmodels test_ordinal_association zscore */
	/* Agresti 2007 §2.5 (M^2 = 1.83, P = 0.18; from memory); computed 6-dp */
	const double x2[] = {1, 2, 3, 4, 5};
	CHECK_INT(bc_stats__trend(s, n, x2, 5, &t), 0);
	CHECK_NEAR(t.z, 1.351967, 1e-6);        /* computed: own Armitage */
	CHECK_NEAR(t.m2, 1.827760, 1e-6);       /* computed: Mantel form */
	CHECK_NEAR(t.m2, 1.83, 0.005);          /* Agresti 2007 §2.5 (from memory) */
	CHECK_NEAR(t.p_m2, 0.1764, 5e-5);       /* computed: P = 0.1764 */
	CHECK_NEAR(t.p, 0.1764, 5e-5);          /* computed: P = 0.1764 */
	/* Cytel StatXact "Example 6: Cochran-Armitage exact test of trend for
	 * imbalanced data" (published, seen): asymptotic .0078 (.0039);
	 * scores after Graubard & Korn (1987) Biometrics 43:471-476. */
	const double x3[] = {0, 0.5, 1.5, 4.0, 8.0};
	CHECK_INT(bc_stats__trend(s, n, x3, 5, &t), 0);
	CHECK_NEAR(t.z, 2.660599, 1e-6);        /* computed: own Armitage */
	CHECK_NEAR(t.p, 0.0078, 5e-5);          /* StatXact page, two-sided (seen) */
	CHECK_NEAR(t.p / 2, 0.0039, 5e-5);      /* StatXact page, one-sided (seen) */
}

TEST(stats_trend_sas_and_synthetic)
{
	/* SAS/STAT User's Guide, PROC FREQ example "Cochran-Armitage Trend Test"
	 * (Pain data seen in archived SAS docs; SAS printed Z = -4.7918 for the
	 * first row level "No", from memory); computed z = 4.791813. */
	const double yes[] = {6, 7, 9, 14, 23}, no[] = {26, 26, 23, 18, 9};
	const double n[] = {32, 33, 32, 32, 32}, dose[] = {0, 1, 2, 3, 4};
	bc_trend t;
	CHECK_INT(bc_stats__trend(yes, n, dose, 5, &t), 0);
	CHECK_NEAR(t.z, 4.791813, 1e-6);        /* computed: own Armitage (SAS N form) */
	CHECK_REL(t.p, 1.65281e-06, 1e-5);      /* computed: trend.py two-sided p */
	CHECK_NEAR(sqrt(t.m2), 4.776908, 1e-6); /* computed: statsmodels zscore (Mantel form) */
	CHECK_INT(bc_stats__trend(no, n, dose, 5, &t), 0);
	CHECK_NEAR(t.z, -4.791813, 1e-6);       /* computed: proportion "No" */
	CHECK_NEAR(t.z, -4.7918, 5e-5);         /* SAS printed Z = -4.7918 (from memory) */
	/* check-values.md §4c: synthetic, formula above (computed). */
	const double s3[] = {10, 20, 30}, n3[] = {50, 50, 50}, x3[] = {1, 2, 3};
	CHECK_INT(bc_stats__trend(s3, n3, x3, 3, &t), 0);
	CHECK_NEAR(t.z, 5 / sqrt(1.5), 1e-12);  /* z = 5/sqrt(1.5) = 4.082483 */
	CHECK_REL(t.p, 4.456e-5, 1e-3);         /* computed: P = 4.456e-5 (4 digits) */
	CHECK_NEAR(t.m2, 16.555556, 1e-6);      /* computed: Mantel M^2 */
	CHECK_REL(t.p_m2, 4.725e-5, 1e-3);      /* computed: P = 4.725e-5 (4 digits) */
	/* Undefined cases (stats.h contract): one group, or no variation. */
	CHECK_INT(bc_stats__trend(s3, n3, x3, 1, &t), -1);
	const double all[] = {50, 50, 50};
	CHECK_INT(bc_stats__trend(all, n3, x3, 3, &t), -1);
	CHECK(isnan(t.z));
}

/* Logistic regression; check-values.md §5 (statsmodels Logit / GLM, tol 1e-12). */
TEST(stats_logistic_synthetic_a)
{
	const double s[] = {10, 20, 30}, n[] = {50, 50, 50}, x[] = {1, 2, 3};
	bc_logistic f;
	CHECK_INT(bc_stats__logistic(s, n, x, 3, &f), 0);
	CHECK_INT(f.converged, 1);
	/* row A: own synthetic data; computed (statsmodels Logit on 150 rows) */
	CHECK_REL(f.intercept, -2.23719364, 1e-6);
	CHECK_REL(f.intercept_se, 0.50893275, 1e-6);
	CHECK_REL(f.slope, 0.88961244, 1e-6);
	CHECK_REL(f.slope_se, 0.22540635, 1e-6);
	CHECK_REL(f.z, 3.946705, 1e-6);
	CHECK_REL(f.p, 7.9233958e-05, 1e-6);
	CHECK_REL(f.loglik, -92.34791403, 1e-6);
	CHECK_REL(f.loglik_null, -100.95175007, 1e-6);
	CHECK_REL(f.lr, 17.207672, 1e-6);
	CHECK_REL(f.lr_p, 3.3508e-05, 1e-4); /* printed to 5 digits */
}

TEST(stats_logistic_bliss_beetles)
{
	/* row B: Bliss (1935) Annals of Applied Biology 22:134-167, as in Dobson
	 * & Barnett (2008) An Introduction to Generalized Linear Models, 3rd ed.,
	 * §7.3 (b = -60.72 (5.18), 34.27 (2.91), D = 11.23; from memory);
	 * 6-digit values computed (statsmodels binomial GLM). */
	const double x[] = {1.6907, 1.7242, 1.7552, 1.7842, 1.8113, 1.8369, 1.8610, 1.8839};
	const double n[] = {59, 60, 62, 56, 63, 59, 62, 60};
	const double s[] = {6, 13, 18, 28, 52, 53, 61, 60};
	bc_logistic f;
	CHECK_INT(bc_stats__logistic(s, n, x, 8, &f), 0);
	CHECK_INT(f.converged, 1);
	CHECK_REL(f.intercept, -60.717455, 1e-5);   /* computed: statsmodels */
	CHECK_REL(f.intercept_se, 5.180711, 1e-5);  /* computed: statsmodels */
	CHECK_REL(f.slope, 34.270326, 1e-5);        /* computed: statsmodels */
	CHECK_REL(f.slope_se, 2.912140, 1e-5);      /* computed: statsmodels */
	CHECK_NEAR(f.intercept, -60.72, 0.005);     /* Dobson & Barnett §7.3 (from memory) */
	CHECK_NEAR(f.slope_se, 2.91, 0.005);        /* Dobson & Barnett §7.3 (from memory) */
	/* deviance = 2 (saturated - fitted) log-likelihood */
	double sat = 0;
	for (int i = 0; i < 8; i++) {
		double p = s[i] / n[i];
		sat += s[i] * log(p) + (s[i] < n[i] ? (n[i] - s[i]) * log1p(-p) : 0);
	}
	CHECK_REL(2 * (sat - f.loglik), 11.23223, 1e-5); /* computed: statsmodels deviance */
	CHECK_NEAR(2 * (sat - f.loglik), 11.23, 0.005);   /* Dobson & Barnett §7.3, D = 11.23 (from memory) */
}

TEST(stats_logistic_snoring_malformation)
{
	/* row C: Agresti 2002 Table 4.2 / Agresti 2007 Table 3.1 (logit
	 * -3.87 + 0.40x; from memory); 6-digit values computed (statsmodels). */
	const double sc[] = {24, 35, 21, 30}, nc[] = {1379, 638, 213, 254}, xc[] = {0, 2, 4, 5};
	bc_logistic f;
	CHECK_INT(bc_stats__logistic(sc, nc, xc, 4, &f), 0);
	CHECK_INT(f.converged, 1);
	CHECK_REL(f.intercept, -3.866248, 1e-5);   /* computed: statsmodels */
	CHECK_REL(f.intercept_se, 0.166214, 1e-5); /* computed: statsmodels */
	CHECK_REL(f.slope, 0.397337, 1e-5);        /* computed: statsmodels */
	CHECK_REL(f.slope_se, 0.050011, 1e-4);     /* computed: statsmodels (5 significant digits) */
	CHECK_NEAR(f.intercept, -3.87, 0.005);     /* Agresti 2007 Table 3.1 (from memory) */
	CHECK_NEAR(f.slope, 0.40, 0.005);          /* Agresti 2007 Table 3.1 (from memory) */
	/* row D: malformation data of §4a on scores 0, 0.5, 1.5, 4, 7; Agresti
	 * 2002 compares Wald, LR and score tests (numbers from memory); computed. */
	const double sd[] = {48, 38, 5, 1, 1}, nd[] = {17114, 14502, 793, 127, 38}, xd[] = {0, 0.5, 1.5, 4.0, 7.0};
	CHECK_INT(bc_stats__logistic(sd, nd, xd, 5, &f), 0);
	CHECK_INT(f.converged, 1);
	CHECK_REL(f.intercept, -5.960461, 1e-5);   /* computed: statsmodels */
	CHECK_REL(f.intercept_se, 0.115429, 1e-5); /* computed: statsmodels */
	CHECK_REL(f.slope, 0.316560, 1e-5);        /* computed: statsmodels */
	CHECK_REL(f.slope_se, 0.125447, 1e-5);     /* computed: statsmodels */
	CHECK_REL(f.z * f.z, 6.36786, 1e-5);       /* computed: Wald z^2 */
	CHECK_REL(f.lr, 4.25328, 1e-5);            /* computed: LR */
}

TEST(stats_logistic_pain_and_hours)
{
	/* row E: SAS Pain data of §4b (Yes on dose); computed (statsmodels Logit). */
	const double se[] = {6, 7, 9, 14, 23}, ne[] = {32, 33, 32, 32, 32}, xe[] = {0, 1, 2, 3, 4};
	bc_logistic f;
	CHECK_INT(bc_stats__logistic(se, ne, xe, 5, &f), 0);
	CHECK_INT(f.converged, 1);
	CHECK_REL(f.intercept, -1.86677432, 1e-6);
	CHECK_REL(f.intercept_se, 0.35670068, 1e-6);
	CHECK_REL(f.slope, 0.61319609, 1e-6);
	CHECK_REL(f.slope_se, 0.13473961, 1e-6);
	CHECK_REL(f.p, 5.3398831e-06, 1e-6);
	CHECK_REL(f.lr, 24.093786, 1e-6);
	/* row F: data as shown in the English Wikipedia article "Logistic
	 * regression" (from memory, unverified); computed (statsmodels Logit).
	 * Each student is a group of one. */
	const double xf[] = {0.5, 0.75, 1, 1.25, 1.5, 1.75, 1.75, 2, 2.25, 2.5,
			     2.75, 3, 3.25, 3.5, 4, 4.25, 4.5, 4.75, 5, 5.5};
	const double sf[] = {0, 0, 0, 0, 0, 0, 1, 0, 1, 0, 1, 0, 1, 0, 1, 1, 1, 1, 1, 1};
	double nf[20];
	for (int i = 0; i < 20; i++)
		nf[i] = 1;
	CHECK_INT(bc_stats__logistic(sf, nf, xf, 20, &f), 0);
	CHECK_INT(f.converged, 1);
	CHECK_REL(f.intercept, -4.07771343, 1e-6);
	CHECK_REL(f.intercept_se, 1.76099431, 1e-6);
	CHECK_REL(f.slope, 1.50464543, 1e-6);
	CHECK_REL(f.slope_se, 0.62872085, 1e-6);
	CHECK_REL(f.p, 0.016702807, 1e-6);
	CHECK_REL(f.lr, 11.666130, 1e-6);
	CHECK_REL(f.lr_p, 0.000636483, 1e-5);
}

TEST(stats_logistic_separation)
{
	/* Complete and quasi-complete separation: the maximum-likelihood
	 * estimate does not exist (Albert A, Anderson JA (1984) On the existence
	 * of maximum likelihood estimates in logistic regression models,
	 * Biometrika 71:1-10; from memory). */
	const double n[] = {5, 5, 5}, x[] = {1, 2, 3};
	const double complete[] = {0, 0, 5}, quasi[] = {0, 3, 5}, fine[] = {2, 3, 5};
	bc_logistic f;
	CHECK_INT(bc_stats__logistic(complete, n, x, 3, &f), 0);
	CHECK_INT(f.converged, 0);
	CHECK(isnan(f.slope) || fabs(f.slope) > 1e3);
	CHECK_INT(bc_stats__logistic(quasi, n, x, 3, &f), 0);
	CHECK_INT(f.converged, 0);
	CHECK(isnan(f.slope) || fabs(f.slope) > 1e3);
	/* Overlap on both sides of every cut: a finite estimate exists. */
	CHECK_INT(bc_stats__logistic(fine, n, x, 3, &f), 0);
	CHECK_INT(f.converged, 1);
	CHECK(isfinite(f.slope) && f.slope > 0);
	/* One distinct score: the slope is not identifiable. */
	const double same[] = {2, 2, 2};
	CHECK_INT(bc_stats__logistic(fine, n, same, 3, &f), 0);
	CHECK_INT(f.converged, 0);
	/* No data at all. */
	const double zero[] = {0, 0, 0};
	CHECK_INT(bc_stats__logistic(zero, zero, x, 3, &f), -1);
}

TEST(stats_breakpoint)
{
	/* Two clean segments: logL_split = 0, logL_const = 40 log(1/2), so
	 * LR = 80 log 2 (exact by hand from the binomial likelihood). */
	const double s[] = {0, 0, 10, 10}, n[] = {10, 10, 10, 10};
	size_t at;
	double lr;
	CHECK_INT(bc_stats__breakpoint(s, n, 4, &at, &lr), 0);
	CHECK_INT(at, 2);
	CHECK_NEAR(lr, 80 * log(2), 1e-12);
	/* 10/50, 20/50, 30/50: split after the first bin, LR = 2 (logL_split -
	 * logL_const) with logL_split = 10 log .2 + 40 log .8 + 50 log .5 and
	 * logL_const = 60 log .4 + 90 log .6 (by hand from the definition). */
	const double s3[] = {10, 20, 30}, n3[] = {50, 50, 50};
	CHECK_INT(bc_stats__breakpoint(s3, n3, 3, &at, &lr), 0);
	CHECK_INT(at, 1);
	double want = 2 * ((10 * log(0.2) + 40 * log(0.8) + 100 * log(0.5)) - (60 * log(0.4) + 90 * log(0.6)));
	CHECK_NEAR(lr, want, 1e-10);
	CHECK_INT(bc_stats__breakpoint(s3, n3, 1, &at, &lr), -1); /* stats.h: k < 2 */
}

TEST(stats_distributions)
{
	/* check-values.md header: z = Phi^-1(0.975) = 1.959963984540054 */
	CHECK_NEAR(bc_stats__normal_quantile(0.975), 1.959963984540054, 1e-14);
	CHECK_NEAR(bc_stats__normal_quantile(0.025), -1.959963984540054, 1e-14);
	CHECK_NEAR(bc_stats__normal_quantile(0.5), 0, 1e-15);
	/* Round trip through the CDF (definition), across all three regions of
	 * Acklam's approximation. */
	const double ps[] = {1e-300, 1e-20, 1e-5, 0.02, 0.03, 0.3, 0.7, 0.97, 0.99, 1 - 1e-9};
	for (size_t i = 0; i < sizeof ps / sizeof ps[0]; i++) {
		double z = bc_stats__normal_quantile(ps[i]);
		if (ps[i] < 0.5) /* lower tail: Phi(z) = Q(-z), exact in relative terms */
			CHECK_REL(bc_stats__normal_sf(-z), ps[i], 1e-13);
		else /* upper tail: compare 1 - p, which is what the quantile resolves */
			CHECK_REL(bc_stats__normal_sf(z), 1 - ps[i], 1e-13);
	}
	/* Chi-square tails against closed forms for integer df (Abramowitz &
	 * Stegun (1964) 26.4.4 and 26.4.5, from memory): df 4: e^{-x/2}(1 + x/2);
	 * df 3: 2 Q(sqrt x) + sqrt(2x/pi) e^{-x/2}; df 6: e^{-x/2}(1 + x/2 + x^2/8). */
	const double xs[] = {0.01, 0.5, 2, 3.5, 7, 20, 60};
	for (size_t i = 0; i < sizeof xs / sizeof xs[0]; i++) {
		double x = xs[i], h = exp(-x / 2);
		CHECK_REL(bc_stats__chi2_sf(x, 4), h * (1 + x / 2), 1e-12);
		CHECK_REL(bc_stats__chi2_sf(x, 6), h * (1 + x / 2 + x * x / 8), 1e-12);
		CHECK_REL(bc_stats__chi2_sf(x, 3),
			  2 * bc_stats__normal_sf(sqrt(x)) + sqrt(2 * x / 3.14159265358979323846) * h, 1e-12);
		CHECK_REL(bc_stats__chi2_sf(x, 1), 2 * bc_stats__normal_sf(sqrt(x)), 1e-14);
	}
	CHECK(bc_stats__chi2_sf(0, 3) == 1);
}
