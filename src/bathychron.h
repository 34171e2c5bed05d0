/*
 * bathychron.h - the one public header of libbathychron.
 *
 * Fossil occurrences through time and depth: ingest, resolve ages against
 * the International Chronostratigraphic Chart, bin, and compute
 * occurrence-shift tables with honest uncertainty.
 *
 * Conventions (stated once, restated per function where it matters):
 *  - Fallible calls return int: 0 (BC_OK) on success, a negative BC_E*
 *    code on failure. Output parameters come first.
 *  - Every fallible call takes a `bc_err *err` last (may be NULL); on
 *    failure it is filled with the code and one line of text in the form
 *    "FILE:LINE: field: what is wrong" where a place is known.
 *  - Ownership: an object returned through `**out` belongs to the caller
 *    and is freed with the matching bc_*_free(); a `const` pointer returned
 *    by an accessor is borrowed and lives as long as its parent object.
 *    Every bc_*_free() accepts NULL.
 */
#ifndef BATHYCHRON_H
#define BATHYCHRON_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#ifdef __cplusplus
extern "C" {
#endif

#define BC_VERSION "0.1.0"

/* ------------------------------------------------------------------ */
/* Errors                                                              */
/* ------------------------------------------------------------------ */

enum {
	BC_OK = 0,
	BC_ERROR = -1,     /* anything not named below */
	BC_ENOTFOUND = -2, /* a file, chart, interval or record does not exist */
	BC_EINVALID = -3,  /* bad input data */
	BC_EDB = -4,       /* SQLite reported an error */
	BC_EIO = -5,       /* reading or writing a file failed */
	BC_ENOMEM = -6,    /* out of memory */
	BC_EBUSY = -7,     /* the database is locked by another process */
	BC_EEXISTS = -8,   /* refusing to overwrite, or a duplicate import */
	BC_EFOREIGN = -9,  /* a file that is not ours, or of a newer schema */
	BC_EUSAGE = -10    /* a caller passed options that do not fit */
};

/** One error: its code and a one-line message. Zero-initialise before use. */
typedef struct bc_err {
	int code;
	char msg[1024];
} bc_err;

/** Fills `err` (if not NULL) with `code` and a printf-style message; returns `code`. */
int bc_err_set(bc_err *err, int code, const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 3, 4)))
#endif
	;

/** A short English name for an error code ("invalid input", ...). Static storage. */
const char *bc_strerror(int code);

/** Output formats shared by every table the tool writes. */
typedef enum bc_format {
	BC_FORMAT_CSV = 0,
	BC_FORMAT_TSV,
	BC_FORMAT_MD,
	BC_FORMAT_LATEX,
	BC_FORMAT_JSON
} bc_format;

/** Parses "csv", "tsv", "md", "latex", "json". Returns 0 or BC_EUSAGE. */
int bc_format_parse(bc_format *out, const char *name);

/* ------------------------------------------------------------------ */
/* Database (db.c)                                                     */
/* ------------------------------------------------------------------ */

typedef struct bc_db bc_db;

/** Current schema version of the project's own metadata (not user_version). */
int bc_db_schema_version(void);

/**
 * Creates a new database at `path`: applies every migration in schema/,
 * makes it a valid OGC GeoPackage 1.3, and loads the shipped default chart
 * and vocabularies. Never overwrites: an existing path gives BC_EEXISTS.
 * The handle is the caller's; close it with bc_db_close().
 */
int bc_db_create(bc_db **out, const char *path, bc_err *err);

/**
 * Opens an existing bathychron database, migrating an older schema
 * forward in one transaction. A missing file gives BC_ENOTFOUND; a file
 * that is not ours or is of a newer schema gives BC_EFOREIGN.
 */
int bc_db_open(bc_db **out, const char *path, bc_err *err);

/** Closes the handle. NULL-safe. */
void bc_db_close(bc_db *db);

/** The path the handle was opened with. Borrowed. */
const char *bc_db_path(const bc_db *db);

/* ------------------------------------------------------------------ */
/* Charts (chart.c, skos.c, timescale.c)                               */
/* ------------------------------------------------------------------ */

/** Chronostratigraphic ranks, oldest-level first. */
typedef enum bc_rank {
	BC_RANK_UNKNOWN = 0,
	BC_RANK_SUPEREON,
	BC_RANK_EON,
	BC_RANK_ERA,
	BC_RANK_PERIOD,
	BC_RANK_SUBPERIOD,
	BC_RANK_EPOCH,
	BC_RANK_AGE /* stage */
} bc_rank;

/** "eon", "era", "period", "subperiod", "epoch", "age" (stage), ... Static storage. */
const char *bc_rank_name(bc_rank rank);
/** Parses the names above and the chronostratigraphic synonyms (eonothem, erathem, system, subsystem, series, stage). */
bc_rank bc_rank_parse(const char *name);

/** One interval of a chart. Strings are borrowed from the chart. */
typedef struct bc_interval {
	const char *name;      /* English preferred label, e.g. "Maastrichtian" */
	const char *iri;       /* identifier in the source release, may be "" */
	bc_rank rank;
	int parent;            /* index of the broader interval, -1 for none */
	double older_ma;       /* older (lower) bound, Ma */
	double older_unc;      /* its uncertainty, Myr; NaN if not stated */
	double younger_ma;     /* younger (upper) bound, Ma */
	double younger_unc;
	int has_colour;
	unsigned colour;       /* 0xRRGGBB when has_colour */
	const char *colour_source; /* where the colour came from, may be "" */
} bc_interval;

/** A label of an interval in one language (every skos:prefLabel). */
typedef struct bc_label {
	int interval;          /* index into the chart */
	const char *text;
	const char *lang;      /* BCP 47 tag, "" if none */
} bc_label;

typedef struct bc_chart bc_chart;

/** An empty chart named `name`, to be filled with bc_chart_add_*. */
int bc_chart_new(bc_chart **out, const char *name, bc_err *err);
void bc_chart_free(bc_chart *chart);

/** Appends an interval (strings are copied); returns its index or a negative code. */
int bc_chart_add_interval(bc_chart *chart, const bc_interval *iv, bc_err *err);
/** Appends a label for interval index `interval` (strings copied). */
int bc_chart_add_label(bc_chart *chart, int interval, const char *text, const char *lang, bc_err *err);
/** Sets free-text provenance of the chart (source, licence, citation). Copied. */
int bc_chart_set_source(bc_chart *chart, const char *source, const char *licence, bc_err *err);

const char *bc_chart_name(const bc_chart *chart);
const char *bc_chart_source(const bc_chart *chart);
const char *bc_chart_licence(const bc_chart *chart);
size_t bc_chart_count(const bc_chart *chart);
const bc_interval *bc_chart_interval(const bc_chart *chart, size_t i);
size_t bc_chart_label_count(const bc_chart *chart);
const bc_label *bc_chart_label(const bc_chart *chart, size_t i);
/** Index of the interval whose English name equals `name` exactly, or -1. */
int bc_chart_find(const bc_chart *chart, const char *name);

/* == chart loading and storage: section owned by skos.c/timescale.c == */

/** Name of the chart a new database makes its default ("ics-2024-12"). */
#define BC_DEFAULT_CHART "ics-2024-12"

/**
 * Reads a chart from SKOS RDF/XML (the ICS releases: bounds inline as in
 * 2024-12, or on separate boundary resources as in 2020). The reader never
 * touches the network, loads no DTD and expands no external entity; a
 * hostile file fails with BC_EINVALID. `name` names the chart.
 */
int bc_chart_load_skos(bc_chart **out, const char *path, const char *name, bc_err *err);

