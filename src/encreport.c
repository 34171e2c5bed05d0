/*
 * encreport.c - the encounter table: stored injury samples grouped by depth
 * zone, site or age bin, prevalence -> incidence -> interval between
 * encounters per group (encounter.c), written through the shared table
 * writer with a methods stamp and the model's cautions.
 */
#include "db.h"
#include "encounter.h"
#include "output.h"
#include "shift.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const char SQL_SAMPLES[] =
	"SELECT site, min_depth_m, max_depth_m, age_status, age_from, age_to, older_ma, younger_ma, taxon, "
	"individuals_examined, individuals_regenerating, arms_examined, arms_regenerating, "
	"duration_min_days, duration_max_days "
	"FROM injury_samples "
	"WHERE :taxon IS NULL OR taxon = :taxon OR taxon LIKE :taxon || ' %' "
	"ORDER BY injury_sample_pk";

#define DEFAULT_BOUNDARY_M 200.0 /* shelf break, common practice, no source */

/* One row being accumulated. */
typedef struct enc_acc {
	char *bin, *zone, *site;
	int zone_index;
	double min_depth, max_depth, older, younger;
	double key_older; /* sort key: the bin's older bound (by bin), else 0 */
	long n_samples;
	double ind_n, ind_x, ind_dmin, ind_dmax; /* durations summed weighted by n */
	double arm_n, arm_x, arm_dmin, arm_dmax;
} enc_acc;

struct bc_encounter_report {
	bc_encounter_options opts;
	double *zones;
	size_t n_zones;
	enc_acc *acc;
	bc_encounter_row *rows;
	size_t n, cap;
	long n_straddle;
	long n_samples;
	char data_sha256[65]; /* of the samples read, for the stamp */
	char *db_path;
	char *taxon;
};

const char *bc_encounter_by_name(bc_encounter_by by)
{
	return by == BC_ENCOUNTER_BY_SITE ? "site" : by == BC_ENCOUNTER_BY_BIN ? "bin" : "zone";
}

int bc_encounter_by_parse(bc_encounter_by *out, const char *name)
{
	if (strcmp(name, "zone") == 0)
		*out = BC_ENCOUNTER_BY_ZONE;
	else if (strcmp(name, "site") == 0)
		*out = BC_ENCOUNTER_BY_SITE;
	else if (strcmp(name, "bin") == 0)
		*out = BC_ENCOUNTER_BY_BIN;
	else
		return BC_EUSAGE;
	return BC_OK;
}

static char *zone_label(const double *b, size_t nb, int z)
{
	char tmp[96];
	if (nb == 1)
		snprintf(tmp, sizeof tmp, z == 0 ? "shallow (<%g m)" : "deep (>=%g m)", b[0]);
	else if (z == 0)
		snprintf(tmp, sizeof tmp, "<%g m", b[0]);
	else if ((size_t)z == nb)
		snprintf(tmp, sizeof tmp, ">=%g m", b[nb - 1]);
	else
		snprintf(tmp, sizeof tmp, "%g-%g m", b[z - 1], b[z]);
	return bc__strdup(tmp);
}

static char *bin_label(const char *status, const char *from, const char *to, double older, double younger)
{
	char tmp[300];
	if (strcmp(status, "recent") == 0)
		snprintf(tmp, sizeof tmp, "Recent");
	else if (from[0] && to[0] && strcmp(from, to) != 0)
		snprintf(tmp, sizeof tmp, "%s-%s", from, to);
	else if (from[0] || to[0])
		snprintf(tmp, sizeof tmp, "%s", from[0] ? from : to);
	else
		snprintf(tmp, sizeof tmp, "%g-%g Ma", older, younger);
	return bc__strdup(tmp);
}

static const char *col_text(sqlite3_stmt *st, int i)
{
	const unsigned char *s = sqlite3_column_text(st, i);
	return s ? (const char *)s : "";
}

/* The accumulator for (bin, zone, site), created when new. */
static enc_acc *find_acc(bc_encounter_report *r, const char *bin, int zone, const char *site)
{
	for (size_t i = 0; i < r->n; i++)
		if (r->acc[i].zone_index == zone && strcmp(r->acc[i].bin, bin) == 0 && strcmp(r->acc[i].site, site) == 0)
			return &r->acc[i];
	enc_acc *grown = bc__grow(r->acc, r->n, &r->cap, sizeof *grown, 16);
	if (!grown)
		return NULL;
	r->acc = grown;
	enc_acc *a = &r->acc[r->n];
	memset(a, 0, sizeof *a);
	a->bin = bc__strdup(bin);
	a->site = bc__strdup(site);
	a->zone = zone_label(r->zones, r->n_zones, zone);
	if (!a->bin || !a->site || !a->zone) {
		free(a->bin);
		free(a->site);
		free(a->zone);
		return NULL;
	}
	a->zone_index = zone;
	a->min_depth = INFINITY;
	a->max_depth = -INFINITY;
	a->older = -INFINITY;
	a->younger = INFINITY;
	r->n++;
	return a;
}

