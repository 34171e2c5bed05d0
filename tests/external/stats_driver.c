/*
 * stats_driver.c - exposes src/stats.c to tests/external/test_stats_scipy.py:
 * reads one case per line on stdin, prints one result line per case
 * (numbers with 17 significant digits). Built by that script.
 *
 *   quantile P | normal_sf Z | chi2_sf X DF
 *   wilson X N LEVEL            -> rc lo hi
 *   newcombe X1 N1 X2 N2 LEVEL  -> rc diff lo hi
 *   fisher A B C D              -> p
 *   binom_sf K N P | binom_cdf K N P -> p
 *   trend K s1 n1 x1 ... sK nK xK    -> rc z p m2 p_m2
 *   logistic K s1 n1 x1 ...          -> rc converged b0 se0 b1 se1 z p ll ll0 lr lr_p
 *   breakpoint K s1 n1 ... sK nK     -> rc at lr
 */
#include "stats.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define MAXK 4096

static double s[MAXK], n[MAXK], x[MAXK];

static int read_groups(size_t *k, int with_x)
{
	unsigned long kk;
	if (scanf("%lu", &kk) != 1 || kk > MAXK)
		return -1;
	for (size_t i = 0; i < kk; i++) {
		if (scanf("%lf %lf", &s[i], &n[i]) != 2)
			return -1;
		if (with_x && scanf("%lf", &x[i]) != 1)
			return -1;
	}
	*k = kk;
	return 0;
}

int main(void)
{
	char cmd[32];
	while (scanf("%31s", cmd) == 1) {
		double a, b, c, d, e, lo, hi, diff;
		long ka, kb, kc, kd;
		size_t k;
		if (!strcmp(cmd, "quantile") && scanf("%lf", &a) == 1) {
			printf("%.17g\n", bc_stats__normal_quantile(a));
		} else if (!strcmp(cmd, "normal_sf") && scanf("%lf", &a) == 1) {
			printf("%.17g\n", bc_stats__normal_sf(a));
		} else if (!strcmp(cmd, "chi2_sf") && scanf("%lf %lf", &a, &b) == 2) {
			printf("%.17g\n", bc_stats__chi2_sf(a, b));
		} else if (!strcmp(cmd, "wilson") && scanf("%lf %lf %lf", &a, &b, &c) == 3) {
			int rc = bc_stats__wilson(a, b, c, &lo, &hi);
			printf("%d %.17g %.17g\n", rc, lo, hi);
		} else if (!strcmp(cmd, "newcombe") && scanf("%lf %lf %lf %lf %lf", &a, &b, &c, &d, &e) == 5) {
			int rc = bc_stats__newcombe_diff(a, b, c, d, e, &diff, &lo, &hi);
			printf("%d %.17g %.17g %.17g\n", rc, diff, lo, hi);
		} else if (!strcmp(cmd, "fisher") && scanf("%ld %ld %ld %ld", &ka, &kb, &kc, &kd) == 4) {
			printf("%.17g\n", bc_stats__fisher_two_sided(ka, kb, kc, kd));
		} else if (!strcmp(cmd, "binom_sf") && scanf("%ld %ld %lf", &ka, &kb, &c) == 3) {
			printf("%.17g\n", bc_stats__binom_sf(ka, kb, c));
		} else if (!strcmp(cmd, "binom_cdf") && scanf("%ld %ld %lf", &ka, &kb, &c) == 3) {
			printf("%.17g\n", bc_stats__binom_cdf(ka, kb, c));
		} else if (!strcmp(cmd, "trend") && read_groups(&k, 1) == 0) {
			bc_trend t;
			int rc = bc_stats__trend(s, n, x, k, &t);
			printf("%d %.17g %.17g %.17g %.17g\n", rc, t.z, t.p, t.m2, t.p_m2);
		} else if (!strcmp(cmd, "logistic") && read_groups(&k, 1) == 0) {
			bc_logistic f;
			int rc = bc_stats__logistic(s, n, x, k, &f);
			printf("%d %d %.17g %.17g %.17g %.17g %.17g %.17g %.17g %.17g %.17g %.17g\n", rc, f.converged,
			       f.intercept, f.intercept_se, f.slope, f.slope_se, f.z, f.p, f.loglik, f.loglik_null,
			       f.lr, f.lr_p);
		} else if (!strcmp(cmd, "breakpoint") && read_groups(&k, 0) == 0) {
			size_t at;
			int rc = bc_stats__breakpoint(s, n, k, &at, &a);
			printf("%d %zu %.17g\n", rc, at, a);
		} else {
			fprintf(stderr, "stats_driver: bad case '%s'\n", cmd);
			return 2;
		}
	}
	return 0;
}
