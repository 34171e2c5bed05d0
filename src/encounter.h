/*
 * encounter.h - private pieces of the encounter-rate module: a small seeded
 * pseudo-random generator and the samplers the Monte Carlo uses. Pure and
 * reentrant: every state lives in the caller's bc_rng.
 */
#ifndef BC_ENCOUNTER_H
#define BC_ENCOUNTER_H

#include "internal.h"

#include <stdint.h>

/**
 * xoshiro256** (Blackman D, Vigna S (2021) Scrambled linear pseudorandom
 * number generators. ACM Transactions on Mathematical Software 47(4):36),
 * its 256-bit state filled from the seed by splitmix64 (Steele GL, Lea D,
 * Flood CH (2014) Fast splittable pseudorandom number generators. OOPSLA
 * 2014), as both papers recommend. The same seed gives the same stream on
 * every platform.
 */
typedef struct bc_rng {
	uint64_t s[4];
} bc_rng;

void bc_rng__seed(bc_rng *r, uint64_t seed);

/** xoshiro256**'s step, inline for the draw loops that call it for every
 * occurrence; bc_rng__next is the same as a function. */
static inline uint64_t bc_rng__step(bc_rng *r)
{
	uint64_t *s = r->s;
	uint64_t x = s[1] * 5;
	uint64_t out = ((x << 7) | (x >> 57)) * 9;
	uint64_t t = s[1] << 17;
	s[2] ^= s[0];
	s[3] ^= s[1];
	s[1] ^= s[2];
	s[0] ^= s[3];
	s[2] ^= t;
	s[3] = (s[3] << 45) | (s[3] >> 19);
	return out;
}

uint64_t bc_rng__next(bc_rng *r);
/** Uniform on [0, 1) with 53 random bits. */
double bc_rng__uniform(bc_rng *r);
/** Standard normal (Box-Muller, one value per call). */
double bc_rng__normal(bc_rng *r);
/** Exponential with the given rate (> 0). */
double bc_rng__exponential(bc_rng *r, double rate);
/** Gamma(shape, 1), shape > 0: Marsaglia G, Tsang WW (2000) A simple method
 * for generating gamma variables. ACM TOMS 26(3):363-372, with their
 * U^(1/a) boost for shape < 1. */
double bc_rng__gamma(bc_rng *r, double shape);
/** Beta(a, b), a, b > 0, as X / (X + Y) of two gammas. */
double bc_rng__beta(bc_rng *r, double a, double b);
/** Binomial(n, p) by n Bernoulli trials (n is small in our use). */
long bc_rng__binomial(bc_rng *r, long n, double p);

/**
 * The q-quantile (0 <= q <= 1) of n values already sorted ascending, by
 * linear interpolation between order statistics (Hyndman & Fan 1996,
 * type 7, the default of R and NumPy). n = 0 gives NaN.
 */
double bc_encounter__quantile(const double *sorted, size_t n, double q);

/** The options a report was built with (zones and taxon owned by the report). Borrowed. */
const bc_encounter_options *bc_encounter__report_options(const bc_encounter_report *r);

#endif
