/*
 * injuries.c - import of injury samples (animals examined for regenerating
 * arms) with the occurrence import's rules: one transaction, one batch row
 * of kind 'injuries', every bad row quarantined with its place and reason,
 * identical content refused.
 */
#include "csvio.h"
#include "db.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

static const char SQL_FIND_BATCH[] =
	"SELECT batch_id, started_at, file FROM import_batches WHERE kind = 'injuries' AND sha256 = :sha";
static const char SQL_NEW_BATCH[] =
	"INSERT INTO import_batches (kind, file, sha256, options, tool_version, timescale) "
	"VALUES ('injuries', :file, :sha, :options, :version, :timescale)";
static const char SQL_END_BATCH[] =
	"UPDATE import_batches SET n_read = :n_read, n_stored = :n_stored, n_quarantined = :n_quarantined "
	"WHERE batch_id = :batch";
static const char SQL_QUARANTINE[] =
	"INSERT INTO quarantine (batch_id, file, line, field, reason, raw_row) "
	"VALUES (:batch, :file, :line, :field, :reason, :raw)";
static const char SQL_INSERT[] =
	"INSERT INTO injury_samples (batch_id, line, sample_id, site, min_depth_m, max_depth_m, "
	"age_text, age_status, age_from, age_to, older_ma, younger_ma, timescale, taxon, record_kind, "
	"individuals_examined, individuals_regenerating, arms_examined, arms_regenerating, "
	"duration_min_days, duration_max_days, duration_source, regenerate_length_min_mm, "
	"regenerate_length_max_mm, regeneration_rate_min_mm_day, regeneration_rate_max_mm_day, "
	"recorded_by, reference_key, extra) VALUES (:batch, :line, :sample_id, :site, :min_depth, "
	":max_depth, :age_text, :age_status, :age_from, :age_to, :older, :younger, :timescale, :taxon, "
	":kind, :ind_exam, :ind_regen, :arms_exam, :arms_regen, :dmin, :dmax, :dsource, :lmin, :lmax, "
	":rmin, :rmax, :recorded_by, :reference, :extra)";

/* The input columns. Names are matched case-insensitively, with an
 * optional "dwc:" prefix; Darwin Core terms where Darwin Core has one. */
enum {
	C_SAMPLE_ID, C_SITE, C_MIN_DEPTH, C_MAX_DEPTH, C_DEPTH, C_AGE, C_TAXON,
	C_IND_EXAM, C_IND_REGEN, C_ARMS, C_ARMS_REGEN, C_DAYS, C_LENGTH, C_RATE,
	C_RECORDED_BY, C_REFERENCES, C_COUNT
};

static const struct {
	int col;
	const char *name;
} injuries_names[] = {
	{C_SAMPLE_ID, "sampleID"},
	{C_SITE, "locality"}, {C_SITE, "site"},
	{C_MIN_DEPTH, "minimumDepthInMeters"}, {C_MIN_DEPTH, "minimumPaleodepthInMeters"},
	{C_MAX_DEPTH, "maximumDepthInMeters"}, {C_MAX_DEPTH, "maximumPaleodepthInMeters"},
	{C_DEPTH, "depth"},
	{C_AGE, "age"},
	{C_TAXON, "scientificName"}, {C_TAXON, "taxon"},
	{C_IND_EXAM, "individualsExamined"},
	{C_IND_REGEN, "individualsRegenerating"},
	{C_ARMS, "armsExamined"},
	{C_ARMS_REGEN, "armsRegenerating"},
	{C_DAYS, "regenerationDays"},
	{C_LENGTH, "regenerateLengthMm"},
	{C_RATE, "regenerationRateMmPerDay"},
	{C_RECORDED_BY, "recordedBy"},
	{C_REFERENCES, "associatedReferences"},
};

static int injuries_column(const char *header)
{
	if (strncasecmp(header, "dwc:", 4) == 0)
		header += 4;
	for (size_t i = 0; i < sizeof injuries_names / sizeof injuries_names[0]; i++)
		if (strcasecmp(header, injuries_names[i].name) == 0)
			return injuries_names[i].col;
	return -1;
}

