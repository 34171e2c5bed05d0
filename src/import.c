/*
 * import.c - occurrence spreadsheets into the database: the importer,
 * storing or quarantining checked rows, the batch, and bc_import_file;
 * one transaction and one batch per file (design.md "Input contract" and
 * "Database"). Rows are read and checked in import_row.c, on a second
 * thread through import_queue.c.
 */
#include "import.h"
#include "snapshot.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define PROGRESS_EVERY 8192

/* ---- statements ---------------------------------------------------- */

static const char sql_insert_occ[] =
	"INSERT INTO occurrences (batch_id, line, occurrence_id, scientific_name, taxon_group, \"order\", family, genus, "
	"locality_id, earliest_stage, latest_stage, earliest_series, latest_series, earliest_system, latest_system, "
	"earliest_ma_given, latest_ma_given, age_from, age_to, older_ma, younger_ma, age_status, age_note, age_conflict, "
	"timescale, formation, member, bed, min_depth_m, max_depth_m, depth_source, environment, preservation, "
	"articulation, individual_count, reference_key, extra) VALUES (:batch, :line, :occurrence_id, :scientific_name, "
	":taxon_group, :order, :family, :genus, :locality, :earliest_stage, :latest_stage, :earliest_series, "
	":latest_series, :earliest_system, :latest_system, :earliest_ma, :latest_ma, :age_from, :age_to, :older_ma, "
	":younger_ma, :age_status, :age_note, :age_conflict, :timescale, :formation, :member, :bed, :min_depth, "
	":max_depth, :depth_source, :environment, :preservation, :articulation, :individual_count, :reference_key, :extra)";

static const char sql_insert_quarantine[] =
	"INSERT INTO quarantine (batch_id, file, line, field, reason, raw_row) VALUES (:batch, :file, :line, :field, :reason, :raw)";

/* ---- localities ------------------------------------------------------------ */

/* The storing thread's half of the locality cache (see locality_key in
 * import_row.c): the fid of the row's entry, else the locality module. */
static int import_locality(importer *im, row *rw, bc_err *err)
{
	occ *o = &rw->o;
	const char *name = rw->cell[BC_T_LOCALITY], *country = rw->cell[BC_T_COUNTRY];
	o->locality = 0;
	if (!*name && !*country && !o->has_coords)
		return BC_OK;
	/* the entries alive in the reader's table have consecutive numbers,
	 * fewer than LOC_CACHE_SLOTS of them: no two share a slot here */
	loc_fid *f = rw->loc_id ? &im->loc_fids[rw->loc_id & (LOC_CACHE_SLOTS - 1)] : NULL;
	if (f && f->id == rw->loc_id) {
		o->locality = f->fid;
		return BC_OK;
	}
	bc_locality_input in = {
		name, country, rw->cell[BC_T_FORMATION],
		o->has_coords ? o->lon : NAN, o->has_coords ? o->lat : NAN,
		rw->cell[BC_T_VERBATIM_COORDS], rw->cell[BC_T_VERBATIM_SRS], o->unc, im->batch, rw->line,
	};
	int rc = bc_locality__get_or_create(im->loc, &in, &o->locality, err);
	if (rc == BC_OK && f) {
		f->id = rw->loc_id;
		f->fid = o->locality;
	}
	return rc;
}

/* ---- storing -------------------------------------------------------------- */

static const char *const occ_params[P_N] = {
	":batch", ":line", ":occurrence_id", ":scientific_name", ":taxon_group", ":order", ":family", ":genus",
	":locality", ":earliest_stage", ":latest_stage", ":earliest_series", ":latest_series", ":earliest_system",
	":latest_system", ":earliest_ma", ":latest_ma", ":age_from", ":age_to", ":older_ma", ":younger_ma",
	":age_status", ":age_note", ":age_conflict", ":timescale", ":formation", ":member", ":bed", ":min_depth",
	":max_depth", ":depth_source", ":environment", ":preservation", ":articulation", ":individual_count",
	":reference_key", ":extra",
};

static void bt(importer *im, int p, const char *s)
{
	sqlite3_bind_text(im->st_occ, im->occ_idx[p], s, -1, SQLITE_STATIC);
}

