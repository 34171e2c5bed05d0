/*
 * shift_out.c - the shift table as text: its columns, the methods stamp
 * (every option, the chart, vocabularies, data hash, counts and the
 * caution) and the --methods paragraph with its citations.
 */
#include "shift.h"

#include "output.h"
#include "resample.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static int oom(bc_err *err) { return bc_err_set(err, BC_ENOMEM, "out of memory"); }

/* ------------------------------------------------------------------ */
/* Output                                                               */
/* ------------------------------------------------------------------ */

static const char *rank_word(bc_bin_scheme b)
{
	return b == BC_BINS_EPOCH ? "epoch" : b == BC_BINS_PERIOD ? "period" : "stage";
}

static void describe_bins(const bc_shift *s, bc_buf *b)
{
	const bc_shift_options *o = &s->opts;
	switch (o->bins) {
	case BC_BINS_WIDTH:
		bc__buf_printf(b, "equal widths of %g Myr, edges at multiples of %g Myr from 0 Ma", o->bin_width, o->bin_width);
		break;
	case BC_BINS_FILE:
		bc__buf_printf(b, "file %s (sha256:%s)", o->bins_file, s->bins_file_sha ? s->bins_file_sha : "");
		break;
	default:
		bc__buf_printf(b, "%s (chart rank %s) of chart %s", rank_word(o->bins),
			o->bins == BC_BINS_STAGE ? "age" : rank_word(o->bins), s->chart_name ? s->chart_name : "");
		break;
	}
	bc__buf_puts(b, "; a bin holds its older bound, not its younger one; from the oldest to the youngest occupied bin, empty bins included");
}

static void describe_span(const bc_shift_options *o, bc_buf *b)
{
	switch (o->span) {
	case BC_SPAN_ALL:
		bc__buf_puts(b, "all: an occurrence is counted in every bin its age range overlaps, so bin counts add up to more than the occurrences used");
		break;
	case BC_SPAN_SPLIT:
		bc__buf_puts(b, "split: an occurrence is divided among the bins its age range overlaps in proportion to the overlap (fractional counts)");
		break;
	case BC_SPAN_MAX:
		bc__buf_printf(b, "max:%g: occurrences whose age range is longer than %g Myr are left out; the rest go to the bin holding most of their range (ties: the older bin)",
			o->span_max_myr, o->span_max_myr);
		break;
	default:
		bc__buf_puts(b, "majority: an occurrence goes to the one bin holding most of its age range (ties: the older bin)");
		break;
	}
}

static void describe_zones(const bc_shift_options *o, bc_buf *b)
{
	if (!o->zones_given) {
		bc__buf_printf(b, "split at %g m", o->zones[0]);
		if (o->zones[0] == 200)
			bc__buf_puts(b, "; " BC_SHIFT__SPLIT_NOTE);
		return;
	}
	bc__buf_puts(b, "zones at ");
	for (size_t i = 0; i < o->n_zones; i++)
		bc__buf_printf(b, "%s%g", i ? ", " : "", o->zones[i]);
	bc__buf_printf(b, " m: zone1 above %g m", o->zones[0]);
	for (size_t i = 1; i < o->n_zones; i++)
		bc__buf_printf(b, ", zone%zu %g-%g m", i + 1, o->zones[i - 1], o->zones[i]);
	bc__buf_printf(b, ", zone%zu at or below %g m; n_shallow, n_deep, n_straddle and frac_deep use the first boundary (%g m) alone",
		o->n_zones + 1, o->zones[o->n_zones - 1], o->zones[0]);
}

static void put_arg(bc_buf *b, const char *name, const char *v)
{
	int plain = strpbrk(v, " \t'\"\\$`") == NULL && *v;
	bc__buf_printf(b, " --%s ", name);
	if (plain) {
		bc__buf_puts(b, v);
		return;
	}
	bc__buf_puts(b, "'");
	for (const char *p = v; *p; p++)
		*p == '\'' ? bc__buf_puts(b, "'\\''") : bc__buf_append(b, p, 1);
	bc__buf_puts(b, "'");
}