/* One import in progress. */
typedef struct injuries_ctx {
	bc_db *db;
	bc_csv *csv;
	const bc_injuries_import_options *opts;
	bc_injuries_import_result *res;
	const char *file;        /* name used in messages and the quarantine */
	char **headers;
	size_t nheaders;
	int col[C_COUNT];        /* column index per input column, -1 when absent */
	bc_resolver *resolver;
	bc_chart *chart;
	sqlite3_stmt *st_insert, *st_quarantine;
	bc_buf raw, extra;
} injuries_ctx;

/* A parsed row. */
typedef struct injuries_row {
	const char *sample_id, *site, *age_text, *taxon, *recorded_by, *reference;
	double dmin, dmax;
	bc_age age;
	int recent;
	const char *kind;
	long ind_exam, ind_regen, arms_exam, arms_regen; /* arms -1 when absent */
	double days_min, days_max, lmin, lmax, rmin, rmax;
	const char *dsource;
} injuries_row;

/* A problem with one field of the current row: its header and reason. */
typedef struct injuries_problem {
	const char *field;
	char reason[600];
} injuries_problem;

static int problem(injuries_problem *p, const char *field, const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 3, 4)))
#endif
	;

static int problem(injuries_problem *p, const char *field, const char *fmt, ...)
{
	va_list ap;
	p->field = field;
	va_start(ap, fmt);
	vsnprintf(p->reason, sizeof p->reason, fmt, ap);
	va_end(ap);
	return BC_EINVALID;
}

static const char *cell(const injuries_ctx *c, int col)
{
	int i = c->col[col];
	if (i < 0 || (size_t)i >= bc_csv__nfields(c->csv))
		return "";
	return bc_csv__field(c->csv, (size_t)i);
}

/* The column's header as the file spells it, or its canonical name when
 * the file has no such column. */
static const char *header(const injuries_ctx *c, int col)
{
	if (c->col[col] >= 0)
		return c->headers[c->col[col]];
	for (size_t i = 0; i < sizeof injuries_names / sizeof injuries_names[0]; i++)
		if (injuries_names[i].col == col)
			return injuries_names[i].name;
	return "row";
}

static int blank(const char *s)
{
	while (*s && isspace((unsigned char)*s))
		s++;
	return *s == '\0';
}

/* A finite number, spaces allowed around it. */
static int parse_number(const char *s, double *out)
{
	char *end;
	errno = 0;
	double v = strtod(s, &end);
	if (end == s || errno)
		return -1;
	while (*end && isspace((unsigned char)*end))
		end++;
	if (*end || !isfinite(v))
		return -1;
	*out = v;
	return 0;
}

/* "v" or "a-b" (hyphen or en dash), both non-negative numbers, a <= b. */
static int parse_range(const char *s, double *lo, double *hi)
{
	while (*s && isspace((unsigned char)*s))
		s++;
	if (!*s)
		return -1;
	const char *dash = NULL;
	for (const char *q = s + 1; *q; q++) {
		if (*q == '-' && q[-1] != 'e' && q[-1] != 'E') {
			dash = q;
			break;
		}
		if ((unsigned char)q[0] == 0xe2 && (unsigned char)q[1] == 0x80 && (unsigned char)q[2] == 0x93) {
			dash = q;
			break;
		}
	}
	if (!dash) {
		if (parse_number(s, lo))
			return -1;
		*hi = *lo;
		return 0;
	}
	char a[64];
	size_t n = (size_t)(dash - s);
	if (n >= sizeof a)
		return -1;
	memcpy(a, s, n);
	a[n] = '\0';
	const char *b = dash + (*dash == '-' ? 1 : 3);
	if (parse_number(a, lo) || parse_number(b, hi) || *lo > *hi)
		return -1;
	return 0;
}

/* A non-negative whole number. */
static int parse_count(const char *s, long *out)
{
	double v;
	if (parse_number(s, &v) || v < 0 || v != floor(v) || v > 1e9)
		return -1;
	*out = (long)v;
	return 0;
}

static int read_count(const injuries_ctx *c, int col, long *out, injuries_problem *p)
{
	if (parse_count(cell(c, col), out))
		return problem(p, header(c, col), "'%s' is not a whole number of 0 or more", cell(c, col));
	return BC_OK;
}