/* Row order: bins oldest first (Recent last), then zone, then depth, then site. */
static int acc_cmp(const void *pa, const void *pb)
{
	const enc_acc *a = pa, *b = pb;
	if (a->key_older != b->key_older)
		return a->key_older > b->key_older ? -1 : 1;
	int c = strcmp(a->bin, b->bin);
	if (c)
		return c;
	if (a->zone_index != b->zone_index)
		return a->zone_index - b->zone_index;
	if (a->min_depth != b->min_depth)
		return a->min_depth < b->min_depth ? -1 : 1;
	return strcmp(a->site, b->site);
}

static int read_samples(bc_encounter_report *r, bc_db *db, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(db, &st, SQL_SAMPLES, err);
	if (rc)
		return rc;
	bc_db__bind_text(st, ":taxon", r->taxon);
	bc_buf data = {0};
	int step;
	while ((step = sqlite3_step(st)) == SQLITE_ROW) {
		double dmin = sqlite3_column_double(st, 1), dmax = sqlite3_column_double(st, 2);
		for (int c = 0; c < sqlite3_column_count(st) && rc == BC_OK; c++)
			if (bc__buf_puts(&data, col_text(st, c)) || bc__buf_puts(&data, c + 1 < sqlite3_column_count(st) ? "\t" : "\n"))
				rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		if (rc)
			break;
		int zone = bc_shift__zone(dmin, dmax, r->zones, r->n_zones); /* the shift table's rule */
		r->n_samples++;
		if (zone < 0) {
			r->n_straddle++;
			continue;
		}
		double older = sqlite3_column_double(st, 6), younger = sqlite3_column_double(st, 7);
		char *bin = NULL;
		if (r->opts.by == BC_ENCOUNTER_BY_BIN)
			bin = bin_label(col_text(st, 3), col_text(st, 4), col_text(st, 5), older, younger);
		else
			bin = bc__strdup("all");
		const char *site = r->opts.by == BC_ENCOUNTER_BY_SITE ? col_text(st, 0) : "";
		enc_acc *a = bin ? find_acc(r, bin, zone, site) : NULL;
		free(bin);
		if (!a) {
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			break;
		}
		a->n_samples++;
		if (dmin < a->min_depth)
			a->min_depth = dmin;
		if (dmax > a->max_depth)
			a->max_depth = dmax;
		if (older > a->older)
			a->older = older;
		if (younger < a->younger)
			a->younger = younger;
		double n = sqlite3_column_double(st, 9), x = sqlite3_column_double(st, 10);
		double lo = sqlite3_column_double(st, 13), hi = sqlite3_column_double(st, 14);
		a->ind_n += n;
		a->ind_x += x;
		a->ind_dmin += n * lo;
		a->ind_dmax += n * hi;
		if (sqlite3_column_type(st, 11) != SQLITE_NULL) {
			double an = sqlite3_column_double(st, 11), ax = sqlite3_column_double(st, 12);
			a->arm_n += an;
			a->arm_x += ax;
			a->arm_dmin += an * lo;
			a->arm_dmax += an * hi;
		}
	}
	if (rc == BC_OK && step != SQLITE_DONE)
		rc = bc_db__error(db, err, "reading injury samples");
	bc__sha256_hex(data.data ? data.data : "", data.len, r->data_sha256);
	bc__buf_free(&data);
	sqlite3_finalize(st);
	return rc;
}

