/*
 * snapshot.c - the column-wise copy of the occurrences that `shift` reads
 * (snapshot.h; schema/030_occurrence_snapshot.sql; doc/shift.md, "Speed").
 *
 * One row of occurrence_snapshot per column: the numbers as arrays of
 * little-endian int64 or float64, the text columns as uint32 indices into
 * one table of distinct strings, and a 'meta' row. Every row records how
 * many occurrences it covers and the highest occurrence_pk; the copy is
 * used only while both match the table and the triggers have not emptied
 * it.
 */
#include "snapshot.h"

#include <limits.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* The stored arrays are the machine's own; only a little-endian machine
 * writes or reads them (another builds the copy in memory each time). */
#if defined(__BYTE_ORDER__) && defined(__ORDER_LITTLE_ENDIAN__) && __BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__
#define SNAP_STORABLE 1
#else
#define SNAP_STORABLE 0
#endif

#define META_LAYOUT "v1"

static const char *const text_part[BC_SNAP_NTEXT] = {
	"articulation", "reference_key", "taxon_group", "preservation", "scientific_name", "genus", "family", "order",
};
enum { NUM_PK, NUM_LOC, NUM_OLDER, NUM_YOUNGER, NUM_DMIN, NUM_DMAX, NUM_N };
static const char *const num_part[NUM_N] = {
	"occurrence_pk", "locality_id", "older_ma", "younger_ma", "min_depth_m", "max_depth_m",
};

/* One min() or max() per SELECT: SQLite answers those from the b-tree's ends. */
#define SQL_KEYS \
	"SELECT coalesce((SELECT max(occurrence_pk) FROM occurrences), 0), coalesce((SELECT min(occurrence_pk) FROM occurrences), 0)"
static const char SQL_TABLE_STATE[] = SQL_KEYS;
static const char SQL_TABLE_COUNT[] = SQL_KEYS ", (SELECT count(*) FROM occurrences)";
static const char SQL_PART[] =
	"SELECT rowid, rows, max_pk, layout, length(data) FROM occurrence_snapshot WHERE part = :part";
static const char SQL_ROWS[] =
	"SELECT occurrence_pk, locality_id, older_ma, younger_ma, min_depth_m, max_depth_m,"
	" articulation, reference_key, taxon_group, preservation, scientific_name, genus, family, \"order\""
	" FROM occurrences ORDER BY occurrence_pk";
static const char SQL_STORE[] =
	"INSERT INTO occurrence_snapshot (part, rows, max_pk, layout, data) VALUES (:part, :rows, :max_pk, :layout, :data)";

static int oom(bc_err *err) { return bc_err_set(err, BC_ENOMEM, "out of memory"); }

struct bc_snapshot {
	bc_db *db;
	size_t n, pos;              /* rows, and the next row to hand over */
	int in_txn;                 /* a read transaction is open (stored copy) */
	int stored;
	/* The columns: whole arrays when built in memory; chunk buffers
	 * filled from the open blobs when read from the database. */
	void *num[NUM_N];
	uint32_t *text[BC_SNAP_NTEXT];
	sqlite3_blob *num_blob[NUM_N], *text_blob[BC_SNAP_NTEXT];
	const char **strings;
	size_t n_strings;
	char *string_data;
};

void bc_snapshot__free(bc_snapshot *s)
{
	if (!s)
		return;
	for (int c = 0; c < NUM_N; c++) {
		free(s->num[c]);
		sqlite3_blob_close(s->num_blob[c]);
	}
	for (int c = 0; c < BC_SNAP_NTEXT; c++) {
		free(s->text[c]);
		sqlite3_blob_close(s->text_blob[c]);
	}
	if (s->in_txn)
		bc_db__rollback(s->db);
	free(s->strings);
	free(s->string_data);
	free(s);
}

const char *const *bc_snapshot__strings(const bc_snapshot *s, size_t *n)
{
	*n = s->n_strings;
	return s->strings;
}

int bc_snapshot__stored(const bc_snapshot *s) { return s->stored; }

/* ---- reading the stored copy ------------------------------------------ */

/* Opens the blob of `part`; BC_ENOTFOUND when the part is missing or does
 * not cover exactly `*rows` (SIZE_MAX: any, then set) up to `max_pk` with
 * `layout` (and `*len` bytes when len_known; else *len is set). */