static int read_depth(const injuries_ctx *c, injuries_row *r, injuries_problem *p)
{
	const char *smin = cell(c, C_MIN_DEPTH), *smax = cell(c, C_MAX_DEPTH), *sd = cell(c, C_DEPTH);
	if (!blank(sd)) {
		if (!blank(smin) || !blank(smax))
			return problem(p, header(c, C_DEPTH), "give the depth in one way: '%s' here or the minimum/maximum columns, not both", sd);
		if (parse_range(sd, &r->dmin, &r->dmax) || r->dmin < 0)
			return problem(p, header(c, C_DEPTH), "'%s' is not a depth in metres (a number such as 350 or a range such as 200-500)", sd);
		return BC_OK;
	}
	if (blank(smin) && blank(smax))
		return problem(p, header(c, C_MIN_DEPTH),
			       "no depth: every sample needs a depth or depth range in metres");
	if (!blank(smin) && parse_number(smin, &r->dmin))
		return problem(p, header(c, C_MIN_DEPTH), "'%s' is not a number of metres", smin);
	if (!blank(smax) && parse_number(smax, &r->dmax))
		return problem(p, header(c, C_MAX_DEPTH), "'%s' is not a number of metres", smax);
	if (blank(smin))
		r->dmin = r->dmax;
	if (blank(smax))
		r->dmax = r->dmin;
	if (r->dmin < 0)
		return problem(p, header(c, C_MIN_DEPTH), "depth %g m is negative (depths are positive downwards)", r->dmin);
	if (r->dmin > r->dmax)
		return problem(p, header(c, C_MAX_DEPTH), "maximum depth %g m is shallower than the minimum %g m", r->dmax, r->dmin);
	return BC_OK;
}

static int read_age(injuries_ctx *c, injuries_row *r, injuries_problem *p)
{
	r->age_text = cell(c, C_AGE);
	memset(&r->age, 0, sizeof r->age);
	if (blank(r->age_text))
		return problem(p, header(c, C_AGE), "no age: give a chart name, numbers in Ma, or Recent for living material");
	const char *s = r->age_text;
	while (isspace((unsigned char)*s))
		s++;
	if (strncasecmp(s, "recent", 6) == 0 && blank(s + 6)) {
		r->recent = 1;
		r->age.older_ma = r->age.younger_ma = 0.0;
		return BC_OK;
	}
	if (bc_age_resolve(c->resolver, r->age_text, &r->age) != BC_OK)
		return problem(p, header(c, C_AGE), "'%s': the age could not be resolved", r->age_text);
	if (r->age.status == BC_AGE_UNKNOWN)
		return problem(p, header(c, C_AGE), "'%s' is not a known age%s%s", r->age_text,
			       r->age.note[0] ? "; " : "", r->age.note);
	return BC_OK;
}

static int read_counts(const injuries_ctx *c, injuries_row *r, injuries_problem *p)
{
	int rc;
	int has_ind = !blank(cell(c, C_IND_EXAM)), has_arms = !blank(cell(c, C_ARMS));
	int has_ind_regen = !blank(cell(c, C_IND_REGEN)), has_arms_regen = !blank(cell(c, C_ARMS_REGEN));
	r->arms_exam = r->arms_regen = -1;
	if (has_arms != has_arms_regen)
		return problem(p, header(c, has_arms ? C_ARMS_REGEN : C_ARMS),
			       "arms examined and arms regenerating go together: give both or neither");
	if (has_arms) {
		if ((rc = read_count(c, C_ARMS, &r->arms_exam, p)) || (rc = read_count(c, C_ARMS_REGEN, &r->arms_regen, p)))
			return rc;
		if (r->arms_regen > r->arms_exam)
			return problem(p, header(c, C_ARMS_REGEN), "%ld arms regenerating of %ld examined", r->arms_regen, r->arms_exam);
		if (r->arms_exam == 0)
			return problem(p, header(c, C_ARMS), "no arms examined");
	}
	if (has_ind) {
		r->kind = "sample";
		if (!has_ind_regen)
			return problem(p, header(c, C_IND_REGEN),
				       "individuals examined needs individuals regenerating (those with at least one regenerating arm)");
		if ((rc = read_count(c, C_IND_EXAM, &r->ind_exam, p)) || (rc = read_count(c, C_IND_REGEN, &r->ind_regen, p)))
			return rc;
		if (r->ind_exam == 0)
			return problem(p, header(c, C_IND_EXAM), "no individuals examined");
		if (r->ind_regen > r->ind_exam)
			return problem(p, header(c, C_IND_REGEN), "%ld individuals regenerating of %ld examined", r->ind_regen, r->ind_exam);
		if (has_arms && r->arms_regen < r->ind_regen)
			return problem(p, header(c, C_ARMS_REGEN), "%ld regenerating arms cannot come from %ld regenerating individuals",
				       r->arms_regen, r->ind_regen);
		if (has_arms && r->arms_regen > 0 && r->ind_regen == 0)
			return problem(p, header(c, C_IND_REGEN), "0 individuals regenerating, but %ld regenerating arms", r->arms_regen);
		return BC_OK;
	}
	if (!has_arms)
		return problem(p, header(c, C_IND_EXAM),
			       "no counts: give individualsExamined and individualsRegenerating for a sample, "
			       "or armsExamined and armsRegenerating for one individual");
	/* One individual. */
	r->kind = "individual";
	r->ind_exam = 1;
	r->ind_regen = r->arms_regen > 0;
	if (has_ind_regen) {
		long given;
		if ((rc = read_count(c, C_IND_REGEN, &given, p)))
			return rc;
		if (given != r->ind_regen)
			return problem(p, header(c, C_IND_REGEN), "%ld disagrees with the %ld regenerating arms of this individual",
				       given, r->arms_regen);
	}
	return BC_OK;
}

