/*
 * timescale.c - charts as files and in the database: the project's own
 * chart TSV (read and write, lossless), the charts shipped in the library
 * (reference/charts/NAME.tsv), and the tables timescales, intervals and
 * interval_aliases.
 */
#include "db.h"
#include "skos.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

static const char *const tsv_columns[] = {"name", "rank", "parent", "older_ma", "older_unc", "younger_ma",
	"younger_unc", "colour", "colour_source", "iri"};
#define N_COLUMNS (sizeof tsv_columns / sizeof tsv_columns[0])
static const char *const label_columns[] = {"interval", "lang", "label"};
#define LABELS_MARK "# labels"

/* ------------------------------------------------------------------ */
/* Writing                                                             */
/* ------------------------------------------------------------------ */

/* Backslash escapes keep every field on one line: \\ \t \n \r. */
static int put_escaped(FILE *f, const char *s)
{
	for (; s && *s; s++) {
		int r;
		switch (*s) {
		case '\\': r = fputs("\\\\", f); break;
		case '\t': r = fputs("\\t", f); break;
		case '\n': r = fputs("\\n", f); break;
		case '\r': r = fputs("\\r", f); break;
		default: r = fputc(*s, f); break;
		}
		if (r == EOF)
			return -1;
	}
	return 0;
}

/* Shortest decimal that reads back as the same double ("72.1", not
 * "72.099999999999994"). NaN gives "". */
static void format_number(char *buf, size_t n, double v)
{
	if (isnan(v)) {
		buf[0] = '\0';
		return;
	}
	for (int prec = 0; prec <= 17; prec++) {
		snprintf(buf, n, "%.*f", prec, v);
		if (strtod(buf, NULL) == v)
			return;
	}
	snprintf(buf, n, "%.17g", v);
}

int bc_chart_write_tsv(const bc_chart *chart, FILE *out, bc_err *err)
{
	int bad = 0;
	bad |= fputs("# chart: ", out) == EOF || put_escaped(out, bc_chart_name(chart)) ||
	       fputs("\n# source: ", out) == EOF || put_escaped(out, bc_chart_source(chart)) ||
	       fputs("\n# licence: ", out) == EOF || put_escaped(out, bc_chart_licence(chart)) ||
	       fputs("\n# format: bathychron chart TSV 1 (see reference/README.md)\n", out) == EOF;
	for (size_t i = 0; i < N_COLUMNS; i++)
		bad |= fprintf(out, "%s%s", i ? "\t" : "", tsv_columns[i]) < 0;
	bad |= fputc('\n', out) == EOF;
	for (size_t i = 0; i < bc_chart_count(chart) && !bad; i++) {
		const bc_interval *iv = bc_chart_interval(chart, i);
		char ob[40], ou[40], yb[40], yu[40], col[8] = "";
		format_number(ob, sizeof ob, iv->older_ma);
		format_number(ou, sizeof ou, iv->older_unc);
		format_number(yb, sizeof yb, iv->younger_ma);
		format_number(yu, sizeof yu, iv->younger_unc);
		if (iv->has_colour)
			snprintf(col, sizeof col, "#%06X", iv->colour & 0xFFFFFFu);
		const bc_interval *p = iv->parent >= 0 ? bc_chart_interval(chart, (size_t)iv->parent) : NULL;
		bad |= put_escaped(out, iv->name) || fprintf(out, "\t%s\t", bc_rank_name(iv->rank)) < 0 ||
		       put_escaped(out, p ? p->name : "") || fprintf(out, "\t%s\t%s\t%s\t%s\t%s\t", ob, ou, yb, yu, col) < 0 ||
		       put_escaped(out, iv->colour_source) || fputc('\t', out) == EOF || put_escaped(out, iv->iri) ||
		       fputc('\n', out) == EOF;
	}
	bad |= fprintf(out, "%s\n%s\t%s\t%s\n", LABELS_MARK, label_columns[0], label_columns[1], label_columns[2]) < 0;
	for (size_t i = 0; i < bc_chart_label_count(chart) && !bad; i++) {
		const bc_label *l = bc_chart_label(chart, i);
		bad |= put_escaped(out, bc_chart_interval(chart, (size_t)l->interval)->name) || fputc('\t', out) == EOF ||
		       put_escaped(out, l->lang) || fputc('\t', out) == EOF || put_escaped(out, l->text) || fputc('\n', out) == EOF;
	}
	if (bad || ferror(out))
		return bc_err_set(err, BC_EIO, "writing chart %s: %s", bc_chart_name(chart), strerror(errno));
	return BC_OK;
}

