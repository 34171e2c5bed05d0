/*
 * resample.h - private interface of resample.c: the shift table under
 * uncertainty and bias (age/depth resampling draws, reference weighting,
 * depth affinity against the sampled background, subsampling to a quota,
 * taphonomic sensitivity). Reuses shift.c's binning, zoning and counting.
 */
#ifndef BC_RESAMPLE_H
#define BC_RESAMPLE_H

#include "internal.h"
#include "output.h"
#include "shift.h"

#include <stdint.h>

/* ---- random numbers ------------------------------------------------ */

/*
 * The generator is encounter.c's bc_rng (xoshiro256**, Blackman & Vigna
 * 2021, its state filled by splitmix64, Steele, Lea & Flood 2014). Each
 * draw gets its own generator, seeded with a key mixed from (seed, stream,
 * index), so a draw's numbers depend only on those three values, never on
 * which thread runs it or in which order.
 */
#include "encounter.h"

/** The random streams: each has its own sequence of draws for the same seed. */
enum {
	BC_RESAMPLE__STREAM_DRAWS = 1,  /* shift's age/depth draws */
	BC_RESAMPLE__STREAM_REFS = 2,   /* reference bootstrap */
	BC_RESAMPLE__STREAM_QUOTA = 3,  /* subsampling to a quota */
	BC_RESAMPLE__STREAM_RANGES = 4  /* ranges' age/depth draws */
};

/** Seeds `r` for draw `index` of `stream` (BC_RESAMPLE__STREAM_*). */
void bc_resample__rng_init(bc_rng *r, uint64_t seed, uint64_t stream, uint64_t index);

/** The next output of the generator (encounter.h's inline step). */
static inline uint64_t bc_resample__next(bc_rng *r) { return bc_rng__step(r); }

/** Uniform on [0, 1) with 53 random bits (as bc_rng__uniform). */
static inline double bc_resample__uniform(bc_rng *r) { return (double)(bc_resample__next(r) >> 11) * 0x1.0p-53; }

/** A drawn age: older - u (older - younger) with u uniform on [0, 1), so
 * never older than `older`. `span` = older - younger. shift's and ranges'
 * draws both use it. */
static inline double bc_resample__age(bc_rng *r, double older, double span) { return older - bc_resample__uniform(r) * span; }

/** A drawn depth: dmin + u (dmax - dmin), u uniform on [0, 1). `span` = dmax - dmin. */
static inline double bc_resample__depth(bc_rng *r, double dmin, double span) { return dmin + bc_resample__uniform(r) * span; }

/** Uniform integer in 0 .. n-1 (n > 0), without modulo bias. */
uint64_t bc_resample__below(bc_rng *r, uint64_t n);

/** The number of worker threads for `draws` draws: `threads`, or one per
 * online processor when <= 0, at most 64 and at most `draws` (at least 1). */
int bc_resample__thread_count(int threads, size_t draws);

/** One draw: `thread` (0 .. nt-1) names the caller's scratch; a draw must
 * write only its own results or that thread's scratch. */
typedef void (*bc_resample__draw_fn)(void *ctx, int thread, size_t draw);

/**
 * Runs draws 0 .. draws-1 on `nt` threads: thread t runs draws t, t + nt,
 * ..., so which thread runs a draw never changes its numbers (each draw
 * seeds its own stream). A thread that cannot be started has its share run
 * by the caller. Returns when every draw has run.
 */
void bc_resample__parallel(int nt, size_t draws, bc_resample__draw_fn fn, void *ctx);

/* ---- resampling draws ---------------------------------------------- */

/** What the draw engine needs: occurrences, bins and the rules. */
typedef struct bc_draw_spec {
	const bc_shift__occ *occ;
	size_t n;
	const bc_shift__bin *bins;  /* oldest first */
	size_t nbins;
	int span_rule;              /* only BC_SPAN_MAX matters: too long ranges stay out */
	double span_max_myr;
	unsigned what;              /* BC_RESAMPLE_AGE | BC_RESAMPLE_DEPTH */
	int bootstrap;
	size_t draws;
	uint64_t seed;
	int threads;                /* <= 0: one per online processor */
} bc_draw_spec;

/** Per-draw results, in draw order. */
typedef struct bc_draw_result {
	size_t draws, nbins;
	double *frac;               /* draws x nbins: frac_deep; NaN when no shallow or deep */
	int32_t *brk;               /* per draw: index of the bin after the breakpoint, -1 none */
	double *trend_z, *trend_p;  /* per draw: Cochran-Armitage z and p (NaN when undefined) */
	int threads_used;
	size_t n_pop;               /* occurrences that can be counted (overlap a bin; not left out by --span max) */
	size_t n_age_drawn, n_depth_drawn; /* of those, how many get a drawn age / a drawn depth */
} bc_draw_result;