static int part_open(bc_db *db, const char *part, size_t *rows, int64_t max_pk, const char *layout, size_t *len,
		     int len_known, sqlite3_blob **out, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	*out = NULL;
	int rc = bc_db__prepare(db, &st, SQL_PART, err);
	if (rc)
		return rc;
	bc_db__bind_text(st, ":part", part);
	rc = BC_ENOTFOUND;
	const char *lay;
	if (sqlite3_step(st) == SQLITE_ROW && sqlite3_column_int64(st, 1) >= 0 &&
	    (*rows == SIZE_MAX || (size_t)sqlite3_column_int64(st, 1) == *rows) && sqlite3_column_int64(st, 2) == max_pk &&
	    (lay = (const char *)sqlite3_column_text(st, 3)) && strcmp(lay, layout) == 0 &&
	    (!len_known || (size_t)sqlite3_column_int64(st, 4) == *len)) {
		*rows = (size_t)sqlite3_column_int64(st, 1);
		*len = (size_t)sqlite3_column_int64(st, 4);
		if (sqlite3_blob_open(bc_db__sqlite(db), "main", "occurrence_snapshot", "data", sqlite3_column_int64(st, 0), 0, out) == SQLITE_OK)
			rc = BC_OK;
		else
			rc = bc_db__error(db, err, "reading the occurrence snapshot");
	}
	sqlite3_finalize(st);
	return rc;
}

static int blob_read(bc_snapshot *s, sqlite3_blob *b, void *to, size_t len, size_t at, bc_err *err)
{
	if (len > INT_MAX || at > INT_MAX || sqlite3_blob_read(b, to, (int)len, (int)at) != SQLITE_OK)
		return bc_db__error(s->db, err, "reading the occurrence snapshot");
	return BC_OK;
}

/* Splits the string table; BC_ENOTFOUND when it is not a run of
 * NUL-terminated strings. */
static int strings_index(bc_snapshot *s, size_t len, bc_err *err)
{
	size_t n = 0;
	if (len && s->string_data[len - 1] != '\0')
		return BC_ENOTFOUND;
	for (size_t i = 0; i < len; i++)
		n += s->string_data[i] == '\0';
	s->strings = bc__malloc((n ? n : 1) * sizeof *s->strings);
	if (!s->strings)
		return oom(err);
	const char *p = s->string_data;
	for (size_t i = 0; i < n; i++) {
		s->strings[i] = p;
		p += strlen(p) + 1;
	}
	s->n_strings = n;
	return BC_OK;
}

/* Opens the stored copy; BC_ENOTFOUND when it is missing or stale. It is
 * current when it covers the table's lowest to highest key: the triggers
 * of schema/030 empty it on any other change. */
static int stored_open(bc_snapshot *s, bc_db *db, int64_t max_pk, int64_t min_pk, unsigned want, bc_err *err)
{
	size_t len = 0, rows = SIZE_MAX;
	sqlite3_blob *b = NULL;
	int rc = part_open(db, "meta", &rows, max_pk, META_LAYOUT, &len, 0, &b, err);
	sqlite3_blob_close(b);
	b = NULL;
	if (rc == BC_OK && rows > INT_MAX / 8)
		rc = BC_ENOTFOUND; /* never stored so large */
	for (int c = 0; rc == BC_OK && c < NUM_N; c++) {
		len = rows * 8;
		rc = part_open(db, num_part[c], &rows, max_pk, c < NUM_OLDER ? "int64le" : "float64le", &len, 1, &s->num_blob[c], err);
		if (rc == BC_OK && !(s->num[c] = bc__malloc(BC_SNAP_CHUNK * 8)))
			rc = oom(err);
	}
	for (int c = 0; rc == BC_OK && c < BC_SNAP_NTEXT; c++) {
		if (!(want & BC_SNAP_BIT(c)))
			continue;
		len = rows * 4;
		rc = part_open(db, text_part[c], &rows, max_pk, "uint32le", &len, 1, &s->text_blob[c], err);
		if (rc == BC_OK && !(s->text[c] = bc__malloc(BC_SNAP_CHUNK * 4)))
			rc = oom(err);
	}
	int64_t ends[2] = {0, 0};
	if (rc == BC_OK && rows) {
		rc = blob_read(s, s->num_blob[NUM_PK], &ends[0], 8, 0, err);
		if (rc == BC_OK)
			rc = blob_read(s, s->num_blob[NUM_PK], &ends[1], 8, (rows - 1) * 8, err);
		if (rc == BC_OK && (ends[0] != min_pk || ends[1] != max_pk))
			rc = BC_ENOTFOUND;
	}
	if (rc == BC_OK && !rows && max_pk != 0)
		rc = BC_ENOTFOUND;
	if (rc == BC_OK) {
		rc = part_open(db, "strings", &rows, max_pk, "utf8z", &len, 0, &b, err);
		if (rc == BC_OK && !(s->string_data = bc__malloc(len ? len : 1)))
			rc = oom(err);
		if (rc == BC_OK)
			rc = blob_read(s, b, s->string_data, len, 0, err);
		sqlite3_blob_close(b);
		if (rc == BC_OK)
			rc = strings_index(s, len, err);
	}
	s->n = rows;
	return rc;
}