/* Every option, as the command line that repeats this table. */
static void describe_options(const bc_shift_options *o, bc_buf *b)
{
	char v[256];
	if (o->group)
		put_arg(b, "group", o->group);
	if (o->taxon)
		put_arg(b, "taxon", o->taxon);
	if (o->preservation)
		put_arg(b, "preservation", o->preservation);
	if (o->has_region) {
		snprintf(v, sizeof v, "%g,%g,%g,%g", o->region[0], o->region[1], o->region[2], o->region[3]);
		put_arg(b, "region", v);
	}
	if (o->timescale)
		put_arg(b, "timescale", o->timescale);
	if (o->bins == BC_BINS_WIDTH) {
		snprintf(v, sizeof v, "%g", o->bin_width);
		put_arg(b, "bins", v);
	} else if (o->bins == BC_BINS_FILE) {
		put_arg(b, "bins", o->bins_file);
	} else {
		put_arg(b, "bins", rank_word(o->bins));
	}
	if (o->span == BC_SPAN_MAX) {
		snprintf(v, sizeof v, "max:%g", o->span_max_myr);
		put_arg(b, "span", v);
	} else {
		put_arg(b, "span", o->span == BC_SPAN_ALL ? "all" : o->span == BC_SPAN_SPLIT ? "split" : "majority");
	}
	size_t k = 0;
	for (size_t i = 0; i < o->n_zones; i++)
		k += (size_t)snprintf(v + k, sizeof v - k, "%s%g", i ? "," : "", o->zones[i]);
	put_arg(b, o->zones_given ? "zones" : "split", v);
	snprintf(v, sizeof v, "%g", o->level);
	put_arg(b, "level", v);
	if (o->cell_km != 100.0) {
		snprintf(v, sizeof v, "%g", o->cell_km);
		put_arg(b, "cell-km", v);
	}
	bc_resample__describe_options(o, b);
}