/** Reads a chart in the project's own TSV form (see reference/README.md). */
int bc_chart_load_tsv(bc_chart **out, const char *path, const char *name, bc_err *err);

/** Writes a chart in the project's own TSV form. */
int bc_chart_write_tsv(const bc_chart *chart, FILE *out, bc_err *err);

/** A chart shipped with the library ("ics-2024-12", "ics-2020"); NULL = default. */
int bc_chart_builtin(bc_chart **out, const char *name, bc_err *err);

/** Stores a chart in the database under its name; `make_default` makes it the default. */
int bc_timescale_store(bc_db *db, const bc_chart *chart, const char *loaded_from, int make_default, bc_err *err);

/** Reads a stored chart; `name` NULL means the database's default. */
int bc_timescale_get(bc_chart **out, bc_db *db, const char *name, bc_err *err);

/*
 * Additions beyond the declarations above (same section, same owner).
 */

/**
 * Like bc_timescale_store, but a stored chart of the same name is replaced
 * (its intervals and labels too) in the same transaction; a replaced
 * default chart stays the default. Occurrences already resolved keep their
 * stored ages: re-import to resolve them against the new chart.
 */
int bc_timescale_replace(bc_db *db, const bc_chart *chart, const char *loaded_from, int make_default, bc_err *err);

/** One stored chart, as listed by bc_timescale_list. */
typedef struct bc_timescale_info {
	char name[128];
	int is_default;
	size_t n_intervals;
	char source[1024];
	char licence[256];
	char loaded_from[512];
	char loaded_at[32];
} bc_timescale_info;

/**
 * The stored charts, default first, then by name. `*out` is the caller's
 * (free it with free()); `*n` is its length.
 */
int bc_timescale_list(bc_timescale_info **out, size_t *n, bc_db *db, bc_err *err);

/**
 * Gives each interval of `dst` without a colour the colour of the interval
 * of `src` with the same IRI (or, failing that, the same English name),
 * recording `colour_source` (e.g. "ICS 2024-12 chart colours"). Returns
 * the number of intervals coloured (>= 0) or a negative code.
 */
int bc_chart_copy_colours(bc_chart *dst, const bc_chart *src, const char *colour_source, bc_err *err);

/**
 * Reads a chart from a file by its form: SKOS RDF/XML (.rdf, .xml, .owl,
 * or a file starting with '<') or the project's TSV. `name` NULL names it
 * from the file name ("ics-chart-2020.skos.rdf" -> "ics-chart-2020").
 */
int bc_chart_load_file(bc_chart **out, const char *path, const char *name, bc_err *err);

/* == end of chart loading section == */

/* ------------------------------------------------------------------ */
/* Age resolution (age.c, age_parse.c, age_number.c, age_alias.c, text.c) */
/* ------------------------------------------------------------------ */

/* == age resolution section == */

/** How an age text was resolved (design.md fixes these names). */
typedef enum bc_age_status {
	BC_AGE_EXACT = 0,  /* a chart interval name or one of its labels */
	BC_AGE_ALIAS,      /* an obsolete/regional/informal name from the alias table */
	BC_AGE_RANGE,      /* two names: "Campanian-Maastrichtian" */
	BC_AGE_QUALIFIED,  /* "late Campanian": part of an interval by a stated convention */
	BC_AGE_NUMERIC,    /* numbers: "72 Ma", "83.6-72.1 Ma" */
	BC_AGE_UNKNOWN     /* not resolved; nearest chart names in note */
} bc_age_status;

/** "exact", "alias", "range", "qualified", "numeric", "unknown". Static storage. */
const char *bc_age_status_name(bc_age_status status);

/** One resolved age. older_ma > younger_ma (or equal for a point age). */
typedef struct bc_age {
	bc_age_status status;
	char from[128];        /* chart interval name of the older end; for numeric ages the finest
	                          chart interval holding that number ("" if none) */
	char to[128];          /* chart interval name of the younger end (same rule) */
	double older_ma;
	double younger_ma;
	int uncertain;         /* a "?", "cf.", "probably" mark was present */
	char note[512];        /* conventions used, uncertainty flags, suggestions */
} bc_age;

typedef struct bc_resolver bc_resolver;

/**
 * A resolver over `chart` (borrowed: it must outlive the resolver) with the
 * shipped alias table (reference/age-aliases.tsv) loaded. Rules and
 * conventions: doc/age-resolution.md. A resolver caches its answers, so it
 * is not safe to share between threads: use one per thread. Free it with
 * bc_resolver_free().
 */
int bc_resolver_new(bc_resolver **out, const bc_chart *chart, bc_err *err);
/**
 * Adds or overrides aliases from a TSV file of the same form as the shipped
 * one (header row with at least alias, older, younger, source; '#' lines
 * are comments; a later row for the same alias wins). Every older/younger
 * name must resolve in the resolver's chart: otherwise BC_EINVALID with
 * "FILE:LINE: field: what is wrong" and nothing from the file is kept.
 */
int bc_resolver_load_aliases(bc_resolver *r, const char *path, bc_err *err);
/** Number of aliases in use (shipped plus loaded). */
size_t bc_resolver_alias_count(const bc_resolver *r);
/**
 * Number of shipped alias rows skipped because a name they map to is not in
 * this chart (a chart release that names an interval differently).
 * `first` (may be NULL) gets the first such alias text, borrowed, or "".
 */
size_t bc_resolver_aliases_skipped(const bc_resolver *r, const char **first);
void bc_resolver_free(bc_resolver *r);
/** The chart in use. Borrowed. */
const bc_chart *bc_resolver_chart(const bc_resolver *r);

/**
 * Resolves one text. Returns BC_OK whenever `out` was filled, including
 * status BC_AGE_UNKNOWN; a negative code only for internal failures.
 */
int bc_age_resolve(bc_resolver *r, const char *text, bc_age *out);
/**
 * Resolves the two-column form (earliest..., latest...); either may be
 * empty or NULL. The result spans the older bound of the earliest and the
 * younger bound of the latest.
 */
int bc_age_resolve_pair(bc_resolver *r, const char *earliest, const char *latest, bc_age *out);

/* == end of age resolution section == */

/* ------------------------------------------------------------------ */
/* Ingest (csv.c, colmap.c, depth.c, bib.c, import.c, import_row.c, import_queue.c, check.c, export.c) */
/* ------------------------------------------------------------------ */

/* == ingest section == */

/**
 * Age disagreement tolerance: when a row gives both age text and numbers
 * (earliest/latestChronometricAge), the numbers are stored; if they reach
 * outside the range the text resolves to by more than this many Myr (at
 * either end), the row is stored with age_conflict = 1 and `check` reports
 * it. The same test compares a stage with the series or system also given.
 */
#define BC_AGE_CONFLICT_TOLERANCE_MYR 0.5

/** Called once per rejected row with "FILE:LINE: field: reason". */
typedef void (*bc_import_report_fn)(void *ctx, const char *message);
/** Called now and then with bytes read so far and the input size (0 if unknown). */
typedef void (*bc_import_progress_fn)(void *ctx, uint64_t done, uint64_t total);

/** Options of bc_import_file. Initialise with BC_IMPORT_OPTIONS_INIT. */
typedef struct bc_import_options {
	const char *map;           /* column map: a shipped name (import/maps/NAME.map) or a file; NULL = none */
	const char *environments;  /* TSV adding to / overriding reference/environments.tsv; NULL = shipped only */
	const char *preservation;  /* TSV adding to / overriding reference/preservation.tsv */
	const char *timescale;     /* stored chart to resolve ages with; NULL = the database's default */
	const char *display_name;  /* file name used in messages and in the batch; NULL = the path */
	int dry_run;               /* validate and count, write nothing */
	int keep_guard_quotes;     /* 1 = keep a leading ' before = + - @ tab CR (see export) */
	bc_import_report_fn report;
	bc_import_progress_fn progress;
	void *ctx;                 /* passed to report and progress */
} bc_import_options;
#define BC_IMPORT_OPTIONS_INIT {NULL, NULL, NULL, NULL, NULL, 0, 0, NULL, NULL, NULL}