int bc_snapshot__next(bc_snapshot *s, bc_snapshot_rows *r, bc_err *err)
{
	memset(r, 0, sizeof *r);
	if (s->pos >= s->n)
		return 0;
	size_t at = s->pos, n = s->n - at < BC_SNAP_CHUNK ? s->n - at : BC_SNAP_CHUNK;
	const void *num[NUM_N];
	for (int c = 0; c < NUM_N; c++) {
		if (!s->num_blob[c]) {
			num[c] = (const char *)s->num[c] + 8 * at;
			continue;
		}
		int rc = blob_read(s, s->num_blob[c], s->num[c], n * 8, at * 8, err);
		if (rc)
			return rc;
		num[c] = s->num[c];
	}
	for (int c = 0; c < BC_SNAP_NTEXT; c++) {
		if (!s->text[c])
			continue;
		if (!s->text_blob[c]) {
			r->text[c] = s->text[c] + at;
			continue;
		}
		int rc = blob_read(s, s->text_blob[c], s->text[c], n * 4, at * 4, err);
		if (rc)
			return rc;
		for (size_t i = 0; i < n; i++)
			if (s->text[c][i] >= s->n_strings)
				return bc_err_set(err, BC_EDB, "%s: the occurrence snapshot is damaged (string %u of %zu); "
					"empty it (DELETE FROM occurrence_snapshot) and run again",
					bc_db_path(s->db), (unsigned)s->text[c][i], s->n_strings);
		r->text[c] = s->text[c];
	}
	r->n = n;
	r->pk = num[NUM_PK];
	r->loc = num[NUM_LOC];
	r->older = num[NUM_OLDER];
	r->younger = num[NUM_YOUNGER];
	r->dmin = num[NUM_DMIN];
	r->dmax = num[NUM_DMAX];
	s->pos += n;
	return 1;
}

/* ---- building it from the table --------------------------------------- */

/* Distinct strings: open addressing over indices into `s->strings`. */
typedef struct string_set {
	uint32_t *slot; /* index + 1; 0 = empty */
	size_t cap, n, cap_strings;
	bc_buf data;    /* the strings, NUL-terminated, in index order */
	size_t *offset; /* where each starts in data (pointers move as it grows) */
} string_set;

static uint64_t hash_bytes(const char *p, size_t n)
{
	uint64_t h = 1469598103934665603ULL; /* FNV-1a */
	for (size_t i = 0; i < n; i++)
		h = (h ^ (unsigned char)p[i]) * 1099511628211ULL;
	return h;
}

static int set_rehash(string_set *t)
{
	size_t nc = t->cap ? 2 * t->cap : 1024;
	uint32_t *ns = bc__calloc(nc, sizeof *ns);
	if (!ns)
		return BC_ENOMEM;
	for (size_t i = 0; i < t->n; i++) {
		const char *k = t->data.data + t->offset[i];
		size_t h = (size_t)hash_bytes(k, strlen(k)) & (nc - 1);
		while (ns[h])
			h = (h + 1) & (nc - 1);
		ns[h] = (uint32_t)(i + 1);
	}
	free(t->slot);
	t->slot = ns;
	t->cap = nc;
	return BC_OK;
}

static int set_index(string_set *t, const char *key, size_t klen, uint32_t *out)
{
	if ((t->n + 1) * 2 > t->cap && set_rehash(t))
		return BC_ENOMEM;
	size_t h = (size_t)hash_bytes(key, klen) & (t->cap - 1);
	for (; t->slot[h]; h = (h + 1) & (t->cap - 1)) {
		const char *k = t->data.data + t->offset[t->slot[h] - 1];
		if (strncmp(k, key, klen) == 0 && k[klen] == '\0') {
			*out = t->slot[h] - 1;
			return BC_OK;
		}
	}
	if (t->n >= UINT32_MAX - 1)
		return BC_ENOMEM;
	size_t *no = bc__grow(t->offset, t->n, &t->cap_strings, sizeof *t->offset, 256);
	if (!no)
		return BC_ENOMEM;
	t->offset = no;
	t->offset[t->n] = t->data.len;
	if (bc__buf_append(&t->data, key, klen) || bc__buf_append(&t->data, "", 1))
		return BC_ENOMEM;
	t->slot[h] = (uint32_t)(t->n + 1);
	*out = (uint32_t)t->n++;
	return BC_OK;
}

