/*
 * export.c - stored occurrences back out as CSV with the design.md input
 * columns plus the extra columns kept at import, so that import -> export
 * -> import stores the same values. Text cells are guarded against
 * spreadsheet formula injection. (The Darwin Core Archive writer is a
 * separate module; cmd_export dispatches on --format.)
 */
#include "colmap.h"
#include "csvio.h"
#include "db.h"
#include "depth.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* The stored value behind each input column, in bc_term order. `num`
 * marks numeric columns, which are written as numbers and never guarded. */
static const struct { const char *expr; int num; } export_cols[BC_TERM_COUNT] = {
	{"o.occurrence_id", 0}, {"o.scientific_name", 0}, {"o.taxon_group", 0}, {"o.\"order\"", 0},
	{"o.family", 0}, {"o.genus", 0}, {"l.name", 0}, {"l.country", 0},
	{"l.latitude", 1}, {"l.longitude", 1},
	{"CASE WHEN l.longitude IS NOT NULL THEN 'EPSG:4326' ELSE '' END", 0},
	{"l.uncertainty_m", 1}, {"l.verbatim_coordinates", 0}, {"l.verbatim_srs", 0},
	{"o.earliest_stage", 0}, {"o.latest_stage", 0}, {"o.earliest_series", 0}, {"o.latest_series", 0},
	{"o.earliest_system", 0}, {"o.latest_system", 0},
	{"o.earliest_ma_given", 1}, {"o.latest_ma_given", 1},
	{"o.formation", 0}, {"o.member", 0}, {"o.bed", 0},
	/* depths from the environment vocabulary are not written back: the
	 * term is, and a re-import derives the same range from it */
	{"CASE WHEN o.depth_source = 'given' THEN o.min_depth_m END", 1},
	{"CASE WHEN o.depth_source = 'given' THEN o.max_depth_m END", 1},
	{"o.environment", 0}, {"o.preservation", 0}, {"o.individual_count", 1}, {"o.reference_key", 0},
};

/* Extra column names in first-seen order. */
typedef struct names {
	char **v;
	size_t n, cap;
} names;

static void names_free(names *n)
{
	for (size_t i = 0; i < n->n; i++)
		free(n->v[i]);
	free(n->v);
	memset(n, 0, sizeof *n);
}

static int names_index(const names *n, const char *s)
{
	for (size_t i = 0; i < n->n; i++)
		if (strcmp(n->v[i], s) == 0)
			return (int)i;
	return -1;
}

static int names_add(names *n, const char *s)
{
	if (names_index(n, s) >= 0)
		return BC_OK;
	char **nv = bc__grow(n->v, n->n, &n->cap, sizeof *nv, 16);
	if (!nv)
		return BC_ENOMEM;
	n->v = nv;
	if (!(n->v[n->n] = bc__strdup(s)))
		return BC_ENOMEM;
	n->n++;
	return BC_OK;
}

static void number_cell(bc_buf *b, sqlite3_stmt *st, int col)
{
	int t = sqlite3_column_type(st, col);
	if (t == SQLITE_NULL)
		return;
	if (t == SQLITE_INTEGER) {
		bc__buf_printf(b, "%lld", (long long)sqlite3_column_int64(st, col));
		return;
	}
	char num[40];
	bc_depth__format(sqlite3_column_double(st, col), num, sizeof num);
	bc__buf_puts(b, num);
}