static int build_table(const bc_shift *s, bc_table **out, bc_err *err)
{
	bc_table *t = NULL;
	bc_buf b = {0};
	int rc = bc_output__table_new(&t, "bins", err);
	if (rc)
		return rc;
	static const struct { const char *name; bc_col_type type; int digits; } cols[] = {
		{"bin", BC_COL_TEXT, 0}, {"older_ma", BC_COL_REAL, -1}, {"younger_ma", BC_COL_REAL, -1},
		{"n", BC_COL_COUNT, 0}, {"n_shallow", BC_COL_COUNT, 0}, {"n_deep", BC_COL_COUNT, 0},
		{"n_straddle", BC_COL_COUNT, 0}, {"frac_deep", BC_COL_REAL, 3}, {"frac_deep_lo", BC_COL_REAL, 3},
		{"frac_deep_hi", BC_COL_REAL, 3}, {"n_references", BC_COL_COUNT, 0}, {"n_localities", BC_COL_COUNT, 0},
		{"n_articulated", BC_COL_COUNT, 0}, {"n_partly_articulated", BC_COL_COUNT, 0},
		{"n_disarticulated", BC_COL_COUNT, 0}, {"n_articulation_unknown", BC_COL_COUNT, 0},
		{"diff", BC_COL_REAL, 3}, {"diff_lo", BC_COL_REAL, 3}, {"diff_hi", BC_COL_REAL, 3}, {"fisher_p", BC_COL_P, 0},
	};
	const size_t nfix = sizeof cols / sizeof cols[0];
	for (size_t i = 0; rc == BC_OK && i < nfix; i++)
		rc = bc_output__add_column(t, cols[i].name, cols[i].type, cols[i].digits, err);
	if (s->opts.zones_given) {
		char name[32];
		for (size_t z = 0; rc == BC_OK && z <= s->opts.n_zones; z++) {
			snprintf(name, sizeof name, "n_zone%zu", z + 1);
			rc = bc_output__add_column(t, name, BC_COL_COUNT, 0, err);
		}
		if (rc == BC_OK)
			rc = bc_output__add_column(t, "n_zone_straddle", BC_COL_COUNT, 0, err);
	}
	size_t ncol_shift = bc_output__column_count(t);
	if (rc == BC_OK)
		rc = bc_resample__columns(s, t, err);
	/* spatial coverage, after every other column */
	size_t ncol_cov = bc_output__column_count(t);
	static const struct { const char *name; bc_col_type type; int digits; } cov[] = {
		{"n_cells", BC_COL_COUNT, 0}, {"lat_range_deg", BC_COL_REAL, 2}, {"mst_km", BC_COL_REAL, 0}, {"n_unlocated", BC_COL_COUNT, 0},
	};
	for (size_t i = 0; rc == BC_OK && i < sizeof cov / sizeof cov[0]; i++)
		rc = bc_output__add_column(t, cov[i].name, cov[i].type, cov[i].digits, err);
	for (size_t i = 0; rc == BC_OK && i < s->nbins; i++) {
		const bc_shift_bin *x = &s->out[i];
		rc = bc_output__add_row(t, err);
		if (rc == BC_OK)
			rc = bc_output__set_text(t, 0, x->name, err);
		if (rc)
			break;
		const double v[] = {x->older_ma, x->younger_ma, x->n, x->n_shallow, x->n_deep, x->n_straddle,
			x->frac_deep, x->frac_deep_lo, x->frac_deep_hi, (double)x->n_references, (double)x->n_localities,
			x->n_articulated, x->n_partly_articulated, x->n_disarticulated, x->n_articulation_unknown,
			x->diff, x->diff_lo, x->diff_hi, x->fisher_p};
		for (size_t c = 0; c < sizeof v / sizeof v[0]; c++)
			bc_output__set_num(t, c + 1, v[c]);
		if (x->n_zone) {
			for (size_t z = 0; z <= s->opts.n_zones; z++)
				bc_output__set_num(t, nfix + z, x->n_zone[z]);
			bc_output__set_num(t, nfix + s->opts.n_zones + 1, x->n_zone_straddle);
		}
		bc_resample__row(s, t, i, ncol_shift);
		const double cv[] = {(double)x->n_cells, x->lat_range_deg, x->mst_km, (double)x->n_unlocated};
		for (size_t c = 0; c < sizeof cv / sizeof cv[0]; c++)
			bc_output__set_num(t, ncol_cov + c, cv[c]);
	}
	/* Caption: selection, binning, zoning, chart. */
	if (rc == BC_OK) {
		bc__buf_puts(&b, "Occurrence shift: ");
		bc_shift__describe_selection(&s->opts, &b);
		bc__buf_printf(&b, "; bins: %s", s->opts.bins == BC_BINS_WIDTH ? "equal widths" : s->opts.bins == BC_BINS_FILE ? "from a file" : rank_word(s->opts.bins));
		if (s->opts.bins == BC_BINS_WIDTH)
			bc__buf_printf(&b, " of %g Myr", s->opts.bin_width);
		if (s->chart_name)
			bc__buf_printf(&b, " (chart %s)", s->chart_name);
		bc__buf_puts(&b, ", span rule ");
		bc__buf_puts(&b, s->opts.span == BC_SPAN_ALL ? "all" : s->opts.span == BC_SPAN_SPLIT ? "split" : s->opts.span == BC_SPAN_MAX ? "max" : "majority");
		bc__buf_puts(&b, "; depth: ");
		describe_zones(&s->opts, &b);
		bc__buf_printf(&b, "; frac_deep with Wilson %g%% intervals; diff = later minus earlier bin (Newcombe hybrid score interval, Fisher exact p).",
			100 * s->opts.level);
		rc = b.data ? bc_output__set_caption(t, b.data, err) : oom(err);
		bc__buf_free(&b);
	}
	/* Tests across bins. */
	const bc_shift_tests *te = &s->tests;
	bc_meta_section T = BC_META_TESTS;
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, T, "bins_tested", (double)te->n_bins_tested, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, T, "trend_test", err, "Cochran-Armitage (Armitage z with N in the variance) over bins with shallow or deep occurrences; "
			"scores = minus the bin midpoint age in Ma, so z > 0 means the deep share rises toward the present");
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, T, "trend_z", te->trend_z, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, T, "trend_p", te->trend_p, 1, err);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, T, "logistic_model", err, "logit P(deep) = intercept + slope * (minus the bin midpoint age, Ma), maximum likelihood on the grouped counts; "
			"slope = change in log-odds of deep per Myr toward the present; Wald p");
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, T, "logit_intercept", te->logit_intercept, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, T, "logit_slope_per_myr", te->logit_slope, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, T, "logit_slope_se", te->logit_slope_se, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, T, "logit_p", te->logit_p, 1, err);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, T, "logit_converged", err, "%s", te->n_bins_tested < 2 || isnan(te->trend_z) ? "not fitted (fewer than two bins, or all shallow / all deep)" : te->logit_converged ? "yes" : "no (separation or non-convergence; estimates withheld)");
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, T, "breakpoint_ma", te->break_ma, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, T, "breakpoint_between", err, "%s%s%s", te->break_before ? te->break_before : "NA",
			te->break_before ? " | " : "", te->break_after ? te->break_after : "");
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, T, "breakpoint_lr", te->break_lr, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, T, "breakpoint_note", err, "the boundary maximising the binomial likelihood of one deep share before and one after; "
			"lr = 2 (logL two shares - logL one share); no p-value is given because the maximum over boundaries is not chi-square distributed");
	if (rc == BC_OK)
		rc = bc_resample__tests(s, t, err);
	if (rc == BC_OK)
		rc = bc_shift__stamp(s, t, err);
	if (rc) {
		bc_output__table_free(t);
		return rc;
	}
	*out = t;
	return BC_OK;
}