/**
 * Runs `spec->draws` draws. In each, every occurrence whose age range is
 * not inside one bin gets an age uniform on [younger, older) and so a bin
 * (shift.c's point-age rule), and every occurrence straddling the first
 * depth boundary gets a depth uniform on [min, max) and so a zone; with
 * `bootstrap` the occurrences are first drawn n times with replacement.
 * Returns 0 or BC_ENOMEM; free the result with bc_resample__draws_free.
 */
int bc_resample__draws(bc_draw_result *out, const bc_draw_spec *spec, double split, bc_err *err);
void bc_resample__draws_free(bc_draw_result *r);

/**
 * The draws' fast path for "runs": an age range [younger, older] whose first
 * overlapped bin is k0 and that overlaps 2..16 contiguous bins, with older
 * <= bins[k0].older and younger clear of the last bin's younger bound.
 * run_length gives that number of bins L (0: not a run); run_bin gives the
 * bin of an age t in [younger, older] without a branch on t, and must equal
 * bc_shift__point_bin(bins, nbins, t, 0) (tested).
 */
size_t bc_resample__run_length(const bc_shift__bin *bins, size_t nbins, size_t k0, double older, double younger);
size_t bc_resample__run_bin(const bc_shift__bin *bins, size_t k0, size_t L, double t);

/* ---- depth affinity ------------------------------------------------ */

typedef struct bc_affinity {
	double k, n;                /* focal deep, focal shallow + deep (over bins with a background) */
	double p0, expected;        /* expected deep share and count */
	double p_deep, p_shallow;   /* P(X >= k), P(X <= k), X ~ Binomial(n, p0) */
	const char *verdict;        /* "deep", "shallow", "none"; static */
} bc_affinity;

/**
 * The binomial depth-affinity test over `nb` bins: focal deep k[b] of n[b]
 * against background deep K[b] of N[b] (the caller decides whether the
 * background includes the focal occurrences). `pooled` 1: p0 = sum K / sum N;
 * 0: p0 = sum n_b K_b/N_b / sum n_b. Bins with n[b] = 0 or N[b] = 0 are
 * left out. Counts are rounded to integers. Verdict at one-sided `alpha`.
 */
void bc_resample__affinity(bc_affinity *out, const double *k, const double *n, const double *K, const double *N,
			   size_t nb, int pooled, double alpha);

/* ---- results kept with the table ------------------------------------ */

/** What resample.c computed, kept with the table (bc_shift.rs). */
struct bc_resample {
	int has_draws;
	bc_draw_result dr;
	size_t n_pop, n_age_drawn, n_depth_drawn; /* draw population and how many get a drawn age / depth */
	size_t replicates;          /* reference bootstrap and quota */
	int has_refw;
	size_t n_units;
	int has_bg;
	size_t bg_selected;         /* occurrences in the background computation */
	int has_quota;
	int has_taph;
	bc_shift *art, *dis;        /* articulated-only and disarticulated-only tables; NULL when empty */
	char art_note[1100], dis_note[1100];
};

/** The bin of `t` with the same bounds as `b`, or NULL (tables of subsets have their own bin spans). */
const bc_shift_bin *bc_resample__same_bin(const bc_shift *t, const bc_shift_bin *b);

/* ---- hooks called by shift.c --------------------------------------- */

/** Parses the uncertainty options; returns 1 when `name` is not one of them. */
int bc_resample__option_set(bc_shift_options *o, const char *name, const char *value, bc_err *err);
/** Checks option combinations before any work; 0 or BC_EUSAGE. */
int bc_resample__check(const bc_shift_options *o, bc_err *err);
/** Whether any uncertainty option is set. */
int bc_resample__wanted(const bc_shift_options *o);
/** Runs everything the options ask for and fills the bins' and tests' fields. `chart` as passed to bc_shift_compute. */
int bc_resample__run(bc_shift *s, bc_db *db, const bc_chart *chart, bc_err *err);
void bc_resample__free(struct bc_resample *rs);
/** Extra table columns (after shift's own), their values for bin `i` from column `col0`, and meta entries. */
int bc_resample__columns(const bc_shift *s, bc_table *t, bc_err *err);
void bc_resample__row(const bc_shift *s, bc_table *t, size_t i, size_t col0);
int bc_resample__tests(const bc_shift *s, bc_table *t, bc_err *err);
int bc_resample__stamp(const bc_shift *s, bc_table *t, bc_err *err);
/** The options as command-line arguments (" --draws 1000 --seed 1 ..."); --threads is not one: it never changes results. */
void bc_resample__describe_options(const bc_shift_options *o, bc_buf *b);
/** Sentences for the methods paragraph, and the references they cite. */
void bc_resample__methods(const bc_shift *s, bc_buf *b);
void bc_resample__references(const bc_shift *s, bc_buf *b);

/* shift.c: the methods stamp of a table (also used by the taphonomy table). */
int bc_shift__stamp(const bc_shift *s, bc_table *t, bc_err *err);

#endif