/* ------------------------------------------------------------------ */
/* Reading                                                             */
/* ------------------------------------------------------------------ */

/* Splits `line` in place at tabs and undoes the escapes; returns the
 * number of fields (at most `max`, one more means "too many"). */
static size_t split_fields(char *line, char **f, size_t max)
{
	size_t n = 0;
	char *w = line;
	f[n++] = w;
	for (char *r = line; *r; r++) {
		if (*r == '\t') {
			*w++ = '\0';
			if (n == max)
				return max + 1;
			f[n++] = w;
		} else if (*r == '\\' && r[1]) {
			r++;
			*w++ = *r == 't' ? '\t' : *r == 'n' ? '\n' : *r == 'r' ? '\r' : *r;
		} else {
			*w++ = *r;
		}
	}
	*w = '\0';
	return n;
}

static void unescape(char *s)
{
	char *f[1];
	split_fields(s, f, 1);
}

static int parse_num(const char *s, double *out, int allow_empty)
{
	if (!*s && allow_empty) {
		*out = NAN;
		return 0;
	}
	char *end;
	errno = 0;
	double v = strtod(s, &end);
	if (end == s || *end || errno || !isfinite(v))
		return -1;
	*out = v;
	return 0;
}

static int parse_colour(const char *s, unsigned *out)
{
	if (s[0] != '#' || strlen(s) != 7)
		return -1;
	for (int i = 1; i < 7; i++)
		if (!isxdigit((unsigned char)s[i]))
			return -1;
	*out = (unsigned)strtoul(s + 1, NULL, 16);
	return 0;
}

static int header_matches(char **f, size_t n, const char *const *want, size_t nwant)
{
	if (n != nwant)
		return 0;
	for (size_t i = 0; i < n; i++)
		if (strcmp(f[i], want[i]) != 0)
			return 0;
	return 1;
}