static int read_duration(const injuries_ctx *c, injuries_row *r, injuries_problem *p)
{
	const char *days = cell(c, C_DAYS), *len = cell(c, C_LENGTH), *rate = cell(c, C_RATE);
	r->lmin = r->lmax = r->rmin = r->rmax = NAN;
	if (!blank(days)) {
		if (!blank(len) || !blank(rate))
			return problem(p, header(c, C_DAYS), "give the duration in one way: days, or regenerate length with regeneration rate, not both");
		if (parse_range(days, &r->days_min, &r->days_max) || !(r->days_min > 0))
			return problem(p, header(c, C_DAYS), "'%s' is not a positive number of days or a range such as 60-120", days);
		r->dsource = "given";
		return BC_OK;
	}
	if (blank(len) && blank(rate))
		return problem(p, header(c, C_DAYS),
			       "no duration: give regenerationDays, or regenerateLengthMm with regenerationRateMmPerDay");
	if (blank(len) || blank(rate))
		return problem(p, header(c, blank(len) ? C_LENGTH : C_RATE),
			       "the duration from length and rate needs both");
	if (parse_range(len, &r->lmin, &r->lmax) || !(r->lmin > 0))
		return problem(p, header(c, C_LENGTH), "'%s' is not a positive length in mm or a range", len);
	if (parse_range(rate, &r->rmin, &r->rmax) || !(r->rmin > 0))
		return problem(p, header(c, C_RATE), "'%s' is not a positive rate in mm per day or a range", rate);
	/* duration = length / rate: shortest with the shortest regenerate
	 * at the fastest rate, longest the other way round. */
	r->days_min = r->lmin / r->rmax;
	r->days_max = r->lmax / r->rmin;
	r->dsource = "length/rate";
	return BC_OK;
}

static int read_row(injuries_ctx *c, injuries_row *r, injuries_problem *p)
{
	int rc;
	memset(r, 0, sizeof *r);
	size_t nf = bc_csv__nfields(c->csv);
	if (nf != c->nheaders)
		return problem(p, "row", "%zu cells, but the header has %zu columns", nf, c->nheaders);
	r->sample_id = cell(c, C_SAMPLE_ID);
	r->site = cell(c, C_SITE);
	if (blank(r->site))
		return problem(p, header(c, C_SITE), "no site: every sample needs its locality");
	if ((rc = read_depth(c, r, p)) || (rc = read_age(c, r, p)))
		return rc;
	r->taxon = cell(c, C_TAXON);
	if (blank(r->taxon))
		return problem(p, header(c, C_TAXON), "no taxon");
	if ((rc = read_counts(c, r, p)) || (rc = read_duration(c, r, p)))
		return rc;
	r->recorded_by = cell(c, C_RECORDED_BY);
	r->reference = cell(c, C_REFERENCES);
	return BC_OK;
}

/* The current record as a JSON object header -> cell into c->raw, and the
 * unknown columns into c->extra. */
