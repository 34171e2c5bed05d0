/*
 * shift.h - private pieces of the shift computation, reusable by later
 * work (resampling draws, reference weighting, figures) and for ranges.c:
 * the selection and stamp lines both tables share, the in-memory occurrence
 * assignment, zoning, and one function that counts a given assignment
 * into bins.
 */
#ifndef BC_SHIFT_H
#define BC_SHIFT_H

#include "internal.h"
#include "output.h"
#include <stdint.h>

/** One selected occurrence with a palaeodepth, as the counting needs it. */
typedef struct bc_shift__occ {
	int64_t pk;            /* occurrence_pk */
	double older, younger; /* age range, Ma (older >= younger) */
	double dmin, dmax;     /* palaeodepth range, m */
	int32_t ref;           /* interned reference key, -1 when none */
	int32_t loc;           /* dense locality index, -1 when none */
	uint8_t artic;         /* BC_SHIFT__ART_* */
	uint8_t zone2;         /* BC_SHIFT__SHALLOW/DEEP/STRADDLE at the first boundary */
	uint8_t zonek;         /* zone 0..n_zones (shallowest first), or BC_SHIFT__ZSTRADDLE */
} bc_shift__occ;

enum { BC_SHIFT__SHALLOW = 0, BC_SHIFT__DEEP = 1, BC_SHIFT__STRADDLE = 2 };
enum { BC_SHIFT__ART_ARTICULATED = 0, BC_SHIFT__ART_PARTLY, BC_SHIFT__ART_DISARTICULATED, BC_SHIFT__ART_UNKNOWN };
#define BC_SHIFT__ZSTRADDLE 255

/** A bin: older bound inclusive, younger exclusive (see doc/shift.md). */
typedef struct bc_shift__bin {
	char *name;
	double older, younger;
} bc_shift__bin;

/* Layout of one bin's counts in the flat array bc_shift__count fills. */
enum {
	BC_SHIFT__C_SHALLOW = 0, BC_SHIFT__C_DEEP = 1, BC_SHIFT__C_STRADDLE = 2,
	BC_SHIFT__C_ART = 3,         /* four articulation classes, 3..6 */
	BC_SHIFT__C_ZSTRADDLE = 7,   /* ranges crossing any --zones boundary */
	BC_SHIFT__C_ZONE = 8         /* n_zones + 1 zone counts follow */
};
/** Doubles per bin in the counts array for `n_zones` boundaries. */
size_t bc_shift__stride(size_t n_zones);

/**
 * The zone of a depth range against increasing boundaries b[0..nb-1]:
 * 0..nb (0 = above b[0]), or -1 when it crosses a boundary. The rule at
 * each boundary S: above when max <= S and min < S, below when min >= S.
 */
int bc_shift__zone(double dmin, double dmax, const double *b, size_t nb);

/** What one counting pass did. */
typedef struct bc_shift__tally {
	size_t n_too_long, n_outside, n_used, n_multi;
} bc_shift__tally;

/**
 * Counts `occ` into `nbins` bins (oldest first, not overlapping) under
 * the span rule. `counts` has nbins * bc_shift__stride(n_zones) doubles
 * and is zeroed first. When `n_refs`/`n_locs` are not NULL they receive
 * distinct reference/locality counts per bin (`ref_keys`/`loc_keys` =
 * the number of interned keys). Returns 0 or BC_ENOMEM.
 */
int bc_shift__count(double *counts, size_t *n_refs, size_t *n_locs, bc_shift__tally *tally,
		    const bc_shift__occ *occ, size_t n, const bc_shift__bin *bins, size_t nbins,
		    int span_rule, double max_myr, size_t n_zones, size_t ref_keys, size_t loc_keys, bc_err *err);

/**
 * Reads a bins file (TSV or CSV: name, older bound, younger bound, in Ma;
 * optional header; '#' lines skipped). Bins come back oldest first; the
 * caller frees with bc_shift__bins_free.
 */
int bc_shift__bins_read(bc_shift__bin **out, size_t *n, const char *path, bc_err *err);
void bc_shift__bins_free(bc_shift__bin *bins, size_t n);

/**
 * Where an age range [bot, top] (Ma, top >= bot) falls among `nbins` bins
 * (oldest first, not overlapping): returns the majority bin (the one
 * holding most of the range, ties to the older bin; for a point age the
 * bin holding it, a bin holding its older bound), or `nbins` when the
 * range lies outside every bin. `k0`/`k1` (may be NULL) receive the range
 * [k0, k1) of bins to visit for overlaps, `total` the summed overlap (1 for
 * a point age). bc_shift__count and the resampling draws both use it.
 */
size_t bc_shift__place(const bc_shift__bin *bins, size_t nbins, double top, double bot,
		       size_t *k0, size_t *k1, double *total);

/**
 * The bin of a point age t: the bin whose older bound is inclusive (a bin
 * holds its older bound, not its younger one); at the very youngest edge,
 * the bin ending there; `nbins` when t lies in no bin. `j` is a starting
 * index no greater than that of the first bin whose younger bound lies
 * below t (0 always works; the search goes on linearly from it).
 * bc_shift__place uses it for point ages, the resampling draws for every
 * drawn age, so both follow one rule.
 */
static inline size_t bc_shift__point_bin(const bc_shift__bin *bins, size_t nbins, double t, size_t j)
{
	while (j < nbins && !(bins[j].younger < t))
		j++;
	if (j < nbins && bins[j].older >= t)
		return j;
	if (j > 0 && bins[j - 1].younger == t)
		return j - 1;
	return nbins;
}

/* ---- the selection and stamp that shift and ranges share ---------- */

/** The articulation class (BC_SHIFT__ART_*) a text names, or -1; accepts
 * "partly-articulated" and "partly_articulated". Its name, or NULL. */