/* Computes rows [from, to) as one set of groups, ratios against `ref`. */
static int compute_block(bc_encounter_report *r, size_t from, size_t to, size_t ref, uint64_t seed, bc_err *err)
{
	size_t k = to - from;
	bc_encounter_group *ind = bc__calloc(k, sizeof *ind), *arm = bc__calloc(k, sizeof *arm);
	int rc = BC_OK;
	if (!ind || !arm) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	for (size_t i = 0; i < k; i++) {
		const enc_acc *a = &r->acc[from + i];
		ind[i].n = a->ind_n;
		ind[i].x = a->ind_x;
		ind[i].duration_min = a->ind_n > 0 ? a->ind_dmin / a->ind_n : 1;
		ind[i].duration_max = a->ind_n > 0 ? a->ind_dmax / a->ind_n : 1;
		arm[i].n = a->arm_n;
		arm[i].x = a->arm_x;
		arm[i].duration_min = a->arm_n > 0 ? a->arm_dmin / a->arm_n : 1;
		arm[i].duration_max = a->arm_n > 0 ? a->arm_dmax / a->arm_n : 1;
	}
	bc_encounter_mc mc = r->opts.mc;
	mc.seed = seed;
	if ((rc = bc_encounter_compute(ind, k, ref - from, &mc, err)))
		goto done;
	/* The arms get their own stream, so adding arm counts to one sample
	 * does not move the individual-level limits. */
	mc.seed = seed ^ 0x5deece66dULL;
	if ((rc = bc_encounter_compute(arm, k, ref - from, &mc, err)))
		goto done;
	for (size_t i = 0; i < k; i++) {
		r->rows[from + i].individuals = ind[i];
		r->rows[from + i].arms = arm[i];
		r->rows[from + i].ratio_to = (long)ref;
	}
done:
	free(ind);
	free(arm);
	return rc;
}

int bc_encounter_report_build(bc_encounter_report **out, bc_db *db, const bc_encounter_options *opts, bc_err *err)
{
	static const double default_zones[] = {DEFAULT_BOUNDARY_M};
	static const bc_encounter_options defaults = BC_ENCOUNTER_OPTIONS_INIT;
	int rc = BC_OK;
	*out = NULL;
	if (!opts)
		opts = &defaults;
	bc_encounter_report *r = bc__calloc(1, sizeof *r);
	if (!r)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	r->opts = *opts;
	const double *z = opts->zones ? opts->zones : default_zones;
	r->n_zones = opts->zones ? opts->n_zones : 1;
	if (r->n_zones == 0 || r->n_zones > 32) {
		rc = bc_err_set(err, BC_EUSAGE, "zones: give between 1 and 32 boundaries");
		goto done;
	}
	for (size_t i = 0; i < r->n_zones; i++)
		if (!(z[i] > 0) || !isfinite(z[i]) || (i > 0 && !(z[i] > z[i - 1]))) {
			rc = bc_err_set(err, BC_EUSAGE, "zones: boundaries must be positive depths in metres, increasing (got %g)", z[i]);
			goto done;
		}
	r->zones = bc__malloc(r->n_zones * sizeof *r->zones);
	r->db_path = bc__strdup(bc_db_path(db));
	r->taxon = opts->taxon ? bc__strdup(opts->taxon) : NULL;
	if (!r->zones || !r->db_path || (opts->taxon && !r->taxon)) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	memcpy(r->zones, z, r->n_zones * sizeof *z);
	r->opts.zones = r->zones;
	r->opts.taxon = r->taxon;
	if ((rc = read_samples(r, db, err)))
		goto done;
	if (r->n == 0) {
		if (r->n_samples)
			rc = bc_err_set(err, BC_ENOTFOUND, "%s: all %ld injury samples cross a zone boundary; choose other zones", r->db_path, r->n_samples);
		else
			rc = bc_err_set(err, BC_ENOTFOUND, "%s: no injury samples%s%s (import some with: bathychron injuries import DB FILE)",
					r->db_path, r->taxon ? " of " : "", r->taxon ? r->taxon : "");
		goto done;
	}
	for (size_t i = 0; i < r->n; i++)
		r->acc[i].key_older = r->opts.by == BC_ENCOUNTER_BY_BIN ? r->acc[i].older : 0.0;
	qsort(r->acc, r->n, sizeof *r->acc, acc_cmp);
	r->rows = bc__calloc(r->n, sizeof *r->rows);
	if (!r->rows) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	for (size_t i = 0; i < r->n; i++) {
		const enc_acc *a = &r->acc[i];
		bc_encounter_row *w = &r->rows[i];
		w->bin = a->bin;
		w->zone = a->zone;
		w->zone_index = a->zone_index;
		w->site = a->site;
		w->min_depth_m = a->min_depth;
		w->max_depth_m = a->max_depth;
		w->older_ma = a->older;
		w->younger_ma = a->younger;
		w->n_samples = a->n_samples;
	}
	/* Blocks: one per bin (by bin), otherwise the whole table; the
	 * reference is the block's first (shallowest) row. */
	uint64_t seed = r->opts.mc.seed;
	for (size_t from = 0, blk = 0; from < r->n; blk++) {
		size_t to = from + 1;
		while (to < r->n && strcmp(r->acc[to].bin, r->acc[from].bin) == 0)
			to++;
		if ((rc = compute_block(r, from, to, from, seed + blk, err)))
			goto done;
		from = to;
	}
done:
	if (rc) {
		bc_encounter_report_free(r);
		return rc;
	}
	*out = r;
	return BC_OK;
}

