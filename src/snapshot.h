/*
 * snapshot.h - a compact, column-wise copy of the occurrence columns that
 * `shift` reads, kept in the occurrence_snapshot table (private).
 *
 * Reading a million wide occurrence rows through SQLite costs more than
 * everything shift does with them; reading a few arrays costs almost
 * nothing. The copy is a cache of stored values, never of results: it is
 * written by the first reader after the occurrences change, trusted only
 * while it matches the table (row count, highest key, and triggers that
 * empty it on every insert, update or delete; schema/030), and any
 * failure to write it (read-only file, another writer) only means the next
 * reader builds it again.
 */
#ifndef BC_SNAPSHOT_H
#define BC_SNAPSHOT_H

#include "db.h"

/** The text columns of the copy, each stored as indices into one string table. */
enum {
	BC_SNAP_ARTICULATION,
	BC_SNAP_REFERENCE,   /* reference_key */
	BC_SNAP_GROUP,       /* taxon_group */
	BC_SNAP_PRESERVATION,
	BC_SNAP_NAME,        /* scientific_name */
	BC_SNAP_GENUS,
	BC_SNAP_FAMILY,
	BC_SNAP_ORDER,
	BC_SNAP_NTEXT
};

/** Bit of a text column in the `want` mask of bc_snapshot__load. */
#define BC_SNAP_BIT(c) (1u << (c))

/** Rows are handed over a chunk at a time (a few MB, so they stay in the processor cache). */
#define BC_SNAP_CHUNK 16384

/** One chunk of rows, borrowed until the next call. */
typedef struct bc_snapshot_rows {
	size_t n;                   /* rows in this chunk, in occurrence_pk order */
	const int64_t *pk;
	const int64_t *loc;         /* locality_id; -1 when NULL */
	const double *older, *younger; /* older_ma, younger_ma */
	const double *dmin, *dmax;  /* min_depth_m, max_depth_m; NaN when NULL */
	const uint32_t *text[BC_SNAP_NTEXT]; /* indices into the strings; NULL when not loaded */
} bc_snapshot_rows;

typedef struct bc_snapshot bc_snapshot;

/**
 * The copy of every occurrence, with the text columns in `want` (a mask of
 * BC_SNAP_BIT; articulation and reference are always loaded). Reads the
 * stored copy when it is current (holding a read transaction until
 * bc_snapshot__free); otherwise builds it from the table and tries to
 * store it (without waiting for another writer; a failure to store is not
 * an error). `*out` NULL with BC_OK when the environment variable
 * BATHYCHRON_SNAPSHOT is "off": the caller reads the table.
 */
int bc_snapshot__load(bc_snapshot **out, bc_db *db, unsigned want, bc_err *err);

/** The next chunk: 1 and `*rows` filled, 0 at the end, or an error. */
int bc_snapshot__next(bc_snapshot *s, bc_snapshot_rows *rows, bc_err *err);

/** The distinct texts the indices point at, and how many. */
const char *const *bc_snapshot__strings(const bc_snapshot *s, size_t *n);

/** 1 when the copy was read from, or written to, the database. */
int bc_snapshot__stored(const bc_snapshot *s);

/** Ends the read transaction. NULL-safe. */
void bc_snapshot__free(bc_snapshot *s);

/**
 * For a bulk load inside the caller's write transaction: empties the copy
 * and drops the insert trigger (which would otherwise run once per row);
 * bc_snapshot__resume puts the trigger back, still inside the
 * transaction. `saved` receives the trigger's SQL (caller frees; NULL when
 * there was none).
 */
int bc_snapshot__suspend(bc_db *db, char **saved, bc_err *err);
int bc_snapshot__resume(bc_db *db, const char *saved, bc_err *err);

#endif