static void bd(importer *im, int p, double v)
{
	if (isnan(v))
		sqlite3_bind_null(im->st_occ, im->occ_idx[p]);
	else
		sqlite3_bind_double(im->st_occ, im->occ_idx[p], v);
}

static int store_row(importer *im, row *rw, bc_err *err)
{
	static const int text[] = {
		P_OCC_ID, P_SCI, P_GROUP, P_ORDER, P_FAMILY, P_GENUS, P_ESTAGE, P_LSTAGE, P_ESERIES, P_LSERIES,
		P_ESYSTEM, P_LSYSTEM, P_FORMATION, P_MEMBER, P_BED, P_REF, P_FROM, P_TO, P_STATUS, P_NOTE,
		P_DSRC, P_ENV, P_PRES, P_ART, P_EXTRA,
	};
	sqlite3_stmt *st = im->st_occ;
	occ *o = &rw->o;
	sqlite3_reset(st);
	/* :batch and :timescale are bound once (prepare_all); a binding
	 * outlives sqlite3_reset, and every other one is made again here */
	sqlite3_bind_int64(st, im->occ_idx[P_LINE], rw->line);
	for (size_t i = 0; i < sizeof text / sizeof text[0]; i++)
		sqlite3_bind_text(st, im->occ_idx[text[i]], rw->text[text[i]], rw->text_len[text[i]], SQLITE_STATIC);
	if (o->locality)
		sqlite3_bind_int64(st, im->occ_idx[P_LOC], o->locality);
	else
		sqlite3_bind_null(st, im->occ_idx[P_LOC]);
	bd(im, P_EMA, o->e_ma);
	bd(im, P_LMA, o->l_ma);
	bd(im, P_OLDER, o->age.older_ma);
	bd(im, P_YOUNGER, o->age.younger_ma);
	sqlite3_bind_int(st, im->occ_idx[P_CONFLICT], o->conflict);
	bd(im, P_MIN, o->dmin);
	bd(im, P_MAX, o->dmax);
	if (o->has_count)
		sqlite3_bind_int64(st, im->occ_idx[P_COUNT], o->count);
	else
		sqlite3_bind_null(st, im->occ_idx[P_COUNT]);
	if (sqlite3_step(st) != SQLITE_DONE)
		return bc_db__error(im->db, err, "storing an occurrence");
	im->r->n_stored++;
	if (o->conflict)
		im->r->n_age_conflicts++;
	return BC_OK;
}

static int quarantine_row(importer *im, row *rw, bc_err *err)
{
	sqlite3_stmt *st = im->st_q;
	sqlite3_reset(st);
	bc_db__bind_int64(st, ":batch", im->batch);
	bc_db__bind_text(st, ":file", rw->name);
	bc_db__bind_int64(st, ":line", rw->line);
	bc_db__bind_text(st, ":field", rw->field);
	bc_db__bind_text(st, ":reason", rw->reason.data);
	bc_db__bind_text(st, ":raw", rw->raw.data);
	if (sqlite3_step(st) != SQLITE_DONE)
		return bc_db__error(im->db, err, "storing a quarantined row");
	im->r->n_quarantined++;
	if (im->o->report) {
		bc_buf m = {0};
		bc__buf_printf(&m, "%s:%ld: %s: %s", rw->name, rw->line, rw->field, rw->reason.data);
		if (m.data)
			im->o->report(im->o->ctx, m.data);
		bc__buf_free(&m);
	}
	return BC_OK;
}

/* Storing a checked row: the database side, on the calling thread. */
int bc_import__store_or_quarantine(importer *im, row *rw, bc_err *err)
{
	int rc;
	im->r->n_read++;
	if (rw->quarantined)
		rc = quarantine_row(im, rw, err);
	else if ((rc = import_locality(im, rw, err)) == BC_OK)
		rc = store_row(im, rw, err);
	if (rc == BC_OK && im->o->progress && im->r->n_read % PROGRESS_EVERY == 0)
		im->o->progress(im->o->ctx, rw->bytes, im->size);
	return rc;
}

/* ---- the batch -------------------------------------------------------------- */