/** Counts of one import. n_read = n_stored + n_quarantined always. */
typedef struct bc_import_result {
	long long batch_id;        /* the import_batches row; 0 for a dry run */
	long long n_read;          /* data rows read (all-empty rows are not rows) */
	long long n_stored;
	long long n_quarantined;
	long long n_age_conflicts; /* stored rows flagged age_conflict */
	long long n_unguarded;     /* cells whose export guard quote was removed */
	char timescale[128];       /* chart used */
} bc_import_result;

/**
 * Imports one CSV/TSV occurrence file into `db` as ONE transaction and one
 * import_batches row. Rows that cannot be used go to the quarantine table
 * (and to opts->report); they never stop the import. Returns BC_OK when the
 * file was read (even with quarantined rows; see `out`); BC_EINVALID for a
 * file that cannot be read as a whole (encoding, empty, bad header, bad
 * map), with "FILE:LINE: field: what"; BC_EEXISTS when identical content
 * was imported before (the message names that batch and its date); other
 * codes for environment failures. Nothing is written unless BC_OK and not
 * a dry run.
 */
int bc_import_file(bc_import_result *out, bc_db *db, const char *path, const bc_import_options *opts, bc_err *err);

/** Counts of a references load. */
typedef struct bc_refs_result {
	long long batch_id;
	long long n_entries, n_new, n_updated, n_bad;
} bc_refs_result;

/**
 * Loads a BibTeX file into the references table as one batch. A key seen
 * before is updated in place (the newest file wins) and counted in
 * n_updated. Bad entries are skipped, counted in n_bad and passed to
 * `report` as "FILE:LINE: key: what"; the rest are stored. Identical
 * content loaded before gives BC_EEXISTS.
 */
int bc_refs_load(bc_refs_result *out, bc_db *db, const char *path, bc_import_report_fn report, void *ctx, bc_err *err);

/** What `check` looks at. Initialise with BC_CHECK_OPTIONS_INIT. */
typedef struct bc_check_options {
	bc_format format;          /* csv, tsv or json */
	int quarantine;            /* 1 = write the quarantined rows as CSV instead of the report */
	const char *kind;          /* with quarantine: the batches' kind, "occurrences" (NULL) or "injuries" */
} bc_check_options;
#define BC_CHECK_OPTIONS_INIT {BC_FORMAT_TSV, 0, NULL}

/**
 * Writes the data-quality report to `out`: one row per problem with
 * columns problem, batch, file, line, key, detail. Problems: quarantined
 * rows, unlinked references, age conflicts, probable duplicate
 * occurrences, localities given different coordinates; plus one
 * informational row counting occurrences without coordinates.
 * `*n_problems` gets the number of problem rows (informational rows not
 * counted). With opts->quarantine, writes the quarantined rows as CSV:
 * quarantine_batch, quarantine_file, quarantine_line, quarantine_field,
 * quarantine_reason, then the row's own columns, ready to fix and import.
 */
int bc_check_run(bc_db *db, const bc_check_options *opts, FILE *out, long long *n_problems, bc_err *err);

/**
 * Writes the stored occurrences as CSV: the design.md input columns, then
 * the extra columns kept at import. Text cells starting with = + - @ tab or
 * CR get a leading single quote (spreadsheet formula-injection guard,
 * OWASP "CSV Injection"); numeric columns are never touched; import removes
 * exactly that quote again and says how many it removed.
 */
int bc_export_csv(bc_db *db, FILE *out, long long *n_rows, bc_err *err);

/* == end of ingest section == */

/* ------------------------------------------------------------------ */
/* Darwin Core Archives (dwca.c, dwca_entries.c, dwca_meta.c,         */
/* dwca_text.c, dwca_join.c, dwca_write.c)                             */
/* ------------------------------------------------------------------ */

/* == dwca section == */

/**
 * Writes the stored occurrences as a Darwin Core Archive: `path` ending in
 * ".zip" gives a zip file, any other path a new folder. The archive holds
 * meta.xml, eml.xml, occurrence.txt (Darwin Core terms; the project's five
 * terms under https://bathychron.invalid/terms/; extra columns under
 * https://bathychron.invalid/columns/) and chronometricage.txt (ages in
 * Ma). Importing it stores the same occurrences (doc/dwca.md). An existing
 * `path` gives BC_EEXISTS and is not touched. `*n_rows` (may be NULL) gets
 * the number of occurrences written. (Reading an archive goes through
 * bc_import_file, which recognises a zip file or a folder with meta.xml.)
 */
int bc_export_dwca(bc_db *db, const char *path, long long *n_rows, bc_err *err);

/* == end of dwca section == */

/* ------------------------------------------------------------------ */
/* Coordinates and localities (geo.c, locality.c)                      */
/* ------------------------------------------------------------------ */

/* == geo section == */

/**
 * Spatial coverage of a set of localities, the usual yardsticks of how much
 * of the world a sample covers (more localities, cells and a longer tree
 * mean more spread-out sampling; a shift between bins can follow a change
 * in coverage rather than in habitat).
 */
typedef struct bc_coverage_options {
	double cell_km;   /* edge of the equal-area grid cells, km (> 0) */
	size_t mst_max_points; /* > 0: with more distinct points than this the tree (O(n^2)) is
				* not computed and mst_km is NaN; 0: no limit */
} bc_coverage_options;
/** Cells of 100 km on EPSG:6933 (WGS 84 / NSIDC EASE-Grid 2.0 Global); no limit on the tree. */
#define BC_COVERAGE_OPTIONS_INIT {100.0, 0}

typedef struct bc_coverage {
	size_t n_localities;       /* distinct localities with coordinates */
	size_t n_unlocated;        /* distinct localities without coordinates (not counted below) */
	size_t n_without_locality; /* occurrences with no locality at all (occurrence form only) */
	size_t n_cells;            /* occupied cells of cell_km x cell_km on EPSG:6933, grid origin at its (0, 0) */
	double cell_km;            /* the cell edge used */
	double min_lat, max_lat;   /* WGS 84 degrees; NaN when n_localities is 0 */
	double lat_range;          /* max_lat - min_lat, degrees; 0 for one locality, NaN for none */
	double mst_km;             /* summed geodesic length (WGS 84) of the minimum spanning tree, km;
				      NaN when opts->mst_max_points was exceeded */
} bc_coverage;

/**
 * Coverage of `n` points given as WGS 84 longitude/latitude, each counted
 * as one locality. `opts` NULL means BC_COVERAGE_OPTIONS_INIT. BC_EINVALID
 * for a coordinate off the globe or a cell size <= 0. Fills `*out`.
 */
int bc_coverage_points(bc_coverage *out, const double *lon, const double *lat, size_t n,
		       const bc_coverage_options *opts, bc_err *err);

/**
 * Coverage of the localities with the given fids (`fids` NULL: every
 * locality in the database). Repeated fids count once; an unknown fid gives
 * BC_ENOTFOUND.
 */
int bc_coverage_localities(bc_coverage *out, bc_db *db, const int64_t *fids, size_t n,
			   const bc_coverage_options *opts, bc_err *err);