int bc_shift__stamp_source(bc_table *t, const char *db_path, const char *chart_name, const char *chart_source,
			   const char *vocabs, bc_err *err)
{
	bc_meta_section S = BC_META_STAMP;
	int has_source = chart_source && *chart_source;
	int rc = bc_output__meta_text(t, S, "tool", err, "bathychron %s", BC_VERSION);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "database", err, "%s", db_path);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "chart", err, "%s%s%s%s", chart_name ? chart_name : "none (bins not from a chart)",
			has_source ? " (" : "", has_source ? chart_source : "", has_source ? ")" : "");
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "vocabularies", err, "%s", vocabs);
	return rc;
}

int bc_shift__stamp_zone_rule(bc_table *t, const char *straddling, bc_err *err)
{
	return bc_output__meta_text(t, BC_META_STAMP, "zone_rule", err, "at a boundary S a depth range [min, max] is shallow when max <= S and min < S, "
		"deep when min >= S, otherwise straddling (%s); a single depth d is [d, d]; one missing end is taken as equal to the other", straddling);
}

int bc_shift__stamp_data(bc_table *t, const bc_shift_options *o, const char *sha256, size_t n_selected,
			 size_t n_no_coordinates, size_t n_outside_region, bc_err *err)
{
	bc_meta_section S = BC_META_STAMP;
	int rc = bc_output__meta_num(t, S, "level", o->level, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "data_sha256", err, "%s", sha256);
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, S, "selected", (double)n_selected, 0, err);
	if (rc == BC_OK && o->has_region)
		rc = bc_output__meta_num(t, S, "excluded_no_coordinates", (double)n_no_coordinates, 0, err);
	if (rc == BC_OK && o->has_region)
		rc = bc_output__meta_num(t, S, "excluded_outside_region", (double)n_outside_region, 0, err);
	return rc;
}