static int tsv_parse(bc_chart **out, char *buf, const char *file, const char *name, bc_err *err)
{
	*out = NULL;
	bc_chart *c = NULL;
	char *hname = NULL, *hsource = NULL, *hlicence = NULL;
	int rc = BC_OK, state = 0; /* 0 header comments, 1 intervals, 2 labels header, 3 labels */
	long line = 0;
	char *f[N_COLUMNS + 1];
	for (char *p = buf; p && !rc;) {
		char *nl = strchr(p, '\n');
		if (nl)
			*nl = '\0';
		char *s = p;
		p = nl ? nl + 1 : NULL;
		line++;
		size_t len = strlen(s);
		if (len && s[len - 1] == '\r')
			s[--len] = '\0';
		if (!len)
			continue;
		if (s[0] == '#') {
			if (strcmp(s, LABELS_MARK) == 0) {
				if (state != 1)
					rc = bc_err_set(err, BC_EINVALID, "%s:%ld: '%s' before the intervals table", file, line, LABELS_MARK);
				state = 2;
			} else if (state == 0) {
				static const char *const keys[] = {"# chart: ", "# source: ", "# licence: "};
				char **dst[] = {&hname, &hsource, &hlicence};
				for (size_t k = 0; k < 3; k++)
					if (strncmp(s, keys[k], strlen(keys[k])) == 0) {
						free(*dst[k]);
						if (!(*dst[k] = bc__strdup(s + strlen(keys[k]))))
							rc = bc_err_set(err, BC_ENOMEM, "out of memory");
						else
							unescape(*dst[k]);
					}
			}
			continue;
		}
		if (state == 0) {
			size_t n = split_fields(s, f, N_COLUMNS);
			if (!header_matches(f, n, tsv_columns, N_COLUMNS)) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: header: expected the columns name, rank, parent, older_ma, older_unc, "
					"younger_ma, younger_unc, colour, colour_source, iri (tab-separated)", file, line);
				break;
			}
			if ((rc = bc_chart_new(&c, name ? name : hname, err)))
				break;
			state = 1;
			continue;
		}
		if (state == 2) {
			size_t n = split_fields(s, f, 3);
			if (!header_matches(f, n, label_columns, 3))
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: header: expected the label columns interval, lang, label", file, line);
			state = 3;
			continue;
		}
		if (state == 1) {
			size_t n = split_fields(s, f, N_COLUMNS);
			if (n != N_COLUMNS) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: expected %zu tab-separated fields, found %s%zu", file, line, N_COLUMNS,
					n > N_COLUMNS ? "more than " : "", n > N_COLUMNS ? N_COLUMNS : n);
				break;
			}
			bc_interval iv = {.name = f[0], .rank = bc_rank_parse(f[1]), .parent = -1, .colour_source = f[8], .iri = f[9]};
			if (!*f[0])
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: name: empty", file, line);
			else if (bc_chart_find(c, f[0]) >= 0)
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: name: '%s' appears twice", file, line, f[0]);
			else if (iv.rank == BC_RANK_UNKNOWN)
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: rank: unknown rank '%s' (expected supereon, eon, era, period, subperiod, epoch or age)",
					file, line, f[1]);
			else if (*f[2] && (iv.parent = bc_chart_find(c, f[2])) < 0)
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: parent: '%s' is not an interval listed above", file, line, f[2]);
			else if (parse_num(f[3], &iv.older_ma, 0))
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: older_ma: '%s' is not a number", file, line, f[3]);
			else if (parse_num(f[4], &iv.older_unc, 1))
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: older_unc: '%s' is not a number", file, line, f[4]);
			else if (parse_num(f[5], &iv.younger_ma, 0))
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: younger_ma: '%s' is not a number", file, line, f[5]);
			else if (parse_num(f[6], &iv.younger_unc, 1))
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: younger_unc: '%s' is not a number", file, line, f[6]);
			else if (*f[7] && parse_colour(f[7], &iv.colour))
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: colour: '%s' is not #RRGGBB", file, line, f[7]);
			if (rc)
				break;
			iv.has_colour = *f[7] != '\0';
			bc_err e = {0};
			int idx = bc_chart_add_interval(c, &iv, &e);
			if (idx < 0)
				rc = bc_err_set(err, idx, "%s:%ld: older_ma: %s", file, line, e.msg);
			continue;
		}
		size_t n = split_fields(s, f, 3);
		int idx = n == 3 ? bc_chart_find(c, f[0]) : -1;
		if (n != 3)
			rc = bc_err_set(err, BC_EINVALID, "%s:%ld: expected 3 tab-separated fields (interval, lang, label), found %s%zu", file,
				line, n > 3 ? "more than " : "", n > 3 ? (size_t)3 : n);
		else if (idx < 0)
			rc = bc_err_set(err, BC_EINVALID, "%s:%ld: interval: '%s' is not an interval of the chart", file, line, f[0]);
		else if (!*f[2])
			rc = bc_err_set(err, BC_EINVALID, "%s:%ld: label: empty", file, line);
		else
			rc = bc_chart_add_label(c, idx, f[2], f[1], err);
	}
	if (!rc && !c)
		rc = bc_err_set(err, BC_EINVALID, "%s: no intervals table (not a bathychron chart TSV)", file);
	if (!rc && bc_chart_count(c) == 0)
		rc = bc_err_set(err, BC_EINVALID, "%s: the chart has no intervals", file);
	if (!rc && !*bc_chart_name(c))
		rc = bc_err_set(err, BC_EINVALID, "%s:1: chart: no chart name (a '# chart: NAME' line)", file);
	if (!rc)
		rc = bc_chart_set_source(c, hsource, hlicence, err);
	free(hname);
	free(hsource);
	free(hlicence);
	if (rc) {
		bc_chart_free(c);
		return rc;
	}
	*out = c;
	return BC_OK;
}