static int row_json(injuries_ctx *c)
{
	c->raw.len = c->extra.len = 0;
	int rc = bc__buf_puts(&c->raw, "{") | bc__buf_puts(&c->extra, "{");
	int first_extra = 1;
	size_t nf = bc_csv__nfields(c->csv);
	for (size_t i = 0; i < nf && rc == 0; i++) {
		char extra_name[32];
		const char *name = i < c->nheaders ? c->headers[i] : (snprintf(extra_name, sizeof extra_name, "column %zu", i + 1), extra_name);
		rc |= bc__buf_puts(&c->raw, i ? "," : "") | bc__buf_json_string(&c->raw, name) |
		      bc__buf_puts(&c->raw, ":") | bc__buf_json_string(&c->raw, bc_csv__field(c->csv, i));
		if (i < c->nheaders && injuries_column(name) < 0) {
			rc |= bc__buf_puts(&c->extra, first_extra ? "" : ",") | bc__buf_json_string(&c->extra, name) |
			      bc__buf_puts(&c->extra, ":") | bc__buf_json_string(&c->extra, bc_csv__field(c->csv, i));
			first_extra = 0;
		}
	}
	rc |= bc__buf_puts(&c->raw, "}") | bc__buf_puts(&c->extra, "}");
	return rc ? BC_ENOMEM : BC_OK;
}

static int quarantine(injuries_ctx *c, const injuries_problem *p, bc_err *err)
{
	char msg[1024];
	long line = bc_csv__line(c->csv);
	snprintf(msg, sizeof msg, "%s:%ld: %s: %s", c->file, line, p->field, p->reason);
	c->res->n_quarantined++;
	if (c->opts->on_problem)
		c->opts->on_problem(c->opts->ctx, msg);
	sqlite3_stmt *st = c->st_quarantine;
	sqlite3_reset(st);
	bc_db__bind_int64(st, ":batch", c->res->batch_id);
	bc_db__bind_text(st, ":file", c->file);
	bc_db__bind_int64(st, ":line", line);
	bc_db__bind_text(st, ":field", p->field);
	bc_db__bind_text(st, ":reason", p->reason);
	bc_db__bind_text(st, ":raw", c->raw.data);
	if (sqlite3_step(st) != SQLITE_DONE)
		return bc_db__error(c->db, err, "storing a quarantined row");
	return BC_OK;
}

static int store(injuries_ctx *c, const injuries_row *r, bc_err *err)
{
	sqlite3_stmt *st = c->st_insert;
	sqlite3_reset(st);
	bc_db__bind_int64(st, ":batch", c->res->batch_id);
	bc_db__bind_int64(st, ":line", bc_csv__line(c->csv));
	bc_db__bind_text(st, ":sample_id", r->sample_id);
	bc_db__bind_text(st, ":site", r->site);
	bc_db__bind_double(st, ":min_depth", r->dmin);
	bc_db__bind_double(st, ":max_depth", r->dmax);
	bc_db__bind_text(st, ":age_text", r->age_text);
	bc_db__bind_text(st, ":age_status", r->recent ? "recent" : bc_age_status_name(r->age.status));
	bc_db__bind_text(st, ":age_from", r->age.from);
	bc_db__bind_text(st, ":age_to", r->age.to);
	bc_db__bind_double(st, ":older", r->age.older_ma);
	bc_db__bind_double(st, ":younger", r->age.younger_ma);
	bc_db__bind_text(st, ":timescale", r->recent ? "" : bc_chart_name(c->chart));
	bc_db__bind_text(st, ":taxon", r->taxon);
	bc_db__bind_text(st, ":kind", r->kind);
	bc_db__bind_int64(st, ":ind_exam", r->ind_exam);
	bc_db__bind_int64(st, ":ind_regen", r->ind_regen);
	if (r->arms_exam >= 0) {
		bc_db__bind_int64(st, ":arms_exam", r->arms_exam);
		bc_db__bind_int64(st, ":arms_regen", r->arms_regen);
	} else {
		bc_db__bind_text(st, ":arms_exam", NULL);
		bc_db__bind_text(st, ":arms_regen", NULL);
	}
	bc_db__bind_double(st, ":dmin", r->days_min);
	bc_db__bind_double(st, ":dmax", r->days_max);
	bc_db__bind_text(st, ":dsource", r->dsource);
	bc_db__bind_double(st, ":lmin", r->lmin);
	bc_db__bind_double(st, ":lmax", r->lmax);
	bc_db__bind_double(st, ":rmin", r->rmin);
	bc_db__bind_double(st, ":rmax", r->rmax);
	bc_db__bind_text(st, ":recorded_by", r->recorded_by);
	bc_db__bind_text(st, ":reference", r->reference);
	bc_db__bind_text(st, ":extra", c->extra.data);
	if (sqlite3_step(st) != SQLITE_DONE) {
		/* A CHECK failing here means a validation gap: say where. */
		return bc_err_set(err, BC_EDB, "%s:%ld: storing the sample: %s", c->file, bc_csv__line(c->csv),
				  sqlite3_errmsg(bc_db__sqlite(c->db)));
	}
	c->res->n_stored++;
	c->res->n_individuals += r->ind_exam;
	c->res->n_regenerating += r->ind_regen;
	return BC_OK;
}

