/*
 * locality.h - localities as a GeoPackage point layer (private).
 *
 * The importer calls bc_locality__get_or_create once per row, inside its
 * own transaction; `check` calls the report functions. Strings in report
 * rows are borrowed for the duration of the callback only.
 */
#ifndef BC_LOCALITY_H
#define BC_LOCALITY_H

#include "db.h"
#include "geo.h"

/** What one row says about its locality. Strings may be NULL (= ""). */
typedef struct bc_locality_input {
	const char *name;          /* dwc:locality */
	const char *country;       /* dwc:country */
	const char *formation;     /* dwc:formation */
	double lon, lat;           /* WGS 84 degrees, already converted; NaN if none */
	const char *verbatim_coordinates; /* as written, kept for provenance */
	const char *verbatim_srs;
	double uncertainty_m;      /* NaN if none */
	int64_t batch_id;          /* import_batches.batch_id; 0 if none */
	int64_t line;              /* physical line of the row; 0 if none */
} bc_locality_input;

/** Prepared statements for one connection, kept across rows. */
typedef struct bc_locality_cache bc_locality_cache;

/** Prepares the statements on `db` (borrowed: it must outlive the cache). */
int bc_locality__cache_new(bc_locality_cache **out, bc_db *db, bc_err *err);
/** Finalises the statements. NULL-safe. */
void bc_locality__cache_free(bc_locality_cache *lc);

/**
 * The locality a row names, created on first use.
 *  - Named rows (non-empty name) share one record per normalised name and
 *    country (NFKC, case-folded, white space collapsed; accents kept).
 *  - Unnamed rows with coordinates share a record only with rows giving the
 *    same country, formation and exactly the same coordinates.
 *  - Unnamed rows without coordinates have no locality: *fid = 0, BC_OK.
 * A locality keeps the first coordinates it is given; every pair given is
 * recorded in locality_coordinates with batch and line, so a disagreement
 * is reported by bc_locality__conflicts, never lost. Keeps the layer's
 * extent and last_change in gpkg_contents current. Does not begin or
 * commit a transaction. BC_EINVALID for a coordinate off the globe or
 * only one of lon/lat.
 */
int bc_locality__get_or_create(bc_locality_cache *lc, const bc_locality_input *in, int64_t *fid, bc_err *err);

/**
 * Points prepared once for the coverage of many subsets of them (one per
 * bin): each point projected and given its cell once. `geo` NULL: a geo
 * handle is made for the call. Points off the globe are refused only
 * when a subset uses them.
 */
typedef struct bc_coverage__set bc_coverage__set;
int bc_coverage__set_new(bc_coverage__set **out, bc_geo *geo, const double *lon, const double *lat, size_t n,
			 const bc_coverage_options *opts, bc_err *err);
/** Coverage of the points idx[0 .. m) of the set, as bc_coverage_points gives it. */
int bc_coverage__set_of(bc_coverage *out, bc_coverage__set *c, const size_t *idx, size_t m, bc_err *err);
void bc_coverage__set_free(bc_coverage__set *c);

/** Recomputes the layer extent in gpkg_contents from the stored points. */
int bc_locality__refresh_extent(bc_db *db, bc_err *err);

/** A locality given coordinates further from its kept ones than a tolerance. */
typedef struct bc_locality_conflict {
	int64_t fid;
	const char *name, *country;
	double kept_lon, kept_lat; /* what the locality keeps (first given) */
	const char *kept_file;     /* where they were first given; "" if unknown */
	int64_t kept_line;         /* 0 if unknown */
	double lon, lat;           /* another pair given (its first appearance) */
	const char *file;
	int64_t line;
	const char *verbatim;      /* verbatim coordinates of that row, may be "" */
	double distance_m;         /* geodesic, WGS 84 */
} bc_locality_conflict;

/** Report callback: return 0 to go on; anything else stops the report and is returned. */
typedef int (*bc_locality_conflict_fn)(const bc_locality_conflict *c, void *user);

/**
 * Calls `fn` once per distinct coordinate pair given for a locality that
 * lies more than `tolerance_m` metres from the locality's kept pair, in
 * locality then input order.
 */
int bc_locality__conflicts(bc_db *db, double tolerance_m, bc_locality_conflict_fn fn, void *user, bc_err *err);

/** Two unnamed localities close together in the same formation. */
typedef struct bc_locality_near {
	int64_t fid1, fid2;        /* fid1 < fid2 */
	double lon1, lat1, lon2, lat2;
	const char *file1, *file2; /* where each was first given; "" if unknown */
	int64_t line1, line2;
	const char *formation;     /* as stored for fid1 (may be "") */
	double distance_m;
} bc_locality_near;

typedef int (*bc_locality_near_fn)(const bc_locality_near *p, void *user);

/**
 * Calls `fn` once per pair of unnamed localities within `within_m` metres
 * of each other (geodesic) whose formations normalise alike (both empty
 * counts as alike): probable duplicates of one site. Ordered by fid1, fid2.
 */
int bc_locality__near_unnamed(bc_db *db, double within_m, bc_locality_near_fn fn, void *user, bc_err *err);

/**
 * Normalised form of a name for matching (NFKC, case-folded, white space
 * collapsed and trimmed; invalid UTF-8 falls back to ASCII lowercase).
 * Caller frees.
 */
int bc_locality__key(const char *text, char **out, bc_err *err);

#endif