static int refuse_duplicate(bc_db *db, const char *name, const char *sha, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(db, &st, "SELECT batch_id, started_at, file FROM import_batches WHERE kind = 'occurrences' AND sha256 = :sha", err);
	if (rc)
		return rc;
	bc_db__bind_text(st, ":sha", sha);
	int step = sqlite3_step(st);
	if (step == SQLITE_ROW)
		rc = bc_err_set(err, BC_EEXISTS, "%s: identical content was imported already as batch %lld on %s (from %s); nothing imported",
			name, (long long)sqlite3_column_int64(st, 0), sqlite3_column_text(st, 1), sqlite3_column_text(st, 2));
	else if (step != SQLITE_DONE)
		rc = bc_db__error(db, err, "reading import batches");
	sqlite3_finalize(st);
	return rc;
}

/* 1 when the database holds no occurrence batch (so no file can be a
 * repeat of one), 0 when it does, negative on an error. */
static int no_occurrence_batches(bc_db *db, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(db, &st, "SELECT EXISTS (SELECT 1 FROM import_batches WHERE kind = 'occurrences')", err);
	if (rc)
		return rc;
	if (sqlite3_step(st) == SQLITE_ROW)
		rc = sqlite3_column_int(st, 0) ? 0 : 1;
	else
		rc = bc_db__error(db, err, "reading import batches");
	sqlite3_finalize(st);
	return rc;
}

static int read_header(importer *im, bc_err *err)
{
	int rc = im->dwca ? 1 : bc_csv__next(im->csv, err);
	if (rc == 0)
		return bc_err_set(err, BC_EINVALID, "%s: empty file; expected a header row and data rows", im->name);
	if (rc < 0)
		return rc;
	im->nh = src_nfields(im);
	im->headers = bc__calloc(im->nh, sizeof *im->headers);
	if (!im->headers)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	for (size_t i = 0; i < im->nh; i++) {
		const char *h = im->dwca ? bc_dwca__column(im->dwca, i) : bc_csv__field(im->csv, i);
		while (*h == ' ' || *h == '\t')
			h++;
		size_t n = strlen(h);
		while (n && (h[n - 1] == ' ' || h[n - 1] == '\t'))
			n--;
		if (!(im->headers[i] = bc__strndup(h, n)))
			return bc_err_set(err, BC_ENOMEM, "out of memory");
	}
	rc = bc_colmap__bind(&im->plan, im->map, (const char *const *)im->headers, im->nh, im->name, im->dwca ? 1L : bc_csv__line(im->csv), err);
	if (rc)
		return rc;
	im->plan_bound = 1;
	if (im->plan.term_col[BC_T_SCIENTIFIC_NAME] < 0 && !im->plan.defaults[BC_T_SCIENTIFIC_NAME]) {
		bc_buf list = {0};
		for (size_t i = 0; i < im->nh && i < 8; i++)
			bc__buf_printf(&list, "%s'%s'", i ? ", " : "", im->headers[i]);
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: header: no scientificName column among %s%s (wrong delimiter, or headers that need --map?)",
			im->name, im->dwca ? 1L : bc_csv__line(im->csv), list.data ? list.data : "", im->nh > 8 ? ", ..." : "");
		bc__buf_free(&list);
		return rc;
	}
	return BC_OK;
}

static int options_json(importer *im, const char *path, bc_buf *b)
{
	bc__buf_puts(b, "{\"path\":");
	bc__buf_json_string(b, path);
	if (im->dwca) {
		bc__buf_puts(b, ",\"archive\":");
		bc__buf_puts(b, bc_dwca__layout_json(im->dwca));
	} else {
		bc__buf_puts(b, ",\"delimiter\":");
		char d[2] = {bc_csv__delim(im->csv), 0};
		bc__buf_json_string(b, d);
	}
	if (im->map) {
		bc__buf_puts(b, ",\"map\":");
		bc__buf_json_string(b, bc_colmap__name(im->map));
		bc__buf_printf(b, ",\"map_sha256\":\"%s\"", bc_colmap__sha256(im->map));
	}
	bc__buf_puts(b, ",\"environments\":");
	bc__buf_json_string(b, bc_vocab__name(im->env));
	bc__buf_printf(b, ",\"environments_sha256\":\"%s\"", bc_vocab__sha256(im->env));
	bc__buf_puts(b, ",\"preservation\":");
	bc__buf_json_string(b, bc_vocab__name(im->pres));
	bc__buf_printf(b, ",\"preservation_sha256\":\"%s\"", bc_vocab__sha256(im->pres));
	bc__buf_printf(b, ",\"age_conflict_tolerance_myr\":%g,\"dry_run\":%s}", BC_AGE_CONFLICT_TOLERANCE_MYR,
		im->o->dry_run ? "true" : "false");
	return b->data ? BC_OK : BC_ENOMEM;
}