const bc_encounter_options *bc_encounter__report_options(const bc_encounter_report *r) { return &r->opts; }

size_t bc_encounter_report_count(const bc_encounter_report *r) { return r ? r->n : 0; }

const bc_encounter_row *bc_encounter_report_row(const bc_encounter_report *r, size_t i)
{
	return r && r->rows && i < r->n ? &r->rows[i] : NULL;
}

long bc_encounter_report_straddling(const bc_encounter_report *r) { return r ? r->n_straddle : 0; }

void bc_encounter_report_free(bc_encounter_report *r)
{
	if (!r)
		return;
	for (size_t i = 0; i < r->n; i++) {
		free(r->acc[i].bin);
		free(r->acc[i].zone);
		free(r->acc[i].site);
	}
	free(r->acc);
	free(r->rows);
	free(r->zones);
	free(r->db_path);
	free(r->taxon);
	free(r);
}

/* ---------------------------------------------------------------- */
/* The table                                                         */
/* ---------------------------------------------------------------- */

static const struct {
	const char *name;
	bc_col_type type;
	int digits;
} enc_columns[] = {
	{"bin", BC_COL_TEXT, 0}, {"zone", BC_COL_TEXT, 0}, {"site", BC_COL_TEXT, 0},
	{"min_depth_m", BC_COL_REAL, 0}, {"max_depth_m", BC_COL_REAL, 0}, {"n_samples", BC_COL_COUNT, 0},
	{"individuals", BC_COL_COUNT, 0}, {"regenerating", BC_COL_COUNT, 0},
	{"prevalence", BC_COL_REAL, 3}, {"prevalence_lo", BC_COL_REAL, 3}, {"prevalence_hi", BC_COL_REAL, 3},
	{"duration_min_days", BC_COL_REAL, 1}, {"duration_max_days", BC_COL_REAL, 1},
	{"incidence_per_day", BC_COL_REAL, 5}, {"incidence_lo", BC_COL_REAL, 5}, {"incidence_hi", BC_COL_REAL, 5},
	{"incidence_per_capita_per_day", BC_COL_REAL, 5},
	{"interval_days", BC_COL_REAL, 0}, {"interval_lo_days", BC_COL_REAL, 0}, {"interval_hi_days", BC_COL_REAL, 0},
	{"ratio_to", BC_COL_TEXT, 0}, {"rate_ratio", BC_COL_REAL, 2}, {"rate_ratio_lo", BC_COL_REAL, 2}, {"rate_ratio_hi", BC_COL_REAL, 2},
	{"arms", BC_COL_COUNT, 0}, {"arms_regenerating", BC_COL_COUNT, 0},
	{"arm_prevalence", BC_COL_REAL, 3}, {"arm_prevalence_lo", BC_COL_REAL, 3}, {"arm_prevalence_hi", BC_COL_REAL, 3},
	{"arm_incidence_per_day", BC_COL_REAL, 5}, {"arm_incidence_lo", BC_COL_REAL, 5}, {"arm_incidence_hi", BC_COL_REAL, 5},
	{"arm_interval_days", BC_COL_REAL, 0}, {"arm_interval_lo_days", BC_COL_REAL, 0}, {"arm_interval_hi_days", BC_COL_REAL, 0},
	{"arm_rate_ratio", BC_COL_REAL, 2}, {"arm_rate_ratio_lo", BC_COL_REAL, 2}, {"arm_rate_ratio_hi", BC_COL_REAL, 2},
};

/* The label of a row for "ratio_to": its zone, and its bin and site where
 * they distinguish it. */
static void row_label(char *out, size_t n, const bc_encounter_row *w, bc_encounter_by by)
{
	if (by == BC_ENCOUNTER_BY_SITE)
		snprintf(out, n, "%s, %s", w->site, w->zone);
	else if (by == BC_ENCOUNTER_BY_BIN)
		snprintf(out, n, "%s, %s", w->bin, w->zone);
	else
		snprintf(out, n, "%s", w->zone);
}

