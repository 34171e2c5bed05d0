/*
 * check.c - the data-quality report: quarantined rows, unlinked
 * references, age conflicts, probable duplicates, localities given
 * different coordinates, rows without coordinates; and the quarantine as
 * a CSV to fix and import again.
 */
#include "csvio.h"
#include "db.h"
#include "locality.h"

#include <stdlib.h>
#include <string.h>

typedef struct writer {
	FILE *out;
	bc_format fmt;
	long long n;
	bc_buf line;
} writer;

static const char *const report_cols[] = {"problem", "batch", "file", "line", "key", "detail"};

/* Tabs and line breaks become spaces; text starting = + - @ gets the same
 * leading ' as in CSV, so a spreadsheet shows it instead of running it. */
static void tsv_cell(bc_buf *b, const char *s)
{
	if (s[0] && strchr("=+-@\t\r", s[0]))
		bc__buf_append(b, "'", 1);
	for (; *s; s++)
		bc__buf_append(b, *s == '\t' || *s == '\n' || *s == '\r' ? " " : s, 1);
}

static int w_row(writer *w, const char *const v[6])
{
	w->line.len = 0;
	if (w->fmt == BC_FORMAT_JSON) {
		bc__buf_puts(&w->line, w->n ? ",\n  {" : "\n  {");
		for (int i = 0; i < 6; i++) {
			bc__buf_printf(&w->line, "%s\"%s\": ", i ? ", " : "", report_cols[i]);
			if ((i == 1 || i == 3) && v[i][0])
				bc__buf_puts(&w->line, v[i]);
			else if (i == 1 || i == 3)
				bc__buf_puts(&w->line, "null");
			else
				bc__buf_json_string(&w->line, v[i]);
		}
		bc__buf_puts(&w->line, "}");
	} else {
		for (int i = 0; i < 6; i++) {
			if (i)
				bc__buf_puts(&w->line, w->fmt == BC_FORMAT_CSV ? "," : "\t");
			if (w->fmt == BC_FORMAT_CSV)
				bc_csv__text_cell(&w->line, v[i], ',', 1);
			else
				tsv_cell(&w->line, v[i]);
		}
		bc__buf_puts(&w->line, "\n");
	}
	w->n++;
	if (!w->line.data)
		return BC_ENOMEM;
	return fwrite(w->line.data, 1, w->line.len, w->out) == w->line.len ? BC_OK : BC_EIO;
}

/* Runs a query whose six columns are the report's and writes each row. */
static int run_query(bc_db *db, writer *w, const char *sql, long long *count, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(db, &st, sql, err);
	if (rc)
		return rc;
	int step;
	while ((step = sqlite3_step(st)) == SQLITE_ROW) {
		const char *v[6];
		for (int i = 0; i < 6; i++) {
			const char *t = (const char *)sqlite3_column_text(st, i);
			v[i] = t ? t : "";
		}
		if ((rc = w_row(w, v))) {
			rc = bc_err_set(err, rc, rc == BC_EIO ? "writing the report failed" : "out of memory");
			break;
		}
		if (count)
			(*count)++;
	}
	if (rc == BC_OK && step != SQLITE_DONE)
		rc = bc_db__error(db, err, "reading for the report");
	sqlite3_finalize(st);
	return rc;
}

static const char sql_quarantined[] =
	"SELECT 'quarantined', batch_id, file, line, field, reason FROM quarantine ORDER BY quarantine_id";

static const char sql_unlinked[] =
	"SELECT 'unlinked_reference', o.batch_id, b.file, o.line, o.reference_key, "
	"'no reference with this key; load it with: bathychron refs DB FILE.bib' "
	"FROM occurrences o JOIN import_batches b ON b.batch_id = o.batch_id "
	"WHERE o.reference_key <> '' AND NOT EXISTS (SELECT 1 FROM \"references\" r WHERE r.citation_key = o.reference_key) "
	"ORDER BY o.occurrence_pk";