/* The methods stamp (the shift table's, and the taphonomy table's). */
int bc_shift__stamp(const bc_shift *s, bc_table *t, bc_err *err)
{
	bc_meta_section S = BC_META_STAMP;
	bc_buf b = {0};
	int rc = BC_OK;
	const bc_shift_summary *u = &s->sum;
	if (rc == BC_OK)
		rc = bc_shift__stamp_source(t, s->db_path, s->chart_name, s->chart_source, s->vocabs, err);
	describe_options(&s->opts, &b);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "options", err, "%s", b.data ? b.data + 1 : "");
	bc__buf_free(&b);
	bc_shift__describe_selection(&s->opts, &b);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "selection", err, "%s", b.data ? b.data : "");
	bc__buf_free(&b);
	describe_bins(s, &b);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "bins", err, "%s", b.data ? b.data : "");
	bc__buf_free(&b);
	describe_span(&s->opts, &b);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "span_rule", err, "%s", b.data ? b.data : "");
	bc__buf_free(&b);
	describe_zones(&s->opts, &b);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "zones", err, "%s", b.data ? b.data : "");
	bc__buf_free(&b);
	if (rc == BC_OK)
		rc = bc_shift__stamp_zone_rule(t, "not in frac_deep", err);
	if (rc == BC_OK)
		rc = bc_shift__stamp_data(t, &s->opts, u->data_sha256, u->n_selected, u->n_no_coordinates, u->n_outside_region, err);
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, S, "excluded_no_palaeodepth", (double)u->n_no_depth, 0, err);
	if (rc == BC_OK && s->opts.span == BC_SPAN_MAX)
		rc = bc_output__meta_num(t, S, "excluded_age_range_too_long", (double)u->n_too_long, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, S, "excluded_outside_bins", (double)u->n_outside_bins, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, S, "used", (double)u->n_used, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_num(t, S, "spanning_more_than_one_bin", (double)u->n_multi_bin, 0, err);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "change", err, "diff = frac_deep(bin) - frac_deep(previous, older bin) with the Newcombe (1998b) hybrid score interval; "
			"fisher_p: two-sided Fisher exact test of the two bins' shallow/deep counts%s; NA when either bin has no shallow or deep occurrence",
			s->opts.span == BC_SPAN_SPLIT ? " (fractional counts rounded to the nearest integer for this test only)" : "");
	if (rc == BC_OK)
		rc = bc_resample__stamp(s, t, err);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "coverage", err, "per bin, the localities counted in n_localities: n_cells = occupied %g x %g km cells "
			"of EPSG:6933 (WGS 84 / NSIDC EASE-Grid 2.0 Global, equal-area; grid origin at its 0,0), lat_range_deg = northernmost minus "
			"southernmost latitude, mst_km = summed geodesic length (WGS 84) of the minimum spanning tree of their distinct points, "
			"n_unlocated = localities without coordinates (in none of these); mst_km is NA for a bin with more than %d distinct points "
			"(the tree takes time in the square of the points): %zu bins. A shift between bins whose coverage differs much can be a change "
			"in where people collected rather than in habitat",
			s->opts.cell_km, s->opts.cell_km, BC_SHIFT_MST_MAX_POINTS, u->n_bins_mst_skipped);
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, S, "caution", err, "%s", BC_SHIFT__CAUTION);
	return rc;
}

int bc_shift_write(const bc_shift *s, FILE *f, bc_format format, bc_err *err)
{
	bc_table *t = NULL;
	int rc = build_table(s, &t, err);
	if (rc == BC_OK)
		rc = bc_output__write(t, f, format, err);
	bc_output__table_free(t);
	return rc;
}

static const char REFERENCES[] =
	"References\n\n"
	"Agresti A (2002) Categorical Data Analysis, 2nd ed. Wiley, Hoboken, NJ.\n"
	"Armitage P (1955) Tests for linear trends in proportions and frequencies. Biometrics 11(3):375-386.\n"
	"Cochran WG (1954) Some methods for strengthening the common chi-square tests. Biometrics 10(4):417-451.\n"
	"Cohen KM, Finney SC, Gibbard PL, Fan J-X (2013; updated) The ICS International Chronostratigraphic Chart. Episodes 36(3):199-204.\n"
	"Fisher RA (1935) The Design of Experiments. Oliver and Boyd, Edinburgh.\n"
	"Karney CFF (2013) Algorithms for geodesics. Journal of Geodesy 87(1):43-55.\n"
	"Newcombe RG (1998a) Two-sided confidence intervals for the single proportion: comparison of seven methods. Statistics in Medicine 17(8):857-872.\n"
	"Newcombe RG (1998b) Interval estimation for the difference between independent proportions: comparison of eleven methods. Statistics in Medicine 17(8):873-890.\n"
	"Wilson EB (1927) Probable inference, the law of succession, and statistical inference. Journal of the American Statistical Association 22(158):209-212.\n";