/* Reads the header row and finds the columns. */
static int read_header(injuries_ctx *c, bc_err *err)
{
	int rc = bc_csv__next(c->csv, err);
	if (rc < 0)
		return rc;
	if (rc == 0)
		return bc_err_set(err, BC_EINVALID, "%s:1: header: the file is empty", c->file);
	long line = bc_csv__line(c->csv);
	c->nheaders = bc_csv__nfields(c->csv);
	c->headers = bc__calloc(c->nheaders, sizeof *c->headers);
	if (!c->headers)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	for (int k = 0; k < C_COUNT; k++)
		c->col[k] = -1;
	for (size_t i = 0; i < c->nheaders; i++) {
		const char *h = bc_csv__field(c->csv, i);
		if (!(c->headers[i] = bc__strdup(h)))
			return bc_err_set(err, BC_ENOMEM, "out of memory");
		if (blank(h))
			return bc_err_set(err, BC_EINVALID, "%s:%ld: header: column %zu has no name", c->file, line, i + 1);
		for (size_t j = 0; j < i; j++)
			if (strcasecmp(c->headers[j], h) == 0)
				return bc_err_set(err, BC_EINVALID, "%s:%ld: header: column '%s' appears twice", c->file, line, h);
		int k = injuries_column(h);
		if (k < 0)
			continue;
		if (c->col[k] >= 0)
			return bc_err_set(err, BC_EINVALID, "%s:%ld: header: '%s' and '%s' give the same thing; keep one",
					  c->file, line, c->headers[c->col[k]], h);
		c->col[k] = (int)i;
	}
	static const int required[] = {C_SITE, C_AGE, C_TAXON};
	for (size_t i = 0; i < sizeof required / sizeof required[0]; i++)
		if (c->col[required[i]] < 0) {
			const char *name = "";
			for (size_t j = 0; j < sizeof injuries_names / sizeof injuries_names[0]; j++)
				if (injuries_names[j].col == required[i]) {
					name = injuries_names[j].name;
					break;
				}
			return bc_err_set(err, BC_EINVALID, "%s:%ld: header: no '%s' column (see 'bathychron injuries import --help')",
					  c->file, line, name);
		}
	if (c->col[C_MIN_DEPTH] < 0 && c->col[C_MAX_DEPTH] < 0 && c->col[C_DEPTH] < 0)
		return bc_err_set(err, BC_EINVALID, "%s:%ld: header: no depth column (minimumDepthInMeters/maximumDepthInMeters or depth)", c->file, line);
	if (c->col[C_IND_EXAM] < 0 && c->col[C_ARMS] < 0)
		return bc_err_set(err, BC_EINVALID, "%s:%ld: header: no counts (individualsExamined/individualsRegenerating or armsExamined/armsRegenerating)", c->file, line);
	if (c->col[C_DAYS] < 0 && (c->col[C_LENGTH] < 0 || c->col[C_RATE] < 0))
		return bc_err_set(err, BC_EINVALID, "%s:%ld: header: no duration (regenerationDays, or regenerateLengthMm and regenerationRateMmPerDay)", c->file, line);
	return BC_OK;
}

/* Refuses content already imported. */
static int check_duplicate(bc_db *db, const char *file, const char *sha, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(db, &st, SQL_FIND_BATCH, err);
	if (rc)
		return rc;
	bc_db__bind_text(st, ":sha", sha);
	int step = sqlite3_step(st);
	if (step == SQLITE_ROW)
		rc = bc_err_set(err, BC_EEXISTS, "%s: identical content was already imported as batch %lld (%s, %s); nothing imported",
				file, (long long)sqlite3_column_int64(st, 0), (const char *)sqlite3_column_text(st, 2),
				(const char *)sqlite3_column_text(st, 1));
	else if (step != SQLITE_DONE)
		rc = bc_db__error(db, err, "looking for an earlier import");
	sqlite3_finalize(st);
	return rc;
}