static const char sql_conflicts[] =
	"SELECT 'age_conflict', o.batch_id, b.file, o.line, o.occurrence_id, o.age_note "
	"FROM occurrences o JOIN import_batches b ON b.batch_id = o.batch_id WHERE o.age_conflict <> 0 ORDER BY o.occurrence_pk";

/* Same taxon, locality, resolved age and reference: one row per group,
 * placed at its first occurrence, listing where all of them are (in
 * occurrence order). One pass with window functions: no index needed. */
static const char sql_duplicates[] =
	"WITH d AS (SELECT o.occurrence_pk AS pk, o.batch_id, b.file, o.line, o.scientific_name, "
	"  count(*) OVER w AS n, min(o.occurrence_pk) OVER w AS first, "
	"  group_concat(b.file || ':' || o.line, ', ') OVER (w ORDER BY o.occurrence_pk "
	"   ROWS BETWEEN UNBOUNDED PRECEDING AND UNBOUNDED FOLLOWING) AS places "
	"  FROM occurrences o JOIN import_batches b ON b.batch_id = o.batch_id "
	"  WINDOW w AS (PARTITION BY o.scientific_name, o.locality_id, o.older_ma, o.younger_ma, o.reference_key)) "
	"SELECT 'duplicate', batch_id, file, line, scientific_name, "
	"  n || ' occurrences with the same taxon, locality, age and reference: ' || places "
	"FROM d WHERE n > 1 AND pk = first ORDER BY first";

static const char sql_no_coords[] =
	"SELECT 'no_coordinates', '', '', '', '', "
	"  count(*) || ' of ' || (SELECT count(*) FROM occurrences) || ' stored occurrences have no coordinates (information; not counted as a problem)' "
	"FROM occurrences o LEFT JOIN localities l ON l.fid = o.locality_id WHERE l.longitude IS NULL HAVING count(*) > 0";

/* Two coordinate pairs for one locality closer than this are taken as the
 * same place written with different rounding: a pair rounded to three
 * decimals of a degree moves by up to about 80 m (common practice, no
 * source). */
#define CHECK_LOCALITY_TOLERANCE_M 200.0
/* Unnamed localities closer than this in one formation are reported as
 * probable duplicates (common practice, no source: about the precision of
 * coordinates read off a 1:25 000 map). */
#define CHECK_NEAR_UNNAMED_M 100.0

typedef struct conflict_ctx {
	writer *w;
	long long *count;
	int rc;
} conflict_ctx;

static int on_conflict(const bc_locality_conflict *c, void *user)
{
	conflict_ctx *x = user;
	char batch[8] = "", line[32] = "", detail[1024];
	if (c->line)
		snprintf(line, sizeof line, "%lld", (long long)c->line);
	snprintf(detail, sizeof detail,
		"given %.6f %.6f (lat lon)%s%s%s, %.0f m from the kept %.6f %.6f (first given at %s:%lld); the locality keeps the first",
		c->lat, c->lon, c->verbatim && c->verbatim[0] ? " as '" : "", c->verbatim && c->verbatim[0] ? c->verbatim : "",
		c->verbatim && c->verbatim[0] ? "'" : "", c->distance_m, c->kept_lat, c->kept_lon,
		c->kept_file && c->kept_file[0] ? c->kept_file : "?", (long long)c->kept_line);
	char key[600];
	snprintf(key, sizeof key, "%s%s%s", c->name ? c->name : "", c->country && c->country[0] ? ", " : "", c->country ? c->country : "");
	const char *v[6] = {"locality_coordinates", batch, c->file ? c->file : "", line, key, detail};
	int rc = w_row(x->w, v);
	if (rc)
		return x->rc = rc;
	(*x->count)++;
	return 0;
}

/* Unnamed localities close together in one formation: probably one site
 * given twice. Reported, never merged. */