int bc_chart_load_tsv(bc_chart **out, const char *path, const char *name, bc_err *err)
{
	*out = NULL;
	char *buf = NULL, *auto_name = NULL;
	int rc = bc__read_file(path, &buf, NULL, err);
	if (rc)
		return rc;
	if (!name) {
		/* The file's own "# chart:" line wins over the file name. */
		if (!strstr(buf, "# chart: ") && !(name = auto_name = bc_chart__name_from_path(path)))
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
	}
	if (!rc)
		rc = tsv_parse(out, buf, path, name, err);
	free(buf);
	free(auto_name);
	return rc;
}

int bc_chart_load_file(bc_chart **out, const char *path, const char *name, bc_err *err)
{
	*out = NULL;
	const char *dot = strrchr(path, '.');
	int xml = 0;
	if (dot && (strcasecmp(dot, ".rdf") == 0 || strcasecmp(dot, ".xml") == 0 || strcasecmp(dot, ".owl") == 0)) {
		xml = 1;
	} else if (!dot || strcasecmp(dot, ".tsv") != 0) {
		FILE *f = fopen(path, "rb");
		if (!f)
			return bc_err_set(err, errno == ENOENT ? BC_ENOTFOUND : BC_EIO, "%s: %s", path, strerror(errno));
		int ch;
		while ((ch = fgetc(f)) != EOF && isspace(ch))
			;
		xml = ch == '<' || ch == 0xEF; /* '<' or a UTF-8 byte-order mark */
		fclose(f);
	}
	return xml ? bc_chart_load_skos(out, path, name, err) : bc_chart_load_tsv(out, path, name, err);
}

/* ------------------------------------------------------------------ */
/* Shipped charts                                                      */
/* ------------------------------------------------------------------ */

#define CHARTS_DIR "reference/charts/"

int bc_chart_builtin(bc_chart **out, const char *name, bc_err *err)
{
	*out = NULL;
	if (!name)
		name = BC_DEFAULT_CHART;
	char rname[256];
	snprintf(rname, sizeof rname, CHARTS_DIR "%s.tsv", name);
	const bc_resource *r = bc__resource(rname);
	if (!r) {
		const bc_resource *rs[64];
		size_t n = bc__resources(CHARTS_DIR, rs, 64);
		char list[512] = "";
		for (size_t i = 0; i < n && i < 64; i++) {
			const char *b = rs[i]->name + strlen(CHARTS_DIR);
			size_t used = strlen(list);
			snprintf(list + used, sizeof list - used, "%s%.*s", i ? ", " : "", (int)(strlen(b) - 4), b);
		}
		return bc_err_set(err, BC_ENOTFOUND, "no built-in chart named '%s' (built in: %s)", name, list);
	}
	char *buf = bc__strndup(r->data, r->len);
	if (!buf)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	int rc = tsv_parse(out, buf, r->name, name, err);
	free(buf);
	return rc;
}

/* ------------------------------------------------------------------ */
/* The database                                                        */
/* ------------------------------------------------------------------ */

static const char sql_find[] = "SELECT timescale_id, is_default FROM timescales WHERE name = :name";
static const char sql_insert_ts[] =
	"INSERT INTO timescales (name, source, licence, loaded_from, is_default) VALUES (:name, :source, :licence, :loaded_from, 0)";
static const char sql_insert_iv[] =
	"INSERT INTO intervals (timescale_id, seq, name, iri, rank, parent_id, older_ma, older_unc, younger_ma, younger_unc, colour, colour_source) "
	"VALUES (:ts, :seq, :name, :iri, :rank, :parent, :older, :older_unc, :younger, :younger_unc, :colour, :colour_source)";
static const char sql_insert_alias[] =
	"INSERT INTO interval_aliases (timescale_id, interval_id, label, lang) VALUES (:ts, :iv, :label, :lang)";