static int new_batch(injuries_ctx *c, const char *sha, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(c->db, &st, SQL_NEW_BATCH, err);
	if (rc)
		return rc;
	bc_db__bind_text(st, ":file", c->file);
	bc_db__bind_text(st, ":sha", sha);
	bc_db__bind_text(st, ":options", c->opts->timescale ? c->opts->timescale : "");
	bc_db__bind_text(st, ":version", BC_VERSION);
	bc_db__bind_text(st, ":timescale", bc_chart_name(c->chart));
	if (sqlite3_step(st) != SQLITE_DONE)
		rc = bc_db__error(c->db, err, "recording the import batch");
	else
		c->res->batch_id = sqlite3_last_insert_rowid(bc_db__sqlite(c->db));
	sqlite3_finalize(st);
	return rc;
}

static int end_batch(injuries_ctx *c, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(c->db, &st, SQL_END_BATCH, err);
	if (rc)
		return rc;
	bc_db__bind_int64(st, ":n_read", c->res->n_read);
	bc_db__bind_int64(st, ":n_stored", c->res->n_stored);
	bc_db__bind_int64(st, ":n_quarantined", c->res->n_quarantined);
	bc_db__bind_int64(st, ":batch", c->res->batch_id);
	if (sqlite3_step(st) != SQLITE_DONE)
		rc = bc_db__error(c->db, err, "recording the import counts");
	sqlite3_finalize(st);
	return rc;
}

int bc_injuries_import(bc_injuries_import_result *out, bc_db *db, const char *path,
		       const bc_injuries_import_options *opts, bc_err *err)
{
	static const bc_injuries_import_options defaults = BC_INJURIES_IMPORT_OPTIONS_INIT;
	injuries_ctx c;
	char sha[65];
	int rc, in_tx = 0;
	memset(out, 0, sizeof *out);
	memset(&c, 0, sizeof c);
	c.db = db;
	c.opts = opts ? opts : &defaults;
	c.res = out;
	c.file = path;

	if ((rc = bc__sha256_file(path, sha, err)))
		goto done;
	if ((rc = bc_timescale_get(&c.chart, db, c.opts->timescale, err)) ||
	    (rc = bc_resolver_new(&c.resolver, c.chart, err)))
		goto done;
	if ((rc = bc_csv__open(&c.csv, path, path, NULL, err)) || (rc = read_header(&c, err)))
		goto done;
	if ((rc = bc_db__begin(db, err)))
		goto done;
	in_tx = 1;
	if ((rc = check_duplicate(db, path, sha, err)) || (rc = new_batch(&c, sha, err)) ||
	    (rc = bc_db__prepare(db, &c.st_insert, SQL_INSERT, err)) ||
	    (rc = bc_db__prepare(db, &c.st_quarantine, SQL_QUARANTINE, err)))
		goto done;
	for (;;) {
		rc = bc_csv__next(c.csv, err);
		if (rc == 0)
			break;
		if (rc < 0)
			goto done; /* an unreadable file (encoding, quoting) stops the whole import */
		out->n_read++;
		injuries_row row;
		injuries_problem p;
		if ((rc = row_json(&c)) != BC_OK) {
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			goto done;
		}
		if (read_row(&c, &row, &p) != BC_OK)
			rc = quarantine(&c, &p, err);
		else
			rc = store(&c, &row, err);
		if (rc)
			goto done;
	}
	if ((rc = end_batch(&c, err)))
		goto done;
	if (c.opts->dry_run) {
		bc_db__rollback(db);
		out->batch_id = 0;
	} else if ((rc = bc_db__commit(db, err))) {
		goto done;
	}
	in_tx = 0;
done:
	if (in_tx)
		bc_db__rollback(db);
	if (rc && rc != BC_EEXISTS) {
		long q = out->n_quarantined;
		memset(out, 0, sizeof *out);
		out->n_quarantined = q;
	}
	sqlite3_finalize(c.st_insert);
	sqlite3_finalize(c.st_quarantine);
	bc_csv__free(c.csv);
	bc_resolver_free(c.resolver);
	bc_chart_free(c.chart);
	for (size_t i = 0; c.headers && i < c.nheaders; i++)
		free(c.headers[i]);
	free(c.headers);
	bc__buf_free(&c.raw);
	bc__buf_free(&c.extra);
	return rc;
}