/**
 * Coverage of the localities of the occurrences with the given primary keys
 * (occurrences.occurrence_pk; `pks` NULL: every occurrence). An unknown key
 * gives BC_ENOTFOUND.
 */
int bc_coverage_occurrences(bc_coverage *out, bc_db *db, const int64_t *pks, size_t n,
			    const bc_coverage_options *opts, bc_err *err);

/* == end of geo section == */

/* ------------------------------------------------------------------ */
/* Shift tables (shift.c, shift_select.c, shift_out.c, snapshot.c, stats.c, output.c) */
/* ------------------------------------------------------------------ */

/* == shift section == */

/*
 * The occurrence-shift table: per stratigraphic bin, how many selected
 * occurrences were shallow, deep or straddling the depth boundary, the
 * deep share with a Wilson interval, the change from the previous bin,
 * and trend tests across bins. doc/shift.md states every rule.
 */

/** How bins are made. */
typedef enum bc_bin_scheme {
	BC_BINS_STAGE = 0, /* chart intervals of rank age (stage) */
	BC_BINS_EPOCH,     /* rank epoch (series) */
	BC_BINS_PERIOD,    /* rank period (system) */
	BC_BINS_WIDTH,     /* equal widths in Myr, edges at multiples of the width from 0 Ma */
	BC_BINS_FILE       /* a TSV/CSV file: name, older bound, younger bound (Ma) */
} bc_bin_scheme;

/** What to do with an occurrence whose age range crosses bin edges. */
typedef enum bc_span_rule {
	BC_SPAN_MAJORITY = 0, /* the one bin holding most of the range (ties: the older bin) */
	BC_SPAN_ALL,          /* counted once in every bin the range overlaps */
	BC_SPAN_SPLIT,        /* fractional counts, in proportion to the overlap */
	BC_SPAN_MAX           /* left out when the range is longer than span_max_myr; majority otherwise */
} bc_span_rule;

#define BC_SHIFT_MAX_ZONES 16

/** What each resampling draw varies (bit flags of bc_shift_options.resample). */
enum { BC_RESAMPLE_AGE = 1, BC_RESAMPLE_DEPTH = 2 };

/** The background of the depth-affinity test (bc_shift_options.background). */
typedef enum bc_background {
	BC_BACKGROUND_NONE = 0,
	BC_BACKGROUND_BINNED, /* expected share = sum over bins of n_b K_b/N_b, divided by n */
	BC_BACKGROUND_POOLED  /* expected share = K/N pooled over the bins the selection occupies */
} bc_background;

/**
 * Options of bc_shift_compute. Strings are borrowed: they must outlive
 * the computation. Fill with BC_SHIFT_OPTIONS_INIT, then set fields
 * directly or by name with bc_shift_option_set().
 */
typedef struct bc_shift_options {
	/* selection (NULL: no restriction) */
	const char *group;          /* taxon_group, case-insensitive (ASCII) */
	const char *taxon;          /* scientific name, genus, family or order; case-insensitive */
	const char *preservation;   /* articulation class, or a preservation term */
	int has_region;
	double region[4];           /* west, south, east, north (degrees, WGS 84); west > east crosses 180 */
	/* binning */
	const char *timescale;      /* stored chart name; NULL: the database's default */
	const bc_chart *chart;      /* if set, used instead of reading `timescale` (borrowed) */
	bc_bin_scheme bins;
	double bin_width;           /* Myr, BC_BINS_WIDTH */
	const char *bins_file;      /* BC_BINS_FILE */
	bc_span_rule span;
	double span_max_myr;        /* BC_SPAN_MAX */
	/* zoning: boundaries in metres, strictly increasing; n_zones == 1 is --split */
	size_t n_zones;
	double zones[BC_SHIFT_MAX_ZONES];
	int zones_given;            /* 1 when set by --zones (per-zone columns are written) */
	/* statistics */
	double level;               /* confidence level of every interval */
	/* uncertainty and bias (resample.c; doc/shift.md, "Uncertainty and bias") */
	size_t draws;               /* age/depth resampling draws; 0: none. Also the replicate count below */
	uint64_t seed;              /* seed of every random stream (default 1) */
	int threads;                /* worker threads; 0: one per online processor. Never changes results */
	unsigned resample;          /* BC_RESAMPLE_AGE | BC_RESAMPLE_DEPTH (default both), or 0 */
	int bootstrap;              /* 1: each draw also resamples occurrences with replacement */
	int weight_references;      /* 1: reference-weighted deep share, bootstrap over references */
	bc_background background;   /* depth affinity against all occurrences of the same bins */
	int background_with_focal;  /* 1: the background includes the focal selection */
	size_t quota;               /* > 0: subsample each bin to this many shallow + deep occurrences */
	int taphonomy;              /* 1: articulated-only sensitivity and the transport flag */
	/* spatial coverage per bin (doc/shift.md, "Spatial coverage") */
	double cell_km;             /* edge of the equal-area cells counted in n_cells, km (default 100) */
} bc_shift_options;

/** Defaults: no selection, default chart, stage bins, majority rule, split at 200 m, 95 %,
 * no resampling (seed 1, both age and depth resampled once draws are asked for). */
#define BC_SHIFT_OPTIONS_INIT { NULL, NULL, NULL, 0, {0, 0, 0, 0}, NULL, NULL, BC_BINS_STAGE, 0.0, NULL, \
	BC_SPAN_MAJORITY, 0.0, 1, {200.0}, 0, 0.95, 0, 1, 0, BC_RESAMPLE_AGE | BC_RESAMPLE_DEPTH, 0, 0, \
	BC_BACKGROUND_NONE, 0, 0, 0, 100.0 }

/** Bins with more distinct located points than this get mst_km NaN (the tree is O(n^2); doc/shift.md). */
#define BC_SHIFT_MST_MAX_POINTS 3000

/** Replicates used by --weight-references and --quota when `draws` is 0. */
#define BC_SHIFT_DEFAULT_REPLICATES 1000

/**
 * Sets one option by its command-line name without the dashes ("group",
 * "taxon", "preservation", "region", "timescale", "bins", "span", "split",
 * "zones", "level", "cell-km"; and "draws", "seed", "threads", "resample", "background",
 * "quota", with the flags "bootstrap", "weight-references",
 * "background-with-focal", "taphonomy" taking "yes" or "no"). `value` is
 * borrowed where the field is a string.
 * Returns 0, or BC_EUSAGE with a message naming the option.
 */
int bc_shift_option_set(bc_shift_options *opts, const char *name, const char *value, bc_err *err);