static int on_near(const bc_locality_near *p, void *user)
{
	conflict_ctx *x = user;
	char line[32] = "", key[64], detail[1024];
	if (p->line2)
		snprintf(line, sizeof line, "%lld", (long long)p->line2);
	snprintf(key, sizeof key, "localities %lld and %lld", (long long)p->fid1, (long long)p->fid2);
	snprintf(detail, sizeof detail,
		"unnamed localities %.0f m apart in the same formation (%s): %.6f %.6f (first given at %s:%lld) and %.6f %.6f; "
		"probably one site; not merged (give them a locality name to join or separate them)",
		p->distance_m, p->formation && p->formation[0] ? p->formation : "none given", p->lat1, p->lon1,
		p->file1 && p->file1[0] ? p->file1 : "?", (long long)p->line1, p->lat2, p->lon2);
	const char *v[6] = {"near_duplicate_locality", "", p->file2 ? p->file2 : "", line, key, detail};
	int rc = w_row(x->w, v);
	if (rc)
		return x->rc = rc;
	(*x->count)++;
	return 0;
}

static int write_quarantine(bc_db *db, const char *kind, FILE *out, long long *n, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	char **cols = NULL;
	size_t ncols = 0, cap = 0;
	char **cells = NULL;
	bc_buf line = {0};
	long long rows = 0;
	/* One kind of batch at a time: occurrence rows and injury samples
	 * have different columns and go back through different imports. */
	int rc = bc_db__prepare(db, &st, "SELECT j.key FROM quarantine q JOIN import_batches b ON b.batch_id = q.batch_id, "
		"json_each(q.raw_row) j WHERE b.kind = :kind ORDER BY q.quarantine_id, j.id", err);
	if (rc)
		return rc;
	bc_db__bind_text(st, ":kind", kind);
	int step;
	while ((step = sqlite3_step(st)) == SQLITE_ROW) {
		const char *k = (const char *)sqlite3_column_text(st, 0);
		int seen = 0;
		for (size_t i = 0; i < ncols && !seen; i++)
			seen = strcmp(cols[i], k) == 0;
		if (seen)
			continue;
		char **nv = bc__grow(cols, ncols, &cap, sizeof *nv, 32);
		if (!nv)
			goto nomem;
		cols = nv;
		if (!(cols[ncols] = bc__strdup(k)))
			goto nomem;
		ncols++;
	}
	if (step != SQLITE_DONE) {
		rc = bc_db__error(db, err, "reading the quarantine");
		goto done;
	}
	sqlite3_finalize(st);
	st = NULL;
	cells = bc__calloc(ncols + 1, sizeof *cells);
	if (!cells)
		goto nomem;
	bc__buf_puts(&line, "quarantine_batch,quarantine_file,quarantine_line,quarantine_field,quarantine_reason");
	for (size_t i = 0; i < ncols; i++) {
		bc__buf_puts(&line, ",");
		bc_csv__text_cell(&line, cols[i], ',', 1);
	}
	bc__buf_puts(&line, "\r\n");
	if ((rc = bc_db__prepare(db, &st,
		     "SELECT q.quarantine_id, q.batch_id, q.file, q.line, q.field, q.reason, j.key, j.value "
		     "FROM quarantine q JOIN import_batches b ON b.batch_id = q.batch_id, json_each(q.raw_row) j "
		     "WHERE b.kind = :kind ORDER BY q.quarantine_id, j.id", err)))
		goto done;
	bc_db__bind_text(st, ":kind", kind);
	long long cur = -1;
	char head[5][1024];
	for (;;) {
		step = sqlite3_step(st);
		long long id = step == SQLITE_ROW ? sqlite3_column_int64(st, 0) : -2;
		if (id != cur && cur != -1) {
			for (int i = 0; i < 5; i++) {
				if (i)
					bc__buf_puts(&line, ",");
				bc_csv__text_cell(&line, head[i], ',', i != 0 && i != 2);
			}
			for (size_t i = 0; i < ncols; i++) {
				bc__buf_puts(&line, ",");
				bc_csv__text_cell(&line, cells[i] ? cells[i] : "", ',', 1);
				free(cells[i]);
				cells[i] = NULL;
			}
			bc__buf_puts(&line, "\r\n");
			rows++;
		}
		if (line.len > 1 << 16 || step != SQLITE_ROW) {
			if (!line.data)
				goto nomem;
			if (fwrite(line.data, 1, line.len, out) != line.len) {
				rc = bc_err_set(err, BC_EIO, "writing the quarantine failed");
				goto done;
			}
			line.len = 0;
		}
		if (step != SQLITE_ROW)
			break;
		if (id != cur) {
			cur = id;
			for (int i = 0; i < 5; i++) {
				const char *t = (const char *)sqlite3_column_text(st, i + 1);
				snprintf(head[i], sizeof head[i], "%s", t ? t : "");
			}
		}
		const char *k = (const char *)sqlite3_column_text(st, 6);
		const char *v = (const char *)sqlite3_column_text(st, 7);
		for (size_t i = 0; i < ncols; i++)
			if (strcmp(cols[i], k) == 0 && !cells[i]) {
				cells[i] = bc__strdup(v ? v : "");
				break;
			}
	}
	if (step != SQLITE_DONE)
		rc = bc_db__error(db, err, "reading the quarantine");
	*n = rows;
	goto done;
nomem:
	rc = bc_err_set(err, BC_ENOMEM, "out of memory");
done:
	sqlite3_finalize(st);
	for (size_t i = 0; i < ncols; i++) {
		free(cols[i]);
		if (cells)
			free(cells[i]);
	}
	free(cols);
	free(cells);
	bc__buf_free(&line);
	return rc;
}