static const char sql_delete[] =
	"DELETE FROM interval_aliases WHERE timescale_id = :ts;"
	"UPDATE intervals SET parent_id = NULL WHERE timescale_id = :ts;"
	"DELETE FROM intervals WHERE timescale_id = :ts;"
	"DELETE FROM timescales WHERE timescale_id = :ts";
static const char sql_count_default[] = "SELECT count(*) FROM timescales WHERE is_default = 1";
static const char sql_set_default[] = "UPDATE timescales SET is_default = (timescale_id = :ts)";

/* Runs each statement of `sql` with :ts bound. */
static int exec_with_ts(bc_db *db, const char *sql, sqlite3_int64 ts, bc_err *err)
{
	const char *tail = sql;
	int rc = BC_OK;
	while (rc == BC_OK && tail && *tail) {
		sqlite3_stmt *st = NULL;
		if (sqlite3_prepare_v2(bc_db__sqlite(db), tail, -1, &st, &tail) != SQLITE_OK)
			return bc_db__error(db, err, "preparing SQL");
		if (!st)
			break;
		bc_db__bind_int64(st, ":ts", ts);
		if (sqlite3_step(st) != SQLITE_DONE)
			rc = bc_db__error(db, err, "replacing a chart");
		sqlite3_finalize(st);
	}
	return rc;
}

static int step_done(bc_db *db, sqlite3_stmt *st, bc_err *err, const char *context)
{
	int s = sqlite3_step(st);
	sqlite3_reset(st);
	sqlite3_clear_bindings(st);
	return s == SQLITE_DONE ? BC_OK : bc_db__error(db, err, context);
}

