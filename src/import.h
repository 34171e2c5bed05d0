/*
 * import.h - the importer's state, private to the import files: import.c
 * (the importer, storing, the batch, bc_import_file), import_row.c
 * (reading and checking one row) and import_queue.c (the two threads).
 */
#ifndef BC_IMPORT_H
#define BC_IMPORT_H

#include "colmap.h"
#include "csvio.h"
#include "dwca.h"
#include "geo.h"
#include "locality.h"

#include <stdint.h>

#define AGE_CACHE_SLOTS 8192   /* power of two; cleared when 3/4 full */
#define LOC_CACHE_SLOTS 8192

/* The INSERT's parameters, in the order of occ_params (import.c). */
enum {
	P_BATCH, P_LINE, P_OCC_ID, P_SCI, P_GROUP, P_ORDER, P_FAMILY, P_GENUS, P_LOC,
	P_ESTAGE, P_LSTAGE, P_ESERIES, P_LSERIES, P_ESYSTEM, P_LSYSTEM, P_EMA, P_LMA,
	P_FROM, P_TO, P_OLDER, P_YOUNGER, P_STATUS, P_NOTE, P_CONFLICT, P_TIMESCALE,
	P_FORMATION, P_MEMBER, P_BED, P_MIN, P_MAX, P_DSRC, P_ENV, P_PRES, P_ART,
	P_COUNT, P_REF, P_EXTRA, P_N
};

/* ---- small caches -------------------------------------------------- */

typedef struct age_slot {
	char *key;
	bc_age age;
} age_slot;

/* The reading thread's side of the locality cache: a key (name,
 * formation, country, coordinates) -> a number never given to another
 * key. The storing thread keeps number -> locality fid (loc_fid), so it
 * neither builds nor compares keys. */
typedef struct loc_slot {
	char *key;
	uint64_t id;
} loc_slot;

typedef struct loc_fid {
	uint64_t id;
	int64_t fid;
} loc_fid;

/* ---- the importer --------------------------------------------------- */

typedef struct occ {
	double lat, lon, unc;
	int has_coords;
	double e_ma, l_ma;
	bc_age age;
	int conflict;
	char note[768];
	double dmin, dmax;
	const char *depth_source;
	const char *environment;
	const char *preservation, *articulation;
	long long count;
	int has_count;
	int64_t locality;
} occ;

/* One row between reading and storing: the cells, what the checks made
 * of them, and for a rejected row the quarantine entry. */
typedef struct row {
	int quarantined;
	long line;
	uint64_t bytes;   /* input read up to the end of this row (progress) */
	const char *name; /* the file as messages name it */
	bc_buf scratch;
	size_t cell_off[BC_TERM_COUNT];
	const char *cell[BC_TERM_COUNT];
	size_t cell_len[BC_TERM_COUNT];
	const char *depth_cell;
	bc_buf extra, raw, reason;
	uint64_t loc_id;  /* the row's locality cache entry (loc_slot), 0 for none */
	const char *text[P_N]; /* a stored row's text parameters, with their lengths, */
	int text_len[P_N];     /* set by the reading thread (NULL: not a text parameter) */
	char field[128];
	int nproblems;
	int oom;          /* an allocation for the row failed */
	occ o;
} row;

typedef struct row_queue row_queue;

typedef struct importer {
	bc_db *db;
	const bc_import_options *o;
	bc_import_result *r;
	const char *name;
	bc_csv *csv;
	bc_dwca *dwca;           /* set instead of csv for a Darwin Core Archive */
	const char *batch_name;  /* the file as named in the batch (im->name follows the archive's data files) */
	char **headers;
	size_t nh;
	bc_colplan plan;
	int plan_bound;
	bc_colmap *map;
	bc_vocab *env, *pres, *units;
	bc_chart *chart;
	double chart_oldest; /* the chart's oldest bound (Ma), 0 if none */
	bc_resolver *res;
	bc_geo *geo;
	sqlite3_stmt *st_occ, *st_q;
	bc_locality_cache *loc;
	int occ_idx[40];
	int64_t batch;
	row *cur;        /* the row being read and checked (the reading thread's) */
	row one;         /* the row when reading and storing take turns on one thread */
	row_queue *pp;        /* the queue between the two threads, when there are two */
	uint64_t size;   /* the input's size in bytes (0 when unknown) */
	age_slot *ages;
	size_t nages;
	loc_slot *locs;  /* the reading thread's */
	size_t nlocs;
	uint64_t loc_next_id;
	loc_fid *loc_fids; /* the storing thread's */
} importer;

/* ---- the row source: a CSV/TSV reader or a Darwin Core Archive ------ */

static inline size_t src_nfields(const importer *im)
{
	return im->dwca ? bc_dwca__ncolumns(im->dwca) : bc_csv__nfields(im->csv);
}

static inline const char *src_field(const importer *im, size_t i)
{
	return im->dwca ? bc_dwca__value(im->dwca, i) : bc_csv__field(im->csv, i);
}

static inline long src_line(const importer *im)
{
	return im->dwca ? bc_dwca__line(im->dwca) : bc_csv__line(im->csv);
}

static inline int src_next(importer *im, bc_err *err)
{
	return im->dwca ? bc_dwca__next(im->dwca, err) : bc_csv__next(im->csv, err);
}

/* ---- shared between the files ---------------------------------------- */

/* Reads and checks the current record into im->cur (import_row.c). */
int bc_import__read_row(importer *im, bc_err *err);
/* Frees a row's buffers; the row itself is not freed (import_row.c). */
void bc_import__row_free(row *rw);
/* Stores or quarantines a checked row: the database side (import.c). */
int bc_import__store_or_quarantine(importer *im, row *rw, bc_err *err);
/* Starts the reading thread; BC_ERROR when reading stays on this one (import_queue.c). */
int bc_import__queue_start(importer *im);
/* Stores what the reading thread queues until the input ends (import_queue.c). */
int bc_import__queue_store(importer *im, bc_err *err);
/* Frees the queue and its rows; NULL does nothing (import_queue.c). */
void bc_import__queue_free(row_queue *pp);

#endif