int bc_check_run(bc_db *db, const bc_check_options *opts, FILE *out, long long *n_problems, bc_err *err)
{
	static const bc_check_options defaults = BC_CHECK_OPTIONS_INIT;
	if (!opts)
		opts = &defaults;
	*n_problems = 0;
	if (opts->quarantine)
		return write_quarantine(db, opts->kind ? opts->kind : "occurrences", out, n_problems, err);
	if (opts->format != BC_FORMAT_CSV && opts->format != BC_FORMAT_TSV && opts->format != BC_FORMAT_JSON)
		return bc_err_set(err, BC_EUSAGE, "check writes tsv, csv or json");
	writer w = {out, opts->format, 0, {0}};
	int rc = BC_OK;
	if (w.fmt == BC_FORMAT_JSON)
		fputs("[", out);
	else {
		for (int i = 0; i < 6; i++)
			fprintf(out, "%s%s", i ? (w.fmt == BC_FORMAT_CSV ? "," : "\t") : "", report_cols[i]);
		fputs("\n", out);
	}
	const char *const problems[] = {sql_quarantined, sql_unlinked, sql_conflicts, sql_duplicates};
	for (size_t i = 0; rc == BC_OK && i < sizeof problems / sizeof problems[0]; i++)
		rc = run_query(db, &w, problems[i], n_problems, err);
	if (rc == BC_OK) {
		conflict_ctx x = {&w, n_problems, 0};
		rc = bc_locality__conflicts(db, CHECK_LOCALITY_TOLERANCE_M, on_conflict, &x, err);
		if (rc == BC_OK && !x.rc)
			rc = bc_locality__near_unnamed(db, CHECK_NEAR_UNNAMED_M, on_near, &x, err);
		if (x.rc)
			rc = bc_err_set(err, x.rc, x.rc == BC_EIO ? "writing the report failed" : "out of memory");
	}
	if (rc == BC_OK)
		rc = run_query(db, &w, sql_no_coords, NULL, err);
	if (rc == BC_OK && w.fmt == BC_FORMAT_JSON)
		fputs(w.n ? "\n]\n" : "]\n", out);
	bc__buf_free(&w.line);
	return rc;
}