static int store(bc_db *db, const bc_chart *c, const char *loaded_from, int make_default, int replace, bc_err *err)
{
	sqlite3 *sql = bc_db__sqlite(db);
	sqlite3_stmt *find = NULL, *ts = NULL, *iv = NULL, *al = NULL, *cnt = NULL, *def = NULL;
	sqlite3_int64 *ids = NULL;
	const char *name = bc_chart_name(c);
	if (!name || !*name)
		return bc_err_set(err, BC_EUSAGE, "a chart needs a name to be stored");
	if (bc_chart_count(c) == 0)
		return bc_err_set(err, BC_EINVALID, "chart %s has no intervals", name);
	/* Inside bc_db_create's transaction a savepoint nests; otherwise we own the transaction. */
	int own = sqlite3_get_autocommit(sql);
	int rc = own ? bc_db__begin(db, err) : bc_db__exec(db, "SAVEPOINT bc_timescale_store", err);
	if (rc)
		return rc;
	if ((rc = bc_db__prepare(db, &find, sql_find, err)) || (rc = bc_db__prepare(db, &ts, sql_insert_ts, err)) ||
	    (rc = bc_db__prepare(db, &iv, sql_insert_iv, err)) || (rc = bc_db__prepare(db, &al, sql_insert_alias, err)) ||
	    (rc = bc_db__prepare(db, &cnt, sql_count_default, err)) || (rc = bc_db__prepare(db, &def, sql_set_default, err)))
		goto done;
	bc_db__bind_text(find, ":name", name);
	int was_default = 0;
	int s = sqlite3_step(find);
	if (s == SQLITE_ROW) {
		sqlite3_int64 old = sqlite3_column_int64(find, 0);
		was_default = sqlite3_column_int(find, 1);
		if (!replace) {
			rc = bc_err_set(err, BC_EEXISTS, "%s: a chart named '%s' is already loaded; load it under another name, or replace it explicitly (timescale load --replace)",
				bc_db_path(db), name);
			goto done;
		}
		if ((rc = exec_with_ts(db, sql_delete, old, err)))
			goto done;
	} else if (s != SQLITE_DONE) {
		rc = bc_db__error(db, err, "looking up a chart");
		goto done;
	}
	bc_db__bind_text(ts, ":name", name);
	bc_db__bind_text(ts, ":source", bc_chart_source(c));
	bc_db__bind_text(ts, ":licence", bc_chart_licence(c));
	bc_db__bind_text(ts, ":loaded_from", loaded_from ? loaded_from : "");
	if ((rc = step_done(db, ts, err, "storing a chart")))
		goto done;
	sqlite3_int64 tsid = sqlite3_last_insert_rowid(sql);
	size_t n = bc_chart_count(c);
	if (!(ids = bc__calloc(n, sizeof *ids))) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	for (size_t i = 0; i < n && !rc; i++) {
		const bc_interval *x = bc_chart_interval(c, i);
		char col[8];
		snprintf(col, sizeof col, "#%06X", x->colour & 0xFFFFFFu);
		bc_db__bind_int64(iv, ":ts", tsid);
		bc_db__bind_int64(iv, ":seq", (int64_t)i + 1);
		bc_db__bind_text(iv, ":name", x->name);
		bc_db__bind_text(iv, ":iri", x->iri);
		bc_db__bind_text(iv, ":rank", bc_rank_name(x->rank));
		if (x->parent >= 0)
			bc_db__bind_int64(iv, ":parent", ids[x->parent]);
		bc_db__bind_double(iv, ":older", x->older_ma);
		bc_db__bind_double(iv, ":older_unc", x->older_unc);
		bc_db__bind_double(iv, ":younger", x->younger_ma);
		bc_db__bind_double(iv, ":younger_unc", x->younger_unc);
		bc_db__bind_text(iv, ":colour", x->has_colour ? col : NULL);
		bc_db__bind_text(iv, ":colour_source", x->colour_source);
		rc = step_done(db, iv, err, "storing a chart interval");
		ids[i] = sqlite3_last_insert_rowid(sql);
	}
	for (size_t i = 0; i < bc_chart_label_count(c) && !rc; i++) {
		const bc_label *l = bc_chart_label(c, i);
		bc_db__bind_int64(al, ":ts", tsid);
		bc_db__bind_int64(al, ":iv", ids[l->interval]);
		bc_db__bind_text(al, ":label", l->text);
		bc_db__bind_text(al, ":lang", l->lang);
		rc = step_done(db, al, err, "storing an interval label");
	}
	if (rc)
		goto done;
	int any_default = sqlite3_step(cnt) == SQLITE_ROW && sqlite3_column_int(cnt, 0) > 0;
	if (make_default || was_default || !any_default) {
		bc_db__bind_int64(def, ":ts", tsid);
		rc = step_done(db, def, err, "making a chart the default");
	}
done:
	sqlite3_finalize(find);
	sqlite3_finalize(ts);
	sqlite3_finalize(iv);
	sqlite3_finalize(al);
	sqlite3_finalize(cnt);
	sqlite3_finalize(def);
	free(ids);
	if (own) {
		if (rc)
			bc_db__rollback(db);
		else
			rc = bc_db__commit(db, err);
		if (rc)
			bc_db__rollback(db);
	} else if (rc) {
		sqlite3_exec(sql, "ROLLBACK TO bc_timescale_store; RELEASE bc_timescale_store", NULL, NULL, NULL);
	} else {
		rc = bc_db__exec(db, "RELEASE bc_timescale_store", err);
	}
	return rc;
}

int bc_timescale_store(bc_db *db, const bc_chart *chart, const char *loaded_from, int make_default, bc_err *err)
{
	return store(db, chart, loaded_from, make_default, 0, err);
}

int bc_timescale_replace(bc_db *db, const bc_chart *chart, const char *loaded_from, int make_default, bc_err *err)
{
	return store(db, chart, loaded_from, make_default, 1, err);
}

static void copy_col(char *dst, size_t n, sqlite3_stmt *st, int col)
{
	const unsigned char *t = sqlite3_column_text(st, col);
	snprintf(dst, n, "%s", t ? (const char *)t : "");
}