/** One bin of the table. Counts are doubles: --span split gives fractions. */
typedef struct bc_shift_bin {
	const char *name;           /* chart interval name, "W-W Ma" for width bins, or the file's name */
	double older_ma, younger_ma;
	double n;                   /* n_shallow + n_deep + n_straddle */
	double n_shallow, n_deep, n_straddle;
	double frac_deep;           /* n_deep / (n_shallow + n_deep); NaN when that is 0 */
	double frac_deep_lo, frac_deep_hi; /* Wilson score interval; NaN when no data */
	size_t n_references;        /* distinct reference keys among its occurrences ("" not counted) */
	size_t n_localities;        /* distinct localities (occurrences without one not counted) */
	double n_articulated, n_partly_articulated, n_disarticulated, n_articulation_unknown;
	double diff, diff_lo, diff_hi; /* frac_deep(this) - frac_deep(previous, older bin); Newcombe hybrid score; NaN if undefined */
	double fisher_p;            /* two-sided Fisher exact p of the same pair (counts rounded with --span split) */
	const double *n_zone;       /* with --zones: n_zones + 1 counts, shallowest first; else NULL. Borrowed. */
	double n_zone_straddle;     /* with --zones: ranges crossing at least one boundary */
	/* Resampling draws (opts.draws > 0); NaN otherwise or when no draw put shallow or deep occurrences here. */
	int has_draws;
	double draw_lo, draw_mid, draw_hi; /* frac_deep over draws: (1-level)/2, 0.5, (1+level)/2 quantiles (2.5, 50, 97.5 % at 95 %) */
	double draw_defined;        /* share of draws in which this bin had shallow or deep occurrences */
	double draw_break_share;    /* share of draws whose breakpoint is this bin's older boundary */
	/* Reference weighting (opts.weight_references): each reference present in the bin weighs 1. */
	double refw_frac_deep, refw_lo, refw_hi; /* interval: bootstrap over references */
	double n_ref_units;         /* references (plus one unit for occurrences without one) with shallow or deep occurrences */
	/* Background (opts.background): all occurrences of the bin, the focal ones included or not. */
	double bg_n, bg_deep;       /* background shallow + deep, and deep */
	double bg_frac_deep;        /* bg_deep / bg_n */
	double affinity_p_deep;     /* P(X >= n_deep), X ~ Binomial(n_shallow + n_deep, bg_frac_deep) */
	double affinity_p_shallow;  /* P(X <= n_deep) */
	/* Subsampling (opts.quota): frac_deep of `quota` occurrences drawn without replacement. */
	double quota_lo, quota_mid, quota_hi; /* NaN when the bin has fewer than quota */
	/* Taphonomy (opts.taphonomy): the articulated-only table's numbers for this bin. */
	double art_n, art_frac_deep, art_lo, art_hi; /* shallow + deep articulated, its share, Wilson interval */
	/* Spatial coverage of the bin's localities (those counted in n_localities); see bc_coverage. */
	size_t n_cells;             /* occupied cell_km x cell_km cells of EPSG:6933 */
	double lat_range_deg;       /* northernmost minus southernmost latitude; NaN without located localities */
	double mst_km;              /* minimum spanning tree length, km; NaN above BC_SHIFT_MST_MAX_POINTS points */
	size_t n_unlocated;         /* of n_localities, those without coordinates (in none of the above) */
} bc_shift_bin;

/** Tests across the bins that have shallow or deep occurrences. NaN when not computable. */
typedef struct bc_shift_tests {
	size_t n_bins_tested;
	double trend_z, trend_p;          /* Cochran-Armitage, Armitage z (N form), scores = -midpoint age */
	double logit_intercept, logit_slope, logit_slope_se, logit_p; /* slope: log-odds of deep per Myr toward the present */
	int logit_converged;
	double break_ma;                  /* boundary age of the most likely single breakpoint */
	const char *break_before, *break_after; /* the bins either side (older, younger). Borrowed. */
	double break_lr;                  /* 2 (logL split - logL constant) */
	/* Resampling draws (opts.draws > 0). */
	size_t n_draws;
	double draw_trend_z_lo, draw_trend_z_mid, draw_trend_z_hi; /* quantiles of the trend z over draws */
	double draw_trend_sig_share;      /* share of draws with two-sided trend p < 1 - level */
	double draw_break_mode_share;     /* share of draws with the most frequent breakpoint */
	const char *draw_break_before, *draw_break_after; /* that breakpoint's bins (older, younger). Borrowed. */
	/* Background (opts.background), over the bins where the selection has shallow or deep occurrences. */
	double aff_k, aff_n, aff_p0, aff_expected; /* deep, shallow + deep (rounded), expected share and count */
	double aff_p_deep, aff_p_shallow; /* one-sided binomial tails */
	const char *aff_verdict;          /* "deep", "shallow" or "none" at alpha = 1 - level. Static. */
	/* Taphonomy (opts.taphonomy). */
	size_t art_bins_tested;
	double art_trend_z, art_trend_p, art_logit_slope, art_logit_p;
	int transport_flag;               /* 1: a shift carried by disarticulated material (doc/shift.md) */
	const char *taphonomy_verdict;    /* one line in words. Static. */
} bc_shift_tests;

/** What the selection and the rules did to the data. */
typedef struct bc_shift_summary {
	size_t n_selected;          /* rows matching group/taxon/preservation */
	size_t n_outside_region;    /* left out by --region (coordinates outside the box) */
	size_t n_no_coordinates;    /* left out by --region (locality without coordinates) */
	size_t n_no_depth;          /* left out: no palaeodepth */
	size_t n_too_long;          /* left out by --span max:MYR */
	size_t n_outside_bins;      /* left out: age range outside every bin */
	size_t n_used;              /* counted */
	size_t n_multi_bin;         /* of n_used: age range overlapping more than one bin */
	char data_sha256[65];       /* SHA-256 of the selected rows (doc/shift.md gives the byte layout) */
	size_t n_bins_mst_skipped;  /* bins whose tree was not computed (BC_SHIFT_MST_MAX_POINTS) */
} bc_shift_summary;

typedef struct bc_shift bc_shift;

/**
 * Selects, bins, zones, counts and tests. A selection that matches no
 * occurrence, or leaves none to count, fails with BC_EINVALID and a
 * message saying what was excluded. The result is the caller's; free it
 * with bc_shift_free().
 */
int bc_shift_compute(bc_shift **out, bc_db *db, const bc_shift_options *opts, bc_err *err);
void bc_shift_free(bc_shift *s);

/** Number of bins (oldest first) and one bin. Borrowed from `s`. */
size_t bc_shift_bin_count(const bc_shift *s);
const bc_shift_bin *bc_shift_bin_at(const bc_shift *s, size_t i);
const bc_shift_tests *bc_shift_tests_get(const bc_shift *s);
const bc_shift_summary *bc_shift_summary_get(const bc_shift *s);

/** Writes the table with its tests and methods stamp in `format`. */
int bc_shift_write(const bc_shift *s, FILE *f, bc_format format, bc_err *err);

/** Writes a methods paragraph (plain text) describing exactly what was done, with references. */
int bc_shift_write_methods(const bc_shift *s, FILE *f, bc_err *err);

/**
 * Writes the taphonomic sensitivity table (needs opts.taphonomy): per bin
 * the deep share in all, articulated-only and disarticulated-only
 * material with Wilson intervals, the trend tests of each, the transport
 * flag and the methods stamp. BC_EUSAGE without opts.taphonomy.
 */
int bc_shift_write_taphonomy(const bc_shift *s, FILE *f, bc_format format, bc_err *err);

/* == end of shift section == */

/* ------------------------------------------------------------------ */
/* Depth ranges through time (ranges.c)                                */
/* ------------------------------------------------------------------ */

/* == ranges section == */

/*
 * Per taxon, its stratigraphic range in each depth zone: when it was
 * first and last found shallow and deep, whether the shallow range ends
 * before, overlaps or outlasts the deep one given the age ranges, and a
 * confidence interval on each range end from the number of horizons
 * (Strauss & Sadler 1989; Marshall 1990). doc/ranges.md states every rule.
 */

/** The taxonomic level whose names are compared. */
typedef enum bc_ranges_rank {
	BC_RANGES_GENUS = 0, /* the genus column, else the first word of scientificName */
	BC_RANGES_FAMILY,
	BC_RANGES_ORDER,
	BC_RANGES_SPECIES    /* scientificName as stored */
} bc_ranges_rank;

/**
 * Options of bc_ranges_compute. `sel` carries the selection, --timescale
 * (chart interval names), the zoning, the confidence level and the
 * resampling draws (draws, seed, threads, resample) exactly as for shift;
 * its binning fields are not used, and its bootstrap and bias options are
 * refused (BC_EUSAGE). Strings are borrowed.
 */