static int prepare_all(importer *im, bc_err *err)
{
	int rc;
	if ((rc = bc_db__prepare(im->db, &im->st_occ, sql_insert_occ, err)) ||
		(rc = bc_db__prepare(im->db, &im->st_q, sql_insert_quarantine, err)) ||
		(rc = bc_locality__cache_new(&im->loc, im->db, err)))
		return rc;
	for (int p = 0; p < P_N; p++)
		if (!(im->occ_idx[p] = sqlite3_bind_parameter_index(im->st_occ, occ_params[p])))
			return bc_err_set(err, BC_ERROR, "internal: no SQL parameter %s", occ_params[p]);
	/* the same for every row; a binding outlives sqlite3_reset */
	sqlite3_bind_int64(im->st_occ, im->occ_idx[P_BATCH], im->batch);
	bt(im, P_TIMESCALE, im->r->timescale);
	return BC_OK;
}

/*
 * Bulk loads: when the new rows will outnumber those already stored, the
 * indexes on occurrences are dropped inside the transaction and rebuilt
 * from their own stored definitions before COMMIT (SQLite builds an index
 * by sorting, much faster than row-by-row inserts). All or nothing, like
 * the rest of the import.
 */
typedef struct saved_indexes {
	char *sql[16];
	size_t n;
} saved_indexes;

static int indexes_drop(bc_db *db, saved_indexes *si, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	char *names[16] = {0};
	int rc = bc_db__prepare(db, &st,
		"SELECT name, sql FROM sqlite_master WHERE type = 'index' AND tbl_name = 'occurrences' AND sql IS NOT NULL", err);
	if (rc)
		return rc;
	while (si->n < 16 && sqlite3_step(st) == SQLITE_ROW) {
		names[si->n] = bc__strdup((const char *)sqlite3_column_text(st, 0));
		si->sql[si->n] = bc__strdup((const char *)sqlite3_column_text(st, 1));
		if (!names[si->n] || !si->sql[si->n]) {
			free(names[si->n]);
			free(si->sql[si->n]);
			si->sql[si->n] = NULL;
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			break;
		}
		si->n++;
	}
	sqlite3_finalize(st);
	for (size_t i = 0; i < si->n; i++) {
		if (rc == BC_OK) {
			bc_buf q = {0};
			bc__buf_puts(&q, "DROP INDEX ");
			bc__buf_puts(&q, "\"");
			for (const char *c = names[i]; *c; c++)
				bc__buf_append(&q, c, *c == '"' ? 0 : 1);
			bc__buf_puts(&q, "\"");
			rc = q.data ? bc_db__exec(db, q.data, err) : bc_err_set(err, BC_ENOMEM, "out of memory");
			bc__buf_free(&q);
		}
		free(names[i]);
	}
	return rc;
}

/*
 * SQLite's sorter keeps as much in memory as the page cache allows, then
 * merges sorted runs. One big run of a million keys is a linked-list
 * merge sort that misses the processor cache at every step; runs of 1 MB
 * stay in it and the merge reads them in order. Measured on 1,000,000
 * rows: the three indexes took 3.0 s with the 32 MB cache, 1.2 s with
 * 1 MB. With worker threads allowed, the sorter sorts a full run on a
 * helper thread while the scan fills the next, and merges on several;
 * the reading thread is idle by then. Both settings are made only for
 * the rebuild; the thread limit is put back after it.
 */
#define INDEX_SORT_CACHE "PRAGMA cache_size = -1024"
#define INDEX_SORT_THREADS 2