int bc_timescale_list(bc_timescale_info **out, size_t *n, bc_db *db, bc_err *err)
{
	*out = NULL;
	*n = 0;
	sqlite3_stmt *st = NULL;
	bc_timescale_info *v = NULL;
	size_t cap = 0;
	int rc = bc_db__prepare(db, &st,
		"SELECT t.name, t.is_default, (SELECT count(*) FROM intervals i WHERE i.timescale_id = t.timescale_id), "
		"t.source, t.licence, t.loaded_from, t.loaded_at FROM timescales t ORDER BY t.is_default DESC, t.name", err);
	int s;
	while (rc == BC_OK && (s = sqlite3_step(st)) == SQLITE_ROW) {
		bc_timescale_info *p = bc__grow(v, *n, &cap, sizeof *p, 8);
		if (!p) {
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			break;
		}
		v = p;
		bc_timescale_info *t = &v[(*n)++];
		copy_col(t->name, sizeof t->name, st, 0);
		t->is_default = sqlite3_column_int(st, 1);
		t->n_intervals = (size_t)sqlite3_column_int64(st, 2);
		copy_col(t->source, sizeof t->source, st, 3);
		copy_col(t->licence, sizeof t->licence, st, 4);
		copy_col(t->loaded_from, sizeof t->loaded_from, st, 5);
		copy_col(t->loaded_at, sizeof t->loaded_at, st, 6);
	}
	if (rc == BC_OK && s != SQLITE_DONE)
		rc = bc_db__error(db, err, "listing charts");
	sqlite3_finalize(st);
	if (rc) {
		free(v);
		*n = 0;
		return rc;
	}
	*out = v;
	return BC_OK;
}

static int not_found(bc_db *db, const char *name, bc_err *err)
{
	bc_timescale_info *v = NULL;
	size_t n = 0;
	char list[600] = "";
	if (bc_timescale_list(&v, &n, db, NULL) == BC_OK)
		for (size_t i = 0; i < n; i++) {
			size_t used = strlen(list);
			snprintf(list + used, sizeof list - used, "%s%s", i ? ", " : "", v[i].name);
		}
	free(v);
	if (!name)
		return bc_err_set(err, BC_ENOTFOUND, "%s: no default chart (loaded: %s)", bc_db_path(db), n ? list : "none");
	return bc_err_set(err, BC_ENOTFOUND, "%s: no chart named '%s' (loaded: %s)", bc_db_path(db), name, n ? list : "none");
}