typedef struct bc_ranges_options {
	bc_shift_options sel;
	bc_ranges_rank rank;
} bc_ranges_options;

#define BC_RANGES_OPTIONS_INIT { BC_SHIFT_OPTIONS_INIT, BC_RANGES_GENUS }

/** Sets "rank" (genus, family, order, scientificName/species), or any option bc_shift_option_set knows. */
int bc_ranges_option_set(bc_ranges_options *opts, const char *name, const char *value, bc_err *err);

/**
 * One taxon's occurrences in one depth zone. The range's older end (first
 * occurrence) lies between first_younger_ma and first_older_ma: the
 * largest younger bound and the largest older bound among the zone's
 * occurrences; its younger end (last occurrence) between last_younger_ma
 * (smallest younger bound) and last_older_ma (smallest older bound). All
 * NaN when n is 0.
 */
typedef struct bc_range_zone {
	size_t n;
	size_t n_references, n_localities;
	size_t n_horizons;           /* distinct occurrence midpoint ages */
	double first_older_ma, first_younger_ma;
	const char *first_interval;  /* chart intervals of those two ages, "Campanian" or "Santonian-Campanian"; "" if none. Borrowed. */
	double last_older_ma, last_younger_ma;
	const char *last_interval;
	double ci_extension;         /* Marshall (1990) r = (1 - C)^(-1/(H-1)) - 1, C = level; NaN when H < 2 */
	double first_ci_ma;          /* oldest midpoint + r * (observed range of midpoints), not beyond the
				      * older bound of the chart's eon holding the oldest midpoint */
	double last_ci_ma;           /* youngest midpoint - r * range, not below 0 */
	unsigned ci_capped;          /* BC_RANGE_CAPPED_* bits: the limit was held at that bound */
} bc_range_zone;

/** Which confidence limit of a zone was held at its bound (bc_range_zone.ci_capped). */
enum {
	BC_RANGE_CAPPED_FIRST = 1,   /* first_ci_ma held at the base of the eon (or of the chart) */
	BC_RANGE_CAPPED_LAST = 2     /* last_ci_ma held at 0 Ma */
};

/** How the shallow range's end stands to the deep range (bit set of the possible ones). */
enum {
	BC_RANGE_ENDS_BEFORE = 1, /* the last shallow occurrence is older than the first deep one */
	BC_RANGE_OVERLAPS = 2,    /* it lies within the deep range */
	BC_RANGE_OUTLASTS = 4     /* it is younger than the last deep one */
};

typedef struct bc_range_taxon {
	const char *taxon;           /* borrowed */
	size_t n;                    /* every counted occurrence of the taxon, straddling included */
	size_t n_straddle;           /* depth range crossing the first boundary: in no zone */
	size_t n_references, n_localities;
	bc_range_zone shallow, deep; /* at the first boundary */
	const bc_range_zone *zones;  /* with --zones: n_zones + 1 zones, shallowest first; else NULL. Borrowed. */
	unsigned relation;           /* BC_RANGE_* bits the age ranges allow; 0 unless both shallow and deep occur */
	int retreat_supported;       /* 1: the shallow range certainly ends first and its end's confidence
				      * limit is still older than the deep range's last occurrence; 0: it ends
				      * first but the limit reaches the deep end (or one horizon only);
				      * -1: does not apply */
	/* Resampling draws (sel.draws > 0; doc/ranges.md): NaN otherwise. */
	int has_draws;
	double draws_both;           /* share of draws in which the taxon had shallow and deep occurrences */
	double p_ends_before, p_overlaps, p_outlasts; /* how often each relation occurred in those draws; NaN when none */
} bc_range_taxon;

typedef struct bc_ranges_summary {
	size_t n_selected;
	size_t n_outside_region, n_no_coordinates;
	size_t n_no_name;            /* no name at the chosen rank */
	size_t n_no_depth;
	size_t n_used;
	size_t n_taxa;
	size_t n_shallow_only, n_deep_only, n_straddle_only, n_both;
	size_t n_ends_before, n_overlaps, n_outlasts, n_unresolved; /* taxa with one certain relation, or several possible */
	size_t n_retreat_supported, n_retreat_weak;
	char data_sha256[65];        /* doc/ranges.md gives the byte layout */
	size_t n_draws;              /* resampling draws made (0: none) */
	size_t n_age_drawn;          /* occurrences whose age was drawn in each draw */
	size_t n_depth_drawn;        /* straddling occurrences given a drawn depth in each draw */
} bc_ranges_summary;

typedef struct bc_ranges bc_ranges;
struct bc_plot_options; /* the plot section's bc_plot_options */

/**
 * Selects, zones and summarises per taxon. A selection that matches no
 * occurrence, or leaves none with a palaeodepth and a name at the rank,
 * fails with BC_EINVALID. The result is the caller's; free it with
 * bc_ranges_free().
 */
int bc_ranges_compute(bc_ranges **out, bc_db *db, const bc_ranges_options *opts, bc_err *err);
void bc_ranges_free(bc_ranges *r);

/** Taxa in name order (byte order of UTF-8). Borrowed from `r`. */
size_t bc_ranges_count(const bc_ranges *r);
const bc_range_taxon *bc_ranges_taxon_at(const bc_ranges *r, size_t i);
const bc_ranges_summary *bc_ranges_summary_get(const bc_ranges *r);

/** Writes the table with its summary and methods stamp in `format`. */
int bc_ranges_write(const bc_ranges *r, FILE *f, bc_format format, bc_err *err);

/** Writes a methods paragraph (plain text) describing exactly what was done, with references. BC_EIO when the stream fails. */
int bc_ranges_write_methods(const bc_ranges *r, FILE *f, bc_err *err);

/**
 * Draws one row per taxon: its shallow and deep ranges over the timescale
 * bar of the chart used, sorted by the last shallow occurrence (see
 * bc_plot_ranges; the options are the plot section's bc_plot_options).
 * `opt->caption` NULL gives a caption in words.
 */
int bc_ranges_plot(const char *path, const bc_ranges *r, const struct bc_plot_options *opt, bc_err *err);

/* == end of ranges section == */

/* ------------------------------------------------------------------ */
/* Injuries and encounter rates (encounter.c, injuries.c, encreport.c) */
/* ------------------------------------------------------------------ */

/* == injuries and encounter section == */

/**
 * How an incidence rate is obtained from a prevalence P of regenerating
 * units (individuals or arms) and the mean duration D of the regenerating
 * state. Both need a stationary population with constant rates.
 */
typedef enum bc_incidence_model {
	/** Steady state, P / (1 - P) = I x D: I is per unit at risk (not
	 * currently regenerating) per day. Freeman J, Hutchison GB (1980)
	 * Prevalence, incidence and duration. Am J Epidemiol 112(5):707-723. */
	BC_INCIDENCE_STEADY_STATE = 0,
	/** Poisson injuries regardless of state, P = 1 - exp(-lambda x D):
	 * lambda = -ln(1 - P) / D per unit per day. */
	BC_INCIDENCE_POISSON
} bc_incidence_model;

/** "steady-state" or "poisson". Static storage. */
const char *bc_incidence_model_name(bc_incidence_model model);
/** Parses the names above. Returns 0 or BC_EUSAGE. */
int bc_incidence_model_parse(bc_incidence_model *out, const char *name);

/**
 * Incidence from prevalence `p` (0..1) and duration `d` (> 0) in the given
 * model, per unit of `d`'s time. Returns 0 for p = 0, +infinity for p = 1,
 * NaN for p outside [0, 1] or d <= 0 (or either NaN).
 */