static int indexes_restore(bc_db *db, saved_indexes *si, bc_err *err)
{
	if (!si->n)
		return BC_OK;
	sqlite3 *h = bc_db__sqlite(db);
	int threads_was = sqlite3_limit(h, SQLITE_LIMIT_WORKER_THREADS, INDEX_SORT_THREADS);
	int rc = bc_db__exec(db, INDEX_SORT_CACHE, err);
	for (size_t i = 0; i < si->n && rc == BC_OK; i++)
		rc = bc_db__exec(db, si->sql[i], err);
	sqlite3_limit(h, SQLITE_LIMIT_WORKER_THREADS, threads_was);
	return rc;
}

static void indexes_free(saved_indexes *si)
{
	for (size_t i = 0; i < si->n; i++)
		free(si->sql[i]);
	si->n = 0;
}

static void importer_free(importer *im)
{
	bc_csv__free(im->csv);
	bc_dwca__free(im->dwca);
	for (size_t i = 0; im->headers && i < im->nh; i++)
		free(im->headers[i]);
	free(im->headers);
	if (im->plan_bound)
		bc_colplan__free(&im->plan);
	bc_colmap__free(im->map);
	bc_vocab__free(im->env);
	bc_vocab__free(im->pres);
	bc_vocab__free(im->units);
	bc_resolver_free(im->res);
	bc_chart_free(im->chart);
	bc_geo__free(im->geo);
	sqlite3_finalize(im->st_occ);
	sqlite3_finalize(im->st_q);
	bc_locality__cache_free(im->loc);
	bc_import__row_free(&im->one);
	bc_import__queue_free(im->pp);
	if (im->ages)
		for (size_t i = 0; i < AGE_CACHE_SLOTS; i++)
			free(im->ages[i].key);
	free(im->ages);
	if (im->locs)
		for (size_t i = 0; i < LOC_CACHE_SLOTS; i++)
			free(im->locs[i].key);
	free(im->locs);
	free(im->loc_fids);
}