static int cmp_line(const void *a, const void *b) { return strcmp(*(char *const *)a, *(char *const *)b); }

/* Sorts the newline-terminated lines of text[0..n) in place, so the
 * references of resample.c fall into the alphabetical list. */
static int sort_lines(char *text, size_t n)
{
	size_t count = 0;
	for (size_t i = 0; i < n; i++)
		count += text[i] == '\n';
	char **line = bc__malloc((count ? count : 1) * sizeof *line);
	char *copy = bc__malloc(n + 1);
	if (!line || !copy) {
		free(line);
		free(copy);
		return -1;
	}
	memcpy(copy, text, n);
	copy[n] = '\0';
	size_t k = 0;
	for (char *p = copy; k < count && *p; k++) {
		line[k] = p;
		p = strchr(p, '\n');
		*p++ = '\0';
	}
	qsort(line, k, sizeof *line, cmp_line);
	size_t at = 0;
	for (size_t i = 0; i < k; i++) {
		size_t len = strlen(line[i]);
		memcpy(text + at, line[i], len);
		text[at + len] = '\n';
		at += len + 1;
	}
	free(line);
	free(copy);
	return 0;
}

int bc_shift_write_methods(const bc_shift *s, FILE *f, bc_err *err)
{
	const bc_shift_options *o = &s->opts;
	const bc_shift_summary *u = &s->sum;
	bc_buf b = {0}, w = {0};
	bc_shift__describe_selection(o, &w);
	bc__buf_printf(&b, "Occurrences were selected from a bathychron %s database (%s; %s); %zu matched",
		BC_VERSION, w.data ? w.data : "", "data SHA-256 in the table's stamp", u->n_selected);
	bc__buf_free(&w);
	bc_shift__summary_excluded_words(u, &w);
	if (w.len)
		bc__buf_printf(&b, ", of which were left out: %s", w.data);
	bc__buf_free(&w);
	bc__buf_printf(&b, "; %zu were counted. ", u->n_used);
	if (o->bins <= BC_BINS_PERIOD)
		bc__buf_printf(&b, "Ages were binned by %s of the International Chronostratigraphic Chart (release %s; Cohen et al. 2013, updated)",
			rank_word(o->bins), s->chart_name ? s->chart_name : "");
	else if (o->bins == BC_BINS_WIDTH)
		bc__buf_printf(&b, "Ages were binned in equal intervals of %g Myr with edges at multiples of %g Myr from the present", o->bin_width, o->bin_width);
	else
		bc__buf_printf(&b, "Ages were binned by the intervals listed in %s", o->bins_file);
	bc__buf_puts(&b, "; each bin includes its older bound. ");
	switch (o->span) {
	case BC_SPAN_ALL:
		bc__buf_printf(&b, "Occurrences whose age range overlapped more than one bin (%zu) were counted in every bin they overlapped, so bins are not independent. ", u->n_multi_bin);
		break;
	case BC_SPAN_SPLIT:
		bc__buf_printf(&b, "Occurrences whose age range overlapped more than one bin (%zu) were divided among those bins in proportion to the overlap. ", u->n_multi_bin);
		break;
	case BC_SPAN_MAX:
		bc__buf_printf(&b, "Occurrences with an age range longer than %g Myr were left out (%zu); of the rest, those overlapping more than one bin (%zu) were assigned to the bin holding most of their range. ",
			o->span_max_myr, u->n_too_long, u->n_multi_bin);
		break;
	default:
		bc__buf_printf(&b, "Occurrences whose age range overlapped more than one bin (%zu) were assigned to the bin holding most of their range. ", u->n_multi_bin);
		break;
	}
	bc__buf_printf(&b, "An occurrence was classed as shallow when its palaeodepth range lay above %g m (maximum <= %g m and minimum < %g m), "
		"deep when it lay at or below %g m (minimum >= %g m), and straddling otherwise",
		o->zones[0], o->zones[0], o->zones[0], o->zones[0], o->zones[0]);
	if (o->zones[0] == 200 && !o->zones_given)
		bc__buf_puts(&b, " (200 m, the conventional shelf edge)");
	if (o->zones_given) {
		bc__buf_puts(&b, "; counts are also given for depth zones bounded at ");
		for (size_t i = 0; i < o->n_zones; i++)
			bc__buf_printf(&b, "%s%g", i ? ", " : "", o->zones[i]);
		bc__buf_puts(&b, " m by the same rule");
	}
	bc__buf_printf(&b, ". The deep share n_deep/(n_shallow + n_deep) of each bin is given with its Wilson (1927) score interval at %g%% confidence "
		"(see Newcombe 1998a); straddling occurrences are reported but not part of the share. "
		"Changes between successive bins (later minus earlier) are given with Newcombe's (1998b) hybrid score interval and a two-sided Fisher exact test "
		"(Fisher 1935; Agresti 2002)", 100 * o->level);
	if (o->span == BC_SPAN_SPLIT)
		bc__buf_puts(&b, " on counts rounded to the nearest integer");
	bc__buf_puts(&b, ". A trend across bins was tested with the Cochran-Armitage test (Cochran 1954; Armitage 1955) with minus the bin-midpoint age as score, "
		"and the deep share was modelled by logistic regression on bin-midpoint age (Agresti 2002), fitted by maximum likelihood to the grouped counts with a Wald test of the slope; "
		"the single most likely breakpoint was located as the bin boundary maximising the likelihood of one deep share before and one after. ");
	const bc_shift_tests *t = &s->tests;
	if (isfinite(t->trend_z))
		bc__buf_printf(&b, "Across %zu bins, z = %.2f (p = %.3g)", t->n_bins_tested, t->trend_z, t->trend_p);
	if (isfinite(t->logit_slope))
		bc__buf_printf(&b, "; logistic slope %.4g per Myr toward the present (SE %.3g, p = %.3g)", t->logit_slope, t->logit_slope_se, t->logit_p);
	if (t->break_before)
		bc__buf_printf(&b, "; most likely breakpoint between %s and %s (%g Ma, likelihood-ratio statistic %.2f)", t->break_before, t->break_after, t->break_ma, t->break_lr);
	if (isfinite(t->trend_z))
		bc__buf_puts(&b, ". ");
	bc__buf_printf(&b, "Spatial coverage of each bin is given by its distinct localities: the number of occupied %g x %g km cells of the "
		"equal-area EASE-Grid 2.0 (EPSG:6933), the latitudinal range, and the length of the minimum spanning tree joining the localities "
		"(geodesic distances on WGS 84; Karney 2013)", o->cell_km, o->cell_km);
	if (u->n_bins_mst_skipped)
		bc__buf_printf(&b, ", which was not computed for %zu bins with more than %d distinct localities", u->n_bins_mst_skipped, BC_SHIFT_MST_MAX_POINTS);
	bc__buf_puts(&b, "; a change in the deep share between bins that differ much in coverage may reflect where collecting took place rather than habitat. ");
	bc_resample__methods(s, &b);
	bc__buf_puts(&b, BC_SHIFT__CAUTION "\n\n");
	size_t list_at = b.len + strlen("References\n\n");
	bc__buf_puts(&b, REFERENCES);
	bc_resample__references(s, &b);
	int rc = BC_OK;
	if (b.data && sort_lines(b.data + list_at, b.len - list_at))
		rc = oom(err);
	if (!b.data)
		rc = oom(err);
	else if (fwrite(b.data, 1, b.len, f) != b.len)
		rc = bc_err_set(err, BC_EIO, "writing the methods paragraph failed");
	bc__buf_free(&b);
	return rc;
}