double bc_encounter_incidence(double p, double d, bc_incidence_model model);

/** Incidence per unit of the whole population, I* = P / D (= I (1 - P) in
 * the steady-state model). NaN for bad input as above. */
double bc_encounter_per_capita(double p, double d);

/** How the Monte Carlo draws the uncertain inputs. */
typedef struct bc_encounter_mc {
	long draws;           /* Monte Carlo draws; 0 = no intervals from the MC */
	uint64_t seed;        /* the same seed gives the same intervals */
	double level;         /* confidence level, e.g. 0.95 */
	bc_incidence_model model;
	int shared_duration;  /* 1: one duration draw per MC draw for every group
				 (durations assumed equal everywhere: cancels in
				 ratios); 0: independent per group */
} bc_encounter_mc;
#define BC_ENCOUNTER_MC_INIT {10000, 1, 0.95, BC_INCIDENCE_STEADY_STATE, 0}

/**
 * One group of units (the individuals, or the arms, of a depth zone, site
 * or bin). The caller fills the inputs; bc_encounter_compute fills the rest.
 * Rates are per unit per day; intervals between encounters in days.
 */
typedef struct bc_encounter_group {
	/* inputs */
	double n;             /* units examined */
	double x;             /* units regenerating, 0 <= x <= n */
	double duration_min;  /* days, > 0: the shortest plausible mean duration */
	double duration_max;  /* days, >= duration_min */
	/* outputs */
	double prevalence, prevalence_lo, prevalence_hi; /* x / n; Wilson interval */
	double duration;      /* midpoint of [duration_min, duration_max] */
	double incidence, incidence_lo, incidence_hi;    /* per unit per day */
	double per_capita;    /* P / D */
	double interval, interval_lo, interval_hi;       /* 1 / incidence, days */
	double ratio, ratio_lo, ratio_hi;                /* incidence / that of the reference group */
} bc_encounter_group;

/**
 * Fills the outputs of k groups. Point estimates use x / n and the
 * midpoint duration. Intervals come from mc->draws Monte Carlo draws:
 * the prevalence from its Jeffreys posterior Beta(x + 1/2, n - x + 1/2)
 * (finite and positive at x = 0 and x = n, where a parametric bootstrap
 * would collapse) and the duration uniform on [duration_min, duration_max];
 * the limits are percentiles of the drawn incidences. Where the data do not
 * bound a rate, the limit is stated as such: x = 0 gives incidence_lo = 0
 * (interval_hi = +inf), x = n gives incidence_hi = +inf (interval_lo = 0).
 * The ratio of each group to group `ref` uses the same paired draws
 * (groups are independent samples). A group with n = 0 gets NaN outputs.
 * Returns 0, BC_EINVALID (file-less message naming the group index) for
 * bad inputs, BC_EUSAGE for bad options, or BC_ENOMEM.
 */
int bc_encounter_compute(bc_encounter_group *groups, size_t k, size_t ref,
			 const bc_encounter_mc *mc, bc_err *err);

/** What bc_injuries_import does; initialise with BC_INJURIES_IMPORT_OPTIONS_INIT. */
typedef struct bc_injuries_import_options {
	const char *timescale;  /* chart to resolve ages with; NULL = the database's default */
	int dry_run;            /* validate and count, store nothing */
	/* Called once per quarantined row with its "FILE:LINE: field: reason"
	 * (may be NULL). The row is stored in the quarantine table as well. */
	void (*on_problem)(void *ctx, const char *message);
	void *ctx;
} bc_injuries_import_options;
#define BC_INJURIES_IMPORT_OPTIONS_INIT {NULL, 0, NULL, NULL}

/** What an import did. */
typedef struct bc_injuries_import_result {
	int64_t batch_id;       /* the import_batches row (kind 'injuries'); 0 on a dry run */
	long n_read;            /* data rows read */
	long n_stored;          /* rows stored in injury_samples */
	long n_quarantined;     /* rows kept in the quarantine with their reason */
	long n_individuals;     /* individuals examined in the stored rows */
	long n_regenerating;    /* of which regenerating */
} bc_injuries_import_result;

/**
 * Imports a CSV/TSV of injury samples (columns: doc/encounter.md) in one
 * transaction with one import_batches row of kind 'injuries'. Every row
 * that cannot be used goes to the quarantine with file, line, field,
 * reason and the raw row; the import still succeeds (check
 * out->n_quarantined). A file whose content was already imported gives
 * BC_EEXISTS and changes nothing. A file that cannot be read as CSV, or
 * lacks a required column, gives BC_EINVALID and changes nothing.
 */
int bc_injuries_import(bc_injuries_import_result *out, bc_db *db, const char *path,
		       const bc_injuries_import_options *opts, bc_err *err);

/** How `bathychron encounter` groups the samples. */
typedef enum bc_encounter_by {
	BC_ENCOUNTER_BY_ZONE = 0, /* one row per depth zone, all ages pooled */
	BC_ENCOUNTER_BY_SITE,     /* one row per site and zone */
	BC_ENCOUNTER_BY_BIN       /* one row per age (as resolved; Recent apart) and zone */
} bc_encounter_by;

/** "zone", "site", "bin". Static storage. */
const char *bc_encounter_by_name(bc_encounter_by by);
/** Parses the names above. Returns 0 or BC_EUSAGE. */
int bc_encounter_by_parse(bc_encounter_by *out, const char *name);

/** What bc_encounter_report_build computes; initialise with BC_ENCOUNTER_OPTIONS_INIT. */
typedef struct bc_encounter_options {
	bc_encounter_by by;
	const double *zones;   /* zone boundaries in metres, increasing (borrowed);
				  NULL = one boundary at 200 m. A sample whose depth
				  range crosses a boundary is left out and counted. */
	size_t n_zones;
	const char *taxon;     /* only samples of this taxon (exact, or a genus
				  matching the first word); NULL = all */
	bc_encounter_mc mc;
} bc_encounter_options;
#define BC_ENCOUNTER_OPTIONS_INIT {BC_ENCOUNTER_BY_ZONE, NULL, 0, NULL, BC_ENCOUNTER_MC_INIT}

/** One row of the encounter table. Strings are borrowed from the report. */
typedef struct bc_encounter_row {
	const char *bin;       /* "all", "Recent", or the resolved age ("Campanian", "Campanian-Maastrichtian", "83.6-72.1 Ma") */
	const char *zone;      /* zone label, e.g. "shallow (<200 m)" */
	int zone_index;        /* 0 = shallowest */
	const char *site;      /* the site when grouped by site, else "" */
	double min_depth_m, max_depth_m; /* depth extent of its samples */
	double older_ma, younger_ma;     /* age extent of its samples (0, 0 for Recent) */
	long n_samples;        /* rows of injury_samples pooled here */
	bc_encounter_group individuals;  /* per individual */
	bc_encounter_group arms;         /* per arm, from samples with arm counts (n = 0: none) */
	long ratio_to;         /* index of the row whose rate the ratios divide by */
} bc_encounter_row;

typedef struct bc_encounter_report bc_encounter_report;

/**
 * Reads the stored injury samples, groups them and computes every row.
 * BC_ENOTFOUND when no sample matches. The report is the caller's; free it
 * with bc_encounter_report_free.
 */
int bc_encounter_report_build(bc_encounter_report **out, bc_db *db, const bc_encounter_options *opts, bc_err *err);
size_t bc_encounter_report_count(const bc_encounter_report *r);
/** Row i (0-based), or NULL. Borrowed. */
const bc_encounter_row *bc_encounter_report_row(const bc_encounter_report *r, size_t i);
/** Samples left out because their depth range crosses a zone boundary. */
long bc_encounter_report_straddling(const bc_encounter_report *r);
/**
 * Writes the table with its methods stamp and cautions in `format`
 * (columns: doc/encounter.md). BC_EIO when the stream fails.
 */