static int built_alloc(bc_snapshot *s, size_t rows)
{
	size_t n = rows ? rows : 1;
	for (int c = 0; c < NUM_N; c++)
		if (!(s->num[c] = bc__malloc(n * 8)))
			return BC_ENOMEM;
	for (int c = 0; c < BC_SNAP_NTEXT; c++)
		if (!(s->text[c] = bc__malloc(n * sizeof *s->text[c])))
			return BC_ENOMEM;
	return BC_OK;
}

static int table_build(bc_snapshot *s, bc_db *db, size_t rows, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	string_set set = {0};
	int rc = built_alloc(s, rows) ? oom(err) : bc_db__prepare(db, &st, SQL_ROWS, err);
	int step = SQLITE_DONE;
	size_t i = 0;
	while (rc == BC_OK && (step = sqlite3_step(st)) == SQLITE_ROW) {
		if (i == rows) {
			rc = bc_err_set(err, BC_EDB, "occurrences changed while they were read");
			break;
		}
		((int64_t *)s->num[NUM_PK])[i] = sqlite3_column_int64(st, 0);
		((int64_t *)s->num[NUM_LOC])[i] = sqlite3_column_type(st, 1) == SQLITE_NULL ? -1 : sqlite3_column_int64(st, 1);
		for (int c = NUM_OLDER; c < NUM_N; c++)
			((double *)s->num[c])[i] = sqlite3_column_type(st, c) == SQLITE_NULL ? NAN : sqlite3_column_double(st, c);
		for (int c = 0; rc == BC_OK && c < BC_SNAP_NTEXT; c++) {
			const char *t = (const char *)sqlite3_column_text(st, c + NUM_N);
			size_t tn = (size_t)sqlite3_column_bytes(st, c + NUM_N);
			if (set_index(&set, t ? t : "", t ? tn : 0, &s->text[c][i]))
				rc = oom(err);
		}
		i++;
	}
	if (rc == BC_OK && step != SQLITE_DONE)
		rc = bc_db__error(db, err, "reading occurrences");
	if (rc == BC_OK && i != rows)
		rc = bc_err_set(err, BC_EDB, "occurrences changed while they were read");
	sqlite3_finalize(st);
	free(set.slot);
	free(set.offset);
	s->string_data = set.data.data;
	if (rc == BC_OK && !s->string_data && !(s->string_data = bc__malloc(1)))
		rc = oom(err);
	if (rc == BC_OK)
		rc = strings_index(s, set.data.len, err);
	return rc;
}

static int part_store(sqlite3_stmt *st, const char *part, size_t rows, int64_t max_pk, const char *layout,
		      const void *data, size_t len)
{
	sqlite3_reset(st);
	bc_db__bind_text(st, ":part", part);
	bc_db__bind_int64(st, ":rows", (int64_t)rows);
	bc_db__bind_int64(st, ":max_pk", max_pk);
	bc_db__bind_text(st, ":layout", layout);
	if (len > (size_t)0x7fffffff ||
	    sqlite3_bind_blob64(st, sqlite3_bind_parameter_index(st, ":data"), data ? data : "", len, SQLITE_STATIC) != SQLITE_OK)
		return BC_EDB;
	return sqlite3_step(st) == SQLITE_DONE ? BC_OK : BC_EIO;
}

/* Writes the copy inside the caller's write transaction. Any failure
 * (read-only file, a full disk, a blob longer than SQLite takes) is left
 * to the caller to roll back: the copy is only a cache. */
static int table_store(const bc_snapshot *s, bc_db *db, int64_t max_pk)
{
	sqlite3_stmt *st = NULL;
	size_t n = s->n;
	if (n > INT_MAX / 8 || bc_db__exec(db, "DELETE FROM occurrence_snapshot", NULL) || bc_db__prepare(db, &st, SQL_STORE, NULL))
		return BC_EIO;
	int rc = part_store(st, "meta", n, max_pk, META_LAYOUT, "", 0);
	for (int c = 0; rc == BC_OK && c < NUM_N; c++)
		rc = part_store(st, num_part[c], n, max_pk, c < NUM_OLDER ? "int64le" : "float64le", s->num[c], n * 8);
	size_t len = s->n_strings ? (size_t)(s->strings[s->n_strings - 1] - s->string_data) + strlen(s->strings[s->n_strings - 1]) + 1 : 0;
	if (rc == BC_OK)
		rc = part_store(st, "strings", n, max_pk, "utf8z", s->string_data, len);
	for (int c = 0; rc == BC_OK && c < BC_SNAP_NTEXT; c++)
		rc = part_store(st, text_part[c], n, max_pk, "uint32le", s->text[c], n * sizeof *s->text[c]);
	sqlite3_finalize(st);
	return rc;
}