int bc_timescale_get(bc_chart **out, bc_db *db, const char *name, bc_err *err)
{
	*out = NULL;
	sqlite3_stmt *ts = NULL, *iv = NULL, *al = NULL;
	sqlite3_int64 *ids = NULL;
	size_t nids = 0, cap = 0;
	bc_chart *c = NULL;
	int rc = bc_db__prepare(db, &ts,
		"SELECT timescale_id, name, source, licence FROM timescales "
		"WHERE (:name IS NULL AND is_default = 1) OR name = :name ORDER BY timescale_id LIMIT 1", err);
	if (rc)
		goto done;
	bc_db__bind_text(ts, ":name", name);
	int s = sqlite3_step(ts);
	if (s != SQLITE_ROW) {
		rc = s == SQLITE_DONE ? not_found(db, name, err) : bc_db__error(db, err, "reading a chart");
		goto done;
	}
	sqlite3_int64 tsid = sqlite3_column_int64(ts, 0);
	if ((rc = bc_chart_new(&c, (const char *)sqlite3_column_text(ts, 1), err)) ||
	    (rc = bc_chart_set_source(c, (const char *)sqlite3_column_text(ts, 2), (const char *)sqlite3_column_text(ts, 3), err)))
		goto done;
	if ((rc = bc_db__prepare(db, &iv,
		     "SELECT interval_id, name, iri, rank, parent_id, older_ma, older_unc, younger_ma, younger_unc, colour, colour_source "
		     "FROM intervals WHERE timescale_id = :ts ORDER BY seq, interval_id", err)))
		goto done;
	bc_db__bind_int64(iv, ":ts", tsid);
	while (rc == BC_OK && (s = sqlite3_step(iv)) == SQLITE_ROW) {
		bc_interval x = {
			.name = (const char *)sqlite3_column_text(iv, 1),
			.iri = (const char *)sqlite3_column_text(iv, 2),
			.rank = bc_rank_parse((const char *)sqlite3_column_text(iv, 3)),
			.parent = -1,
			.older_ma = sqlite3_column_double(iv, 5),
			.older_unc = sqlite3_column_type(iv, 6) == SQLITE_NULL ? NAN : sqlite3_column_double(iv, 6),
			.younger_ma = sqlite3_column_double(iv, 7),
			.younger_unc = sqlite3_column_type(iv, 8) == SQLITE_NULL ? NAN : sqlite3_column_double(iv, 8),
			.colour_source = (const char *)sqlite3_column_text(iv, 10),
		};
		const char *col = (const char *)sqlite3_column_text(iv, 9);
		if (col && *col && parse_colour(col, &x.colour) == 0)
			x.has_colour = 1;
		if (sqlite3_column_type(iv, 4) != SQLITE_NULL) {
			sqlite3_int64 pid = sqlite3_column_int64(iv, 4);
			for (size_t k = 0; k < nids && x.parent < 0; k++)
				if (ids[k] == pid)
					x.parent = (int)k;
			if (x.parent < 0) {
				rc = bc_err_set(err, BC_EINVALID, "%s: chart %s: interval %s: its parent is not stored before it", bc_db_path(db),
					bc_chart_name(c), x.name ? x.name : "?");
				break;
			}
		}
		bc_err e = {0};
		int idx = bc_chart_add_interval(c, &x, &e);
		if (idx < 0) {
			rc = bc_err_set(err, idx, "%s: %s", bc_db_path(db), e.msg);
			break;
		}
		sqlite3_int64 *p = bc__grow(ids, nids, &cap, sizeof *p, 256);
		if (!p) {
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			break;
		}
		ids = p;
		ids[nids++] = sqlite3_column_int64(iv, 0);
	}
	if (rc == BC_OK && s != SQLITE_DONE)
		rc = bc_db__error(db, err, "reading chart intervals");
	if (rc || (rc = bc_db__prepare(db, &al,
			   "SELECT interval_id, label, lang FROM interval_aliases WHERE timescale_id = :ts ORDER BY rowid", err)))
		goto done;
	bc_db__bind_int64(al, ":ts", tsid);
	while (rc == BC_OK && (s = sqlite3_step(al)) == SQLITE_ROW) {
		sqlite3_int64 id = sqlite3_column_int64(al, 0);
		int idx = -1;
		for (size_t k = 0; k < nids && idx < 0; k++)
			if (ids[k] == id)
				idx = (int)k;
		rc = bc_chart_add_label(c, idx, (const char *)sqlite3_column_text(al, 1), (const char *)sqlite3_column_text(al, 2), err);
	}
	if (rc == BC_OK && s != SQLITE_DONE)
		rc = bc_db__error(db, err, "reading interval labels");
done:
	sqlite3_finalize(ts);
	sqlite3_finalize(iv);
	sqlite3_finalize(al);
	free(ids);
	if (rc) {
		bc_chart_free(c);
		return rc;
	}
	*out = c;
	return BC_OK;
}

/* Every chart under reference/charts/, the default one made default. */
int bc_timescale__seed(bc_db *db, bc_err *err)
{
	const bc_resource *rs[64];
	size_t n = bc__resources(CHARTS_DIR, rs, 64);
	int rc = BC_OK;
	for (size_t i = 0; i < n && i < 64 && rc == BC_OK; i++) {
		const char *b = rs[i]->name + strlen(CHARTS_DIR);
		size_t len = strlen(b);
		if (len < 5 || strcmp(b + len - 4, ".tsv") != 0)
			continue;
		char name[128];
		snprintf(name, sizeof name, "%.*s", (int)(len - 4), b);
		bc_chart *c = NULL;
		rc = bc_chart_builtin(&c, name, err);
		if (rc == BC_OK)
			rc = bc_timescale_store(db, c, "built-in", strcmp(name, BC_DEFAULT_CHART) == 0, err);
		bc_chart_free(c);
	}
	return rc;
}