int bc_encounter_report_write(const bc_encounter_report *r, FILE *f, bc_format format, bc_err *err);
void bc_encounter_report_free(bc_encounter_report *r);

/**
 * Draws the mean interval between injuring encounters per row (individuals,
 * log scale) with its interval, unbounded limits as arrows, counts under
 * each column and the model's cautions in the caption; SVG, PDF or PNG
 * (300 dpi) by the extension of `path`. `width_mm` 85 for one journal
 * column, 180 for two. Returns 0, BC_EUSAGE (extension, width), BC_EIO.
 */
int bc_encounter_plot(const bc_encounter_report *r, const char *path, double width_mm, bc_err *err);

/* == end of injuries and encounter section == */

/* ------------------------------------------------------------------ */
/* Figures (plot.c, plot_shift.c, plot_ranges.c, encplot.c)          */
/* ------------------------------------------------------------------ */

/* == plot section == */

/**
 * One time bin of a shift figure. The drawing does not depend on how the
 * numbers were computed: the caller copies them from its shift table.
 * Counts are doubles so fractional (overlap-split) counts pass through.
 */
typedef struct bc_plot_bin {
	const char *label;     /* bin name ("Campanian", "80-70 Ma"); may be NULL; borrowed */
	double older_ma;       /* older (lower) bound, Ma; older_ma > younger_ma */
	double younger_ma;
	double n;              /* every occurrence in the bin */
	double n_shallow, n_deep, n_straddle;
	int has_frac;          /* 0: no shallow or deep occurrence; the bin is a gap, not 0 */
	double frac;           /* frac_deep = n_deep / (n_shallow + n_deep) */
	double lo, hi;         /* its confidence interval (Wilson score at opt->level) */
	int has_band;          /* 1 when a resampling band was computed for this bin */
	double band_lo, band_mid, band_hi; /* 2.5th, 50th, 97.5th percentiles over draws */
} bc_plot_bin;

/** Figure file formats, chosen by the output file's extension. */
typedef enum bc_plot_format {
	BC_PLOT_SVG = 1,
	BC_PLOT_PDF,
	BC_PLOT_PNG
} bc_plot_format;

/** How to draw a shift figure. Start from BC_PLOT_OPTIONS_INIT. */
typedef struct bc_plot_options {
	double width_mm;       /* 85 single column (default), 180 double column */
	int older_right;       /* 0: older on the left (default); 1: older on the right */
	const char *title;     /* bold line above the figure; NULL for none */
	const char *y_label;   /* NULL: "Deep occurrences (share of shallow + deep)" */
	const char *caption;   /* wrapped below the figure: selection, binning, zoning, chart; NULL for none */
	int no_caveat;         /* 1: do not append the sentence on interpretation and sampling */
	double few;            /* bins with n_shallow + n_deep below this are drawn hollow; default 10 */
	double level;          /* confidence level of lo/hi, for the legend; default 0.95 */
	bc_rank bar_rank;      /* timescale bar row matching the bins; UNKNOWN: guessed from the bins */
	bc_rank bar_coarse_rank; /* the row above it; UNKNOWN: period (era when the bins are periods) */
	double dpi;            /* PNG resolution; default 300 */
} bc_plot_options;

#define BC_PLOT_OPTIONS_INIT {85.0, 0, NULL, NULL, NULL, 0, 10.0, 0.95, BC_RANK_UNKNOWN, BC_RANK_UNKNOWN, 300.0}

/**
 * The figure format of `path` by its extension (.svg, .pdf, .png, any
 * case). Anything else gives BC_EUSAGE with a message naming the choices.
 */
int bc_plot_format_from_path(bc_plot_format *out, const char *path, bc_err *err);

/**
 * Draws the deep share through time (points, line broken at empty bins,
 * interval bars, the resampling band when present), the counts per bin,
 * and a timescale bar in the chart's own colours, and writes it to `path`
 * as SVG, PDF or PNG (by extension). `bins` may come in any order; `chart`
 * may be NULL (no timescale bar). `opt` NULL means BC_PLOT_OPTIONS_INIT.
 * Needs the "DejaVu Sans" font (Debian fonts-dejavu-core) for the intended
 * look; fontconfig substitutes another sans font when it is missing.
 * Returns 0, BC_EUSAGE (extension, options), BC_EINVALID (a bin's numbers),
 * BC_EIO (cannot write `path`) or BC_ENOMEM. Nothing is kept from the arguments.
 */
int bc_plot_shift(const char *path, const bc_plot_bin *bins, size_t n, const bc_chart *chart,
		  const bc_plot_options *opt, bc_err *err);

/**
 * Frees the font caches cairo and fontconfig keep for the whole process,
 * so leak checkers stay quiet. Call at most at exit, after the last figure,
 * from a program that uses fontconfig for nothing else. Safe to call twice.
 */
void bc_plot_cleanup(void);

/**
 * The default caption of a shift figure, in words: the selection, the
 * binning and span rule, the zoning, the chart, how many occurrences were
 * counted and why others were left out, and with draws what the band shows
 * (quantiles, number of draws, seed, what was resampled). `opts` are the options `s` was
 * computed with; `chart_name` names the chart of the timescale bar (NULL:
 * none). `*out` is the caller's; free it with free().
 */
int bc_plot_shift_caption(char **out, const bc_shift *s, const bc_shift_options *opts, const char *chart_name,
			  bc_err *err);

/**
 * Draws a computed shift table: its bins one to one (has_frac when a bin
 * has shallow or deep occurrences; the resampling band from draw_lo,
 * draw_mid, draw_hi when the table has draws and the bin a median), the
 * interval level of `opts`, and, when `opt->caption` is NULL, the caption of
 * bc_plot_shift_caption(). Otherwise as bc_plot_shift(). Nothing is kept
 * from the arguments.
 */
int bc_plot_shift_table(const char *path, const bc_shift *s, const bc_shift_options *opts, const bc_chart *chart,
			const bc_plot_options *opt, bc_err *err);

/** One zone's range for bc_plot_ranges. Ages in Ma; NaN (n 0) when the taxon has none there. */
typedef struct bc_plot_zone_range {
	double n;
	double first_older_ma, first_younger_ma; /* the range's older end lies between these */
	double last_older_ma, last_younger_ma;   /* its younger end lies between these */
	double last_ci_ma;                       /* confidence limit on the younger end; NaN: none */
} bc_plot_zone_range;

typedef struct bc_plot_taxon_range {
	const char *label;                       /* borrowed */
	bc_plot_zone_range shallow, deep;
} bc_plot_taxon_range;

/**
 * Draws one row per taxon, a shallow and a deep bar each: solid where the
 * taxon certainly lived in the zone, tinted where the age ranges allow,
 * a tick at the confidence limit on the younger end; counts at the right;
 * the time axis and the timescale bar below (as in bc_plot_shift). Rows are
 * sorted by the last shallow occurrence, the earliest-ending on top; taxa
 * without shallow occurrences follow, by their deep range's end. `opt`
 * as for bc_plot_shift (level names the confidence limit in the legend).
 */
int bc_plot_ranges(const char *path, const bc_plot_taxon_range *taxa, size_t n, const bc_chart *chart,
		   const bc_plot_options *opt, bc_err *err);

/* == end of plot section == */

#ifdef __cplusplus
}
#endif
#endif /* BATHYCHRON_H */
