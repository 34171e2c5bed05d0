/*
 * bench_resolve.c - speed of bc_age_resolve on a literature-like stream:
 * 1,000,000 texts drawn from 2,000 distinct strings, against the default
 * built-in chart. A benchmark, not a test: prints the rate, asserts nothing.
 * Target (design): >= 1,000,000 texts/s on one core once the cache is warm.
 */
#define _POSIX_C_SOURCE 200809L
#include "bathychron.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

static double now(void)
{
	struct timespec ts;
	clock_gettime(CLOCK_MONOTONIC, &ts);
	return (double)ts.tv_sec + (double)ts.tv_nsec * 1e-9;
}

int main(int argc, char **argv)
{
	long total = argc > 1 ? atol(argv[1]) : 1000000, distinct = argc > 2 ? atol(argv[2]) : 2000;
	static const char *const stages[] = {"Maastrichtian", "Campanian", "Santonian", "Coniacian", "Turonian",
		"Cenomanian", "Albian", "Aptian", "Barremian", "Hauterivian", "Valanginian", "Berriasian", "Tithonian",
		"Kimmeridgian", "Oxfordian", "Callovian", "Bathonian", "Bajocian", "Aalenian", "Toarcian", "Danian",
		"Ypresian", "Lutetian", "Priabonian", "Rupelian", "Chattian", "Aquitanian", "Messinian", "Norian", "Carnian"};
	static const char *const forms[] = {"%s", "%s?", "late %s", "early %s", "upper %s", "Lower %s", "middle %s",
		"?%s", "cf. %s", "basal %s", "%s Stage", "  %s  ", "%s-Maastrichtian", "Campanian to %s", "uppermost %s",
		"%s (upper part)", "%sx"};
	size_t ns = sizeof stages / sizeof stages[0], nf = sizeof forms / sizeof forms[0];
	char **texts = calloc((size_t)distinct, sizeof *texts);
	if (!texts)
		return 3;
	for (long i = 0; i < distinct; i++) {
		char buf[200];
		long k = i % (long)(ns * nf + 200);
		if (k < (long)(ns * nf))
			snprintf(buf, sizeof buf, forms[k / (long)ns], stages[k % (long)ns]);
		else
			snprintf(buf, sizeof buf, "%ld.%ld-%ld Ma", 60 + k % 90, k % 10, 50 + k % 10);
		if (i >= (long)(ns * nf + 200)) /* more distinct strings: vary case and spacing */
			for (char *p = buf; *p; p++)
				if ((p - buf + i) % 3 == 0 && *p >= 'a' && *p <= 'z')
					*p = (char)(*p - 32);
		size_t n = strlen(buf);
		texts[i] = malloc(n + 12);
		snprintf(texts[i], n + 12, "%s%s", buf, i >= 2 * (long)(ns * nf + 200) ? " " : "");
	}
	bc_err err = {0};
	bc_chart *chart = NULL;
	bc_resolver *r = NULL;
	if (bc_chart_builtin(&chart, NULL, &err) || bc_resolver_new(&r, chart, &err)) {
		fprintf(stderr, "bench_resolve: %s\n", err.msg);
		return 3;
	}
	bc_age a;
	double t0 = now();
	for (long i = 0; i < distinct; i++)
		bc_age_resolve(r, texts[i], &a);
	double t1 = now();
	unsigned long long seed = 42, unknown = 0;
	for (long i = 0; i < total; i++) {
		seed = seed * 6364136223846793005ull + 1442695040888963407ull;
		bc_age_resolve(r, texts[(seed >> 33) % (unsigned long long)distinct], &a);
		unknown += a.status == BC_AGE_UNKNOWN;
	}
	double t2 = now();
	printf("resolve: first pass over %ld distinct texts: %.3f s (%.0f texts/s, uncached)\n", distinct, t1 - t0,
		(double)distinct / (t1 - t0));
	printf("resolve: %ld texts drawn from %ld distinct: %.3f s = %.0f texts/s (target >= 1000000); %llu unknown\n",
		total, distinct, t2 - t1, (double)total / (t2 - t1), unknown);
	bc_resolver_free(r);
	bc_chart_free(chart);
	for (long i = 0; i < distinct; i++)
		free(texts[i]);
	free(texts);
	return 0;
}