int bc_export_csv(bc_db *db, FILE *out, long long *n_rows, bc_err *err)
{
	names extra = {0};
	sqlite3_stmt *st = NULL, *ex = NULL;
	bc_buf sql = {0}, line = {0};
	const char **vals = NULL;
	long long rows = 0;
	int rc = bc_db__prepare(db, &st,
		"SELECT j.key FROM occurrences o, json_each(o.extra) j ORDER BY o.occurrence_pk, j.id", err);
	if (rc)
		goto done;
	int step;
	while ((step = sqlite3_step(st)) == SQLITE_ROW) {
		const char *k = (const char *)sqlite3_column_text(st, 0);
		if (k && names_index(&extra, k) < 0 && bc_colmap__term_find(k) < 0 && names_add(&extra, k)) {
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			goto done;
		}
	}
	if (step != SQLITE_DONE) {
		rc = bc_db__error(db, err, "reading extra columns");
		goto done;
	}
	sqlite3_finalize(st);
	st = NULL;
	bc__buf_puts(&sql, "SELECT o.occurrence_pk");
	for (int t = 0; t < BC_TERM_COUNT; t++)
		bc__buf_printf(&sql, ", %s", export_cols[t].expr);
	bc__buf_puts(&sql, " FROM occurrences o LEFT JOIN localities l ON l.fid = o.locality_id ORDER BY o.occurrence_pk");
	if (!sql.data) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	if ((rc = bc_db__prepare(db, &st, sql.data, err)) ||
		(rc = bc_db__prepare(db, &ex, "SELECT j.key, j.value FROM occurrences o, json_each(o.extra) j WHERE o.occurrence_pk = :pk ORDER BY j.id", err)))
		goto done;
	vals = bc__calloc(extra.n + 1, sizeof *vals);
	if (!vals) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	for (int t = 0; t < BC_TERM_COUNT; t++)
		bc__buf_printf(&line, "%s%s", t ? "," : "", bc_colmap__term_name(t));
	for (size_t i = 0; i < extra.n; i++) {
		bc__buf_puts(&line, ",");
		bc_csv__text_cell(&line, extra.v[i], ',', 1);
	}
	bc__buf_puts(&line, "\r\n");
	while ((step = sqlite3_step(st)) == SQLITE_ROW) {
		if (line.data && fwrite(line.data, 1, line.len, out) != line.len) {
			rc = bc_err_set(err, BC_EIO, "writing the export failed");
			goto done;
		}
		line.len = 0;
		for (int t = 0; t < BC_TERM_COUNT; t++) {
			if (t)
				bc__buf_puts(&line, ",");
			if (export_cols[t].num)
				number_cell(&line, st, t + 1);
			else {
				const char *v = (const char *)sqlite3_column_text(st, t + 1);
				bc_csv__text_cell(&line, v ? v : "", ',', 1);
			}
		}
		if (extra.n) {
			sqlite3_reset(ex);
			sqlite3_bind_int64(ex, 1, sqlite3_column_int64(st, 0));
			char **copies = bc__calloc(extra.n, sizeof *copies);
			if (!copies) {
				rc = bc_err_set(err, BC_ENOMEM, "out of memory");
				goto done;
			}
			while (sqlite3_step(ex) == SQLITE_ROW) {
				int i = names_index(&extra, (const char *)sqlite3_column_text(ex, 0));
				const char *v = (const char *)sqlite3_column_text(ex, 1);
				if (i >= 0 && v && !copies[i])
					copies[i] = bc__strdup(v);
			}
			for (size_t i = 0; i < extra.n; i++) {
				bc__buf_puts(&line, ",");
				bc_csv__text_cell(&line, copies[i] ? copies[i] : "", ',', 1);
				free(copies[i]);
			}
			free(copies);
		}
		if (bc__buf_puts(&line, "\r\n")) {
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			goto done;
		}
		rows++;
	}
	if (step != SQLITE_DONE) {
		rc = bc_db__error(db, err, "reading occurrences");
		goto done;
	}
	if (line.data && fwrite(line.data, 1, line.len, out) != line.len)
		rc = bc_err_set(err, BC_EIO, "writing the export failed");
	if (n_rows)
		*n_rows = rows;
done:
	sqlite3_finalize(st);
	sqlite3_finalize(ex);
	names_free(&extra);
	bc__buf_free(&sql);
	bc__buf_free(&line);
	free(vals);
	return rc;
}