int bc_import_file(bc_import_result *out, bc_db *db, const char *path, const bc_import_options *opts, bc_err *err)
{
	static const bc_import_options defaults = BC_IMPORT_OPTIONS_INIT;
	importer im;
	memset(&im, 0, sizeof im);
	memset(out, 0, sizeof *out);
	im.db = db;
	im.o = opts ? opts : &defaults;
	im.r = out;
	im.name = im.o->display_name ? im.o->display_name : path;
	char sha[65];
	int in_tx = 0, fk_was_on = 0, hash_later = 0;
	char *snap_trigger = NULL; /* the snapshot's insert trigger, put back before COMMIT */
	bc_buf options = {0};
	int64_t vocab_id;
	sqlite3_stmt *st = NULL;
	saved_indexes saved = {{0}, 0};

	int rc = BC_OK;
	im.batch_name = im.name;
	if (bc_dwca__detect(path)) {
		if ((rc = bc_dwca__open(&im.dwca, path, im.name, NULL, err)))
			goto done;
		snprintf(sha, sizeof sha, "%s", bc_dwca__sha256(im.dwca));
	} else if ((rc = no_occurrence_batches(db, err)) < 0) {
		goto done;
	} else if (rc == 1) {
		/*
		 * The first occurrence file of a database cannot repeat an
		 * earlier one: its SHA-256 is then taken by the CSV reader as it
		 * reads (on the reading thread), not in a pass of its own before
		 * (0.1 s of a 157 MB file), and recorded before COMMIT. Checked
		 * again under the write lock. A file that cannot be opened is
		 * refused here with the words bc__sha256_file would use.
		 */
		FILE *f = fopen(path, "rb");
		if (!f) {
			rc = bc_err_set(err, errno == ENOENT ? BC_ENOTFOUND : BC_EIO, "%s: %s", path, strerror(errno));
			goto done;
		}
		fclose(f);
		hash_later = 1;
		snprintf(sha, sizeof sha, "(being read)");
		rc = BC_OK;
	} else if ((rc = bc__sha256_file(path, sha, err))) {
		goto done;
	}
	/* vocabularies, map, chart */
	if ((rc = bc_vocab__builtin(&im.env, BC_VOCAB_ENVIRONMENTS, err)) ||
		(rc = bc_vocab__builtin(&im.pres, BC_VOCAB_PRESERVATION, err)) ||
		(rc = bc_vocab__builtin(&im.units, BC_VOCAB_UNITS, err)))
		goto done;
	if (im.o->environments && (rc = bc_vocab__merge_file(im.env, im.o->environments, err)))
		goto done;
	if (im.o->preservation && (rc = bc_vocab__merge_file(im.pres, im.o->preservation, err)))
		goto done;
	if (im.o->map && (rc = bc_colmap__load(&im.map, im.o->map, im.units, err)))
		goto done;
	if ((rc = bc_timescale_get(&im.chart, db, im.o->timescale, err)) || (rc = bc_resolver_new(&im.res, im.chart, err)))
		goto done;
	for (size_t i = 0; i < bc_chart_count(im.chart); i++)
		if (bc_chart_interval(im.chart, i)->older_ma > im.chart_oldest)
			im.chart_oldest = bc_chart_interval(im.chart, i)->older_ma;
	snprintf(out->timescale, sizeof out->timescale, "%s", bc_chart_name(im.chart));
	if (!hash_later && (rc = refuse_duplicate(db, im.name, sha, err)))
		goto done;
	im.ages = bc__calloc(AGE_CACHE_SLOTS, sizeof *im.ages);
	im.locs = bc__calloc(LOC_CACHE_SLOTS, sizeof *im.locs);
	im.loc_fids = bc__calloc(LOC_CACHE_SLOTS, sizeof *im.loc_fids);
	if (!im.ages || !im.locs || !im.loc_fids) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	bc_csv_options co = {0};
	if (!im.dwca && (rc = bc_csv__open(&im.csv, path, im.name, &co, err)))
		goto done;
	if (hash_later)
		bc_csv__hash_input(im.csv);
	if ((rc = read_header(&im, err)))
		goto done;
	/* A fixed, larger page cache for the one big transaction: fewer
	 * spills of dirty pages; memory still does not grow with the file. */
	if ((rc = bc_db__exec(db, "PRAGMA cache_size = -32768", err)))
		goto done;
	/* Foreign keys are not enforced while the rows go in: the importer
	 * binds only the batch id it has just inserted and locality ids the
	 * locality module found or created in this same transaction, which
	 * holds the write lock throughout, so no parent row can be missing.
	 * Enforcing them cost two parent lookups per row (0.5 s of the
	 * storing thread per million rows). Restored when the import ends. */
	{
		sqlite3_stmt *fk = NULL;
		if ((rc = bc_db__prepare(db, &fk, "PRAGMA foreign_keys", err)))
			goto done;
		fk_was_on = sqlite3_step(fk) == SQLITE_ROW && sqlite3_column_int(fk, 0);
		sqlite3_finalize(fk);
		if (fk_was_on && (rc = bc_db__exec(db, "PRAGMA foreign_keys = OFF", err)))
			goto done;
	}
	if ((rc = bc_db__begin(db, err)))
		goto done;
	in_tx = 1;
	/* Again under the write lock: the same content may have been
	 * imported by another process while this one waited for it. */
	if (hash_later && (rc = no_occurrence_batches(db, err)) != 1) {
		if (rc < 0 || (rc = bc__sha256_file(path, sha, err)))
			goto done;
		hash_later = 0;
	}
	if (!hash_later && (rc = refuse_duplicate(db, im.name, sha, err)))
		goto done;
	if ((rc = bc_vocab__store(db, im.env, &vocab_id, err)) || (rc = bc_vocab__store(db, im.pres, &vocab_id, err)))
		goto done;
	if ((rc = options_json(&im, path, &options))) {
		rc = bc_err_set(err, rc, "out of memory");
		goto done;
	}
	if ((rc = bc_db__prepare(db, &st,
		     "INSERT INTO import_batches (kind, file, sha256, options, tool_version, timescale, metadata) "
		     "VALUES ('occurrences', :file, :sha, :options, :version, :timescale, :metadata)", err)))
		goto done;
	bc_db__bind_text(st, ":file", im.name);
	bc_db__bind_text(st, ":sha", sha);
	bc_db__bind_text(st, ":options", options.data);
	bc_db__bind_text(st, ":version", BC_VERSION);
	bc_db__bind_text(st, ":timescale", out->timescale);
	bc_db__bind_text(st, ":metadata", im.dwca ? bc_dwca__metadata(im.dwca) : "");
	if (sqlite3_step(st) != SQLITE_DONE) {
		rc = bc_db__error(db, err, "recording the import batch");
		goto done;
	}
	im.batch = sqlite3_last_insert_rowid(bc_db__sqlite(db));
	sqlite3_finalize(st);
	st = NULL;
	{
		/* about 150 bytes per row in a typical sheet (common practice, no source) */
		uint64_t expect = im.dwca ? 0 : bc_csv__size(im.csv) / 150;
		double stored = 0;
		sqlite3_stmt *cnt = NULL;
		if ((rc = bc_db__prepare(db, &cnt, "SELECT coalesce(max(occurrence_pk), 0) FROM occurrences", err)))
			goto done;
		if (sqlite3_step(cnt) == SQLITE_ROW)
			stored = sqlite3_column_double(cnt, 0);
		sqlite3_finalize(cnt);
		if (expect > 100000 && (double)expect > stored && (rc = indexes_drop(db, &saved, err)))
			goto done;
	}
	/* The column snapshot is emptied here, not by a trigger per row. */
	if ((rc = bc_snapshot__suspend(db, &snap_trigger, err)))
		goto done;
	if ((rc = prepare_all(&im, err)))
		goto done;
	im.size = im.dwca ? 0 : bc_csv__size(im.csv);
	if (bc_import__queue_start(&im) == BC_OK) {
		if ((rc = bc_import__queue_store(&im, err)))
			goto done;
	} else {
		im.cur = &im.one;
		while ((rc = src_next(&im, err)) == 1) {
			if (im.dwca)
				im.name = bc_dwca__where(im.dwca); /* messages name the data file inside the archive */
			if ((rc = bc_import__read_row(&im, err)) || (rc = bc_import__store_or_quarantine(&im, &im.one, err)))
				goto done;
		}
		im.name = im.batch_name;
		if (rc < 0)
			goto done;
		rc = BC_OK;
	}
	if (im.o->progress)
		im.o->progress(im.o->ctx, im.dwca ? 0 : bc_csv__bytes(im.csv), im.size);
	if (out->n_read == 0) {
		rc = bc_err_set(err, BC_EINVALID, "%s: only a header row, no data rows; nothing imported", im.name);
		goto done;
	}
	if ((rc = bc_db__prepare(db, &st,
		     "UPDATE import_batches SET n_read = :r, n_stored = :s, n_quarantined = :q, sha256 = :sha WHERE batch_id = :b", err)))
		goto done;
	if (hash_later && bc_csv__input_sha256(im.csv, sha) != BC_OK) {
		rc = bc_err_set(err, BC_ERROR, "internal: %s: the input was not read to its end", im.name);
		goto done;
	}
	bc_db__bind_text(st, ":sha", sha);
	bc_db__bind_int64(st, ":r", out->n_read);
	bc_db__bind_int64(st, ":s", out->n_stored);
	bc_db__bind_int64(st, ":q", out->n_quarantined);
	bc_db__bind_int64(st, ":b", im.batch);
	if (sqlite3_step(st) != SQLITE_DONE) {
		rc = bc_db__error(db, err, "recording the import counts");
		goto done;
	}
	sqlite3_finalize(st);
	st = NULL;
	/* finalize before COMMIT/ROLLBACK so no statement is left pending */
	sqlite3_finalize(im.st_occ);
	sqlite3_finalize(im.st_q);
	bc_locality__cache_free(im.loc);
	im.st_occ = im.st_q = NULL;
	im.loc = NULL;
	if ((rc = indexes_restore(db, &saved, err)) || (rc = bc_snapshot__resume(db, snap_trigger, err)))
		goto done;
	if (im.o->dry_run) {
		bc_db__rollback(db);
		in_tx = 0;
	} else {
		if ((rc = bc_db__commit(db, err)))
			goto done;
		in_tx = 0;
		out->batch_id = im.batch;
	}
done:
	sqlite3_finalize(st);
	importer_free(&im);
	if (in_tx)
		bc_db__rollback(db);
	if (fk_was_on)
		bc_db__exec(db, "PRAGMA foreign_keys = ON", NULL);
	bc__buf_free(&options);
	indexes_free(&saved);
	free(snap_trigger);
	return rc;
}