/* The table's highest and lowest key (0 when empty), or with `rows` its
 * row count, inside the current transaction. */
static int table_state(bc_db *db, int64_t *max_pk, int64_t *min_pk, size_t *rows, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(db, &st, rows ? SQL_TABLE_COUNT : SQL_TABLE_STATE, err);
	if (rc)
		return rc;
	if (sqlite3_step(st) == SQLITE_ROW) {
		*max_pk = sqlite3_column_int64(st, 0);
		*min_pk = sqlite3_column_int64(st, 1);
		if (rows)
			*rows = (size_t)sqlite3_column_int64(st, 2);
	} else {
		rc = bc_db__error(db, err, "reading the occurrence keys");
	}
	sqlite3_finalize(st);
	return rc;
}

int bc_snapshot__load(bc_snapshot **out, bc_db *db, unsigned want, bc_err *err)
{
	*out = NULL;
	const char *env = getenv("BATHYCHRON_SNAPSHOT");
	if (env && strcmp(env, "off") == 0)
		return BC_OK;
	want |= BC_SNAP_BIT(BC_SNAP_ARTICULATION) | BC_SNAP_BIT(BC_SNAP_REFERENCE);
	bc_snapshot *s = bc__calloc(1, sizeof *s);
	if (!s)
		return oom(err);
	s->db = db;
	size_t rows = 0;
	int64_t max_pk = 0, min_pk = 0;
	/* Inside a caller's transaction: read in it, store nothing. */
	int outer = !sqlite3_get_autocommit(bc_db__sqlite(db));
	/* 1. The stored copy, read in one transaction with the table's keys. */
	int rc = !SNAP_STORABLE ? BC_ENOTFOUND : outer ? BC_OK : bc_db__exec(db, "BEGIN", err);
	if (rc == BC_OK) {
		s->in_txn = !outer;
		rc = table_state(db, &max_pk, &min_pk, NULL, err);
		if (rc == BC_OK)
			rc = stored_open(s, db, max_pk, min_pk, want, err);
	}
	if (rc == BC_OK) {
		s->stored = 1;
		*out = s;
		return BC_OK;
	}
	bc_snapshot__free(s);
	if (rc != BC_ENOTFOUND)
		return rc;
	if (!(s = bc__calloc(1, sizeof *s)))
		return oom(err);
	s->db = db;
	/* 2. Build it, holding the write lock so nothing changes between the
	 * read and the write; when another connection is writing, read in a
	 * plain transaction and store nothing. */
	int writing = SNAP_STORABLE && !outer && bc_db__try_begin(db) == BC_OK;
	rc = writing || outer ? BC_OK : bc_db__exec(db, "BEGIN", err);
	if (rc == BC_OK)
		rc = table_state(db, &max_pk, &min_pk, &rows, err);
	if (rc == BC_OK)
		rc = table_build(s, db, rows, err);
	s->n = rows;
	if (rc == BC_OK && writing && table_store(s, db, max_pk) == BC_OK && bc_db__commit(db, NULL) == BC_OK)
		s->stored = 1;
	if (!outer)
		bc_db__rollback(db);
	if (rc) {
		bc_snapshot__free(s);
		return rc;
	}
	for (int c = 0; c < BC_SNAP_NTEXT; c++)
		if (!(want & BC_SNAP_BIT(c))) { /* the build reads them all */
			free(s->text[c]);
			s->text[c] = NULL;
		}
	*out = s;
	return BC_OK;
}

/* ---- bulk loads --------------------------------------------------------- */

int bc_snapshot__suspend(bc_db *db, char **saved, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	*saved = NULL;
	int rc = bc_db__exec(db, "DELETE FROM occurrence_snapshot", err);
	if (rc == BC_OK)
		rc = bc_db__prepare(db, &st,
			"SELECT sql FROM sqlite_master WHERE type = 'trigger' AND name = 'occurrence_snapshot_stale_on_insert'", err);
	if (rc == BC_OK && sqlite3_step(st) == SQLITE_ROW && !(*saved = bc__strdup((const char *)sqlite3_column_text(st, 0))))
		rc = oom(err);
	sqlite3_finalize(st);
	if (rc == BC_OK && *saved)
		rc = bc_db__exec(db, "DROP TRIGGER occurrence_snapshot_stale_on_insert", err);
	return rc;
}

int bc_snapshot__resume(bc_db *db, const char *saved, bc_err *err)
{
	return saved ? bc_db__exec(db, saved, err) : BC_OK;
}