int bc_shift__art_class(const char *s);
const char *bc_shift__art_name(int c);

/** One selected row (after --region), as bc_shift__select hands it over.
 * Strings are borrowed for the call only. */
typedef struct bc_shift__row {
	int64_t pk;
	double older, younger;  /* Ma */
	double dmin, dmax;      /* m; NaN when not stored */
	int64_t loc;            /* locality fid, -1 when none */
	double lon, lat;        /* the locality's WGS 84 coordinates with --region; NaN when none or no region */
	const char *ref, *art;  /* reference key, articulation class; "" when none */
	const char *name;       /* the name at the rank asked ("" when none); NULL when no rank */
	/* From the column snapshot: ref and art as indices into its table of
	 * n_ids distinct strings (the same string, the same index), so a
	 * reader can map each distinct string once. n_ids 0: no indices. */
	uint32_t ref_id, art_id;
	size_t n_ids;
} bc_shift__row;

/** Called once per selected row; a non-zero return stops the selection and is returned. */
typedef int (*bc_shift__row_fn)(void *ctx, const bc_shift__row *row, bc_err *err);

/** What the selection saw. */
typedef struct bc_shift__selected {
	size_t n_selected;          /* rows matching group/taxon/preservation */
	size_t n_no_coordinates;    /* left out by --region: no coordinates */
	size_t n_outside_region;    /* left out by --region: outside the box */
	char data_sha256[65];       /* SHA-256 of the rows passed to `fn` (doc/shift.md gives the layout) */
} bc_shift__selected;

/**
 * Runs the selection of `o` (group, taxon, preservation, region; doc/shift.md)
 * in occurrence_pk order and calls `fn` for each row that passes. `rank`
 * ("genus", "family", "order", "species"; NULL: none) adds the name at that
 * rank to each row and to the data hash. Returns 0 or the first error.
 */
int bc_shift__select(bc_db *db, const bc_shift_options *o, const char *rank, bc_shift__row_fn fn, void *ctx,
		     bc_shift__selected *out, bc_err *err);

/** One reason occurrences were left out, and how many. */
typedef struct bc_shift__excluded {
	size_t n;
	const char *why;           /* "no palaeodepth" */
} bc_shift__excluded;

/** Appends "N why, N why" for the reasons with n > 0, comma-separated after any text already in `b`. */
void bc_shift__excluded_words(bc_buf *b, const bc_shift__excluded *ex, size_t n);
/** The selection of `o` in words ("group crinoids, taxon Aus"), for messages and the stamp. */
void bc_shift__describe_selection(const bc_shift_options *o, bc_buf *b);
/** Why the summary's occurrences were left out, in words. */
void bc_shift__summary_excluded_words(const bc_shift_summary *u, bc_buf *b);

/* The caution every shift output carries, and the note on the default split. */
#define BC_SHIFT__CAUTION "Palaeodepths are interpretations, often from environment terms; bins with few occurrences are weak evidence; a shift can be an artefact of sampling, age uncertainty or transport."
#define BC_SHIFT__SPLIT_NOTE "200 m is the conventional shelf edge (common practice, no source)"

/**
 * BC_OK when the selection matched rows and `n_left` remain; otherwise
 * BC_EINVALID with "DB: no occurrences match the selection (...)" or
 * "DB: N occurrences match the selection (...), but none is left to VERB: reasons".
 */
int bc_shift__nothing_left(bc_err *err, const char *db_path, const bc_shift_options *o, size_t n_selected, size_t n_left,
			   const bc_shift__excluded *ex, size_t nex, const char *verb);

/** The vocabularies in use ("kind name sha256:...; ...") for the stamp. `*out` is the caller's. */
int bc_shift__vocabs(char **out, bc_db *db, bc_err *err);

/** Replaces a borrowed option string by an owned copy in `*dst`. 0, or -1 when out of memory. */
int bc_shift__dup_opt(char **dst, const char **field);

/** Stamp lines tool, database, chart (NULL name: "none (bins not from a chart)") and vocabularies. */
int bc_shift__stamp_source(bc_table *t, const char *db_path, const char *chart_name, const char *chart_source,
			   const char *vocabs, bc_err *err);
/** Stamp line zone_rule; `straddling` says where straddling occurrences go. */
int bc_shift__stamp_zone_rule(bc_table *t, const char *straddling, bc_err *err);
/** Stamp lines level, data_sha256, selected and (with --region) the region exclusions. */
int bc_shift__stamp_data(bc_table *t, const bc_shift_options *o, const char *sha256, size_t n_selected,
			 size_t n_no_coordinates, size_t n_outside_region, bc_err *err);

struct bc_resample;

/** The computed table. Private: resample.c reads the assignment and bins. */
struct bc_shift {
	bc_shift_options opts;      /* string fields point at the owned copies below */
	char *group, *taxon, *preservation, *timescale, *bins_file;
	char *db_path;
	char *chart_name, *chart_source;
	char *bins_file_sha;
	char *vocabs;               /* "kind name sha256:...; ..." */
	bc_shift__occ *occ;         /* the assignment, kept for redraws */
	size_t nocc;
	char **refkeys;
	size_t nref;
	size_t nloc;
	double *loc_lon, *loc_lat;  /* per dense locality index: WGS 84 coordinates, NaN when none */
	bc_shift__bin *bins;        /* the reported span of bins, oldest first */
	size_t nbins;
	bc_shift_bin *out;
	double *zone_counts;        /* nbins x (n_zones + 1) */
	bc_shift_tests tests;
	bc_shift_summary sum;
	struct bc_resample *rs;     /* uncertainty and bias results (resample.c); NULL when none asked */
};

/* Hooks into resample.c (see resample.h), called by shift.c. */
#include "resample.h"

#endif