static void put_group(bc_table *t, size_t *c, const bc_encounter_group *g, int with_prev_counts)
{
	if (with_prev_counts) {
		bc_output__set_num(t, (*c)++, g->n > 0 ? g->n : NAN);
		bc_output__set_num(t, (*c)++, g->n > 0 ? g->x : NAN);
	}
	bc_output__set_num(t, (*c)++, g->prevalence);
	bc_output__set_num(t, (*c)++, g->prevalence_lo);
	bc_output__set_num(t, (*c)++, g->prevalence_hi);
}

static int fill_table(const bc_encounter_report *r, bc_table *t, bc_err *err)
{
	int rc = BC_OK;
	const bc_encounter_mc *mc = &r->opts.mc;
	for (size_t i = 0; i < sizeof enc_columns / sizeof enc_columns[0] && !rc; i++)
		rc = bc_output__add_column(t, enc_columns[i].name, enc_columns[i].type, enc_columns[i].digits, err);
	for (size_t i = 0; i < r->n && !rc; i++) {
		const bc_encounter_row *w = &r->rows[i];
		const bc_encounter_group *g = &w->individuals, *a = &w->arms;
		char label[600];
		size_t c = 0;
		if ((rc = bc_output__add_row(t, err)))
			break;
		rc = bc_output__set_text(t, c++, w->bin, err);
		rc = rc ? rc : bc_output__set_text(t, c++, w->zone, err);
		rc = rc ? rc : bc_output__set_text(t, c++, w->site, err);
		bc_output__set_num(t, c++, w->min_depth_m);
		bc_output__set_num(t, c++, w->max_depth_m);
		bc_output__set_num(t, c++, (double)w->n_samples);
		bc_output__set_num(t, c++, g->n);
		bc_output__set_num(t, c++, g->x);
		put_group(t, &c, g, 0);
		bc_output__set_num(t, c++, g->duration_min);
		bc_output__set_num(t, c++, g->duration_max);
		bc_output__set_num(t, c++, g->incidence);
		bc_output__set_num(t, c++, g->incidence_lo);
		bc_output__set_num(t, c++, g->incidence_hi);
		bc_output__set_num(t, c++, g->per_capita);
		bc_output__set_num(t, c++, g->interval);
		bc_output__set_num(t, c++, g->interval_lo);
		bc_output__set_num(t, c++, g->interval_hi);
		row_label(label, sizeof label, &r->rows[w->ratio_to], r->opts.by);
		rc = rc ? rc : bc_output__set_text(t, c++, label, err);
		bc_output__set_num(t, c++, g->ratio);
		bc_output__set_num(t, c++, g->ratio_lo);
		bc_output__set_num(t, c++, g->ratio_hi);
		put_group(t, &c, a, 1);
		bc_output__set_num(t, c++, a->incidence);
		bc_output__set_num(t, c++, a->incidence_lo);
		bc_output__set_num(t, c++, a->incidence_hi);
		bc_output__set_num(t, c++, a->interval);
		bc_output__set_num(t, c++, a->interval_lo);
		bc_output__set_num(t, c++, a->interval_hi);
		bc_output__set_num(t, c++, a->ratio);
		bc_output__set_num(t, c++, a->ratio_lo);
		bc_output__set_num(t, c++, a->ratio_hi);
	}
	if (rc)
		return rc;

	char zones[400] = "";
	size_t zl = 0;
	for (size_t i = 0; i < r->n_zones && zl < sizeof zones - 32; i++)
		zl += (size_t)snprintf(zones + zl, sizeof zones - zl, "%s%g", i ? "," : "", r->zones[i]);
	bc_meta_section S = BC_META_STAMP;
	rc = bc_output__set_caption(t, "Injury incidence and mean interval between injuring encounters, from the prevalence of regenerating arms", err);
	rc = rc ? rc : bc_output__meta_text(t, S, "tool", err, "bathychron %s", BC_VERSION);
	rc = rc ? rc : bc_output__meta_text(t, S, "database", err, "%s", r->db_path);
	rc = rc ? rc : bc_output__meta_text(t, S, "data_sha256", err, "%s", r->data_sha256);
	rc = rc ? rc : bc_output__meta_num(t, S, "samples", (double)r->n_samples, 0, err);
	rc = rc ? rc : bc_output__meta_num(t, S, "level", mc->level, 0, err);
	rc = rc ? rc : bc_output__meta_num(t, S, "draws", (double)mc->draws, 0, err);
	rc = rc ? rc : bc_output__meta_text(t, S, "seed", err, "%llu", (unsigned long long)mc->seed);
	rc = rc ? rc : bc_output__meta_text(t, S, "grouping", err, "by %s%s%s", bc_encounter_by_name(r->opts.by),
					    r->taxon ? "; taxon " : "", r->taxon ? r->taxon : "");
	rc = rc ? rc : bc_output__meta_text(t, S, "zones", err,
		"boundaries %s m; a depth range [min, max] lies above a boundary S when max <= S and min < S, below it when min >= S; "
		"%ld of %ld samples cross a boundary and are left out", zones, r->n_straddle, r->n_samples);
	if (mc->model == BC_INCIDENCE_POISSON)
		rc = rc ? rc : bc_output__meta_text(t, S, "model", err,
			"poisson: P = 1 - exp(-lambda D), incidence lambda = -ln(1 - P) / D per unit per day, injuries arriving at a constant rate whether or not the unit is already regenerating");
	else
		rc = rc ? rc : bc_output__meta_text(t, S, "model", err,
			"steady-state: P / (1 - P) = I D (Freeman & Hutchison 1980, Am J Epidemiol 112:707-723), incidence I per unit not currently regenerating per day; "
			"incidence_per_capita = P / D per unit of the whole population");
	rc = rc ? rc : bc_output__meta_text(t, S, "duration", err,
		"D = mean duration of the recognisable regenerating state, days: the unit-weighted mean of the samples' stated ranges; point estimates use its midpoint");
	rc = rc ? rc : bc_output__meta_text(t, S, "prevalence_interval", err, "Wilson score interval, level %g", mc->level);
	rc = rc ? rc : bc_output__meta_text(t, S, "rate_intervals", err,
		"percentiles of %ld Monte Carlo draws, seed %llu, level %g: prevalence ~ Beta(x + 1/2, n - x + 1/2) (Jeffreys), "
		"duration ~ Uniform(min, max) %s; none regenerating: the lower rate is 0 (interval_hi_days inf); "
		"all regenerating: the upper rate is unbounded (inf); csv/tsv write inf, json null",
		mc->draws, (unsigned long long)mc->seed, mc->level,
		mc->shared_duration ? "drawn once per draw for all groups (durations assumed the same everywhere)" : "drawn independently per group");
	rc = rc ? rc : bc_output__meta_text(t, S, "rate_ratio", err,
		"incidence of the row / incidence of the row named in ratio_to (the shallowest %s), interval from the same paired draws",
		r->opts.by == BC_ENCOUNTER_BY_BIN ? "zone of the same bin" : r->opts.by == BC_ENCOUNTER_BY_SITE ? "site" : "zone");
	rc = rc ? rc : bc_output__meta_text(t, S, "caution_steady_state", err,
		"assumes a steady state: constant injury rate and population over at least the regeneration time");
	rc = rc ? rc : bc_output__meta_text(t, S, "caution_recognisable", err,
		"assumes a regenerate is recognisable for the whole duration D and not after it; a longer true D means a lower rate");
	rc = rc ? rc : bc_output__meta_text(t, S, "caution_predation", err,
		"assumes every regenerating arm records a sublethal predatory attack; autotomy, storms and other damage inflate the rate, "
		"and lethal attacks leave no regenerate, so the interval is between injuring encounters that were survived, not all encounters");
	rc = rc ? rc : bc_output__meta_text(t, S, "caution_gear", err,
		"animals damaged by collecting gear must have been excluded by the user before import; the tool cannot tell");
	rc = rc ? rc : bc_output__meta_text(t, S, "caution_arms", err,
		"per-arm columns treat arms as independent, but arms of one animal share its encounters: per-arm intervals are too narrow");
	rc = rc ? rc : bc_output__meta_text(t, S, "caution_depth", err,
		"fossil palaeodepths are interpretations; zones pool sites, ages and taxa that may differ in more than depth");
	return rc;
}

int bc_encounter_report_write(const bc_encounter_report *r, FILE *f, bc_format format, bc_err *err)
{
	bc_table *t = NULL;
	int rc = bc_output__table_new(&t, "groups", err);
	if (rc == BC_OK)
		rc = fill_table(r, t, err);
	if (rc == BC_OK)
		rc = bc_output__write(t, f, format, err);
	bc_output__table_free(t);
	return rc;
}
