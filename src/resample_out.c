/*
 * resample_out.c - how the shift table's uncertainty and bias results are
 * written: extra columns, tests and stamp entries, the methods sentences and
 * references, and the taphonomic sensitivity table. The numbers come from
 * resample.c; the table model and formats from output.c.
 */
#include "resample.h"

#include <math.h>
#include <string.h>

/* ------------------------------------------------------------------ */
/* Output                                                               */
/* ------------------------------------------------------------------ */

typedef struct colspec {
	const char *name;
	bc_col_type type;
	int digits;
} colspec;

static const colspec draw_cols[] = {
	{"draws_frac_deep_lo", BC_COL_REAL, 3}, {"draws_frac_deep_median", BC_COL_REAL, 3}, {"draws_frac_deep_hi", BC_COL_REAL, 3},
	{"draws_defined", BC_COL_REAL, 3}, {"draws_breakpoint_share", BC_COL_REAL, 3},
};
static const colspec refw_cols[] = {
	{"ref_units", BC_COL_COUNT, 0}, {"refw_frac_deep", BC_COL_REAL, 3}, {"refw_lo", BC_COL_REAL, 3}, {"refw_hi", BC_COL_REAL, 3},
};
static const colspec bg_cols[] = {
	{"bg_n", BC_COL_COUNT, 0}, {"bg_deep", BC_COL_COUNT, 0}, {"bg_frac_deep", BC_COL_REAL, 3},
	{"affinity_p_deep", BC_COL_P, 0}, {"affinity_p_shallow", BC_COL_P, 0},
};
static const colspec quota_cols[] = {
	{"quota_frac_deep_lo", BC_COL_REAL, 3}, {"quota_frac_deep_median", BC_COL_REAL, 3}, {"quota_frac_deep_hi", BC_COL_REAL, 3},
};
static const colspec taph_cols[] = {
	{"art_n", BC_COL_COUNT, 0}, {"art_frac_deep", BC_COL_REAL, 3}, {"art_frac_deep_lo", BC_COL_REAL, 3}, {"art_frac_deep_hi", BC_COL_REAL, 3},
};

#define NCOLS(a) (sizeof a / sizeof a[0])

static int add_cols(bc_table *t, const colspec *c, size_t n, bc_err *err)
{
	int rc = BC_OK;
	for (size_t i = 0; rc == BC_OK && i < n; i++)
		rc = bc_output__add_column(t, c[i].name, c[i].type, c[i].digits, err);
	return rc;
}

int bc_resample__columns(const bc_shift *s, bc_table *t, bc_err *err)
{
	const struct bc_resample *rs = s->rs;
	int rc = BC_OK;
	if (!rs)
		return BC_OK;
	if (rs->has_draws)
		rc = add_cols(t, draw_cols, NCOLS(draw_cols), err);
	if (rc == BC_OK && rs->has_refw)
		rc = add_cols(t, refw_cols, NCOLS(refw_cols), err);
	if (rc == BC_OK && rs->has_bg)
		rc = add_cols(t, bg_cols, NCOLS(bg_cols), err);
	if (rc == BC_OK && rs->has_quota)
		rc = add_cols(t, quota_cols, NCOLS(quota_cols), err);
	if (rc == BC_OK && rs->has_taph)
		rc = add_cols(t, taph_cols, NCOLS(taph_cols), err);
	return rc;
}

void bc_resample__row(const bc_shift *s, bc_table *t, size_t i, size_t c)
{
	const struct bc_resample *rs = s->rs;
	const bc_shift_bin *x = &s->out[i];
	if (!rs)
		return;
	if (rs->has_draws) {
		const double v[] = {x->draw_lo, x->draw_mid, x->draw_hi, x->draw_defined, x->draw_break_share};
		for (size_t k = 0; k < NCOLS(v); k++)
			bc_output__set_num(t, c++, v[k]);
	}
	if (rs->has_refw) {
		const double v[] = {x->n_ref_units, x->refw_frac_deep, x->refw_lo, x->refw_hi};
		for (size_t k = 0; k < NCOLS(v); k++)
			bc_output__set_num(t, c++, v[k]);
	}
	if (rs->has_bg) {
		const double v[] = {x->bg_n, x->bg_deep, x->bg_frac_deep, x->affinity_p_deep, x->affinity_p_shallow};
		for (size_t k = 0; k < NCOLS(v); k++)
			bc_output__set_num(t, c++, v[k]);
	}
	if (rs->has_quota) {
		const double v[] = {x->quota_lo, x->quota_mid, x->quota_hi};
		for (size_t k = 0; k < NCOLS(v); k++)
			bc_output__set_num(t, c++, v[k]);
	}
	if (rs->has_taph) {
		const double v[] = {x->art_n, x->art_frac_deep, x->art_lo, x->art_hi};
		for (size_t k = 0; k < NCOLS(v); k++)
			bc_output__set_num(t, c++, v[k]);
	}
}

static const char *background_word(const bc_shift_options *o)
{
	return o->background == BC_BACKGROUND_POOLED ? "pooled" : "binned";
}

int bc_resample__tests(const bc_shift *s, bc_table *t, bc_err *err)
{
	const struct bc_resample *rs = s->rs;
	const bc_shift_tests *te = &s->tests;
	const bc_meta_section T = BC_META_TESTS;
	int rc = BC_OK;
	if (!rs)
		return BC_OK;
	if (rs->has_draws) {
		rc = bc_output__meta_num(t, T, "draws", (double)te->n_draws, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "draws_trend_z_lo", te->draw_trend_z_lo, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "draws_trend_z_median", te->draw_trend_z_mid, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "draws_trend_z_hi", te->draw_trend_z_hi, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "draws_trend_significant_share", te->draw_trend_sig_share, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_text(t, T, "draws_breakpoint_mode", err, "%s%s%s", te->draw_break_before ? te->draw_break_before : "NA",
				te->draw_break_before ? " | " : "", te->draw_break_after ? te->draw_break_after : "");
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "draws_breakpoint_mode_share", te->draw_break_mode_share, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_text(t, T, "draws_breakpoint_note", err, "draws_breakpoint_share in each row: the share of draws whose most likely breakpoint is that bin's older boundary; "
				"the rest of the draws had no breakpoint (fewer than two bins with data, or all shallow / all deep)");
	}
	if (rc == BC_OK && rs->has_bg) {
		rc = bc_output__meta_text(t, T, "affinity_test", err, "one-sided binomial tests of the selection's deep count against the background deep share, %s background, focal occurrences %s the background; "
			"bins where the selection or the background has no shallow or deep occurrence are left out", background_word(&s->opts), s->opts.background_with_focal ? "included in" : "removed from");
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "affinity_deep", te->aff_k, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "affinity_n", te->aff_n, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "affinity_expected_share", te->aff_p0, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "affinity_expected_deep", te->aff_expected, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "affinity_p_deep", te->aff_p_deep, 1, err);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "affinity_p_shallow", te->aff_p_shallow, 1, err);
		if (rc == BC_OK)
			rc = bc_output__meta_text(t, T, "affinity", err, "%s (one-sided alpha %g)", te->aff_verdict ? te->aff_verdict : "none", 1 - s->opts.level);
	}
	if (rc == BC_OK && rs->has_taph) {
		rc = bc_output__meta_num(t, T, "articulated_bins_tested", (double)te->art_bins_tested, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "articulated_trend_z", te->art_trend_z, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "articulated_trend_p", te->art_trend_p, 1, err);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, "articulated_logit_slope_per_myr", te->art_logit_slope, 0, err);
		if (rc == BC_OK)
			rc = bc_output__meta_text(t, T, "transport_flag", err, "%s", te->transport_flag ? "yes" : "no");
		if (rc == BC_OK)
			rc = bc_output__meta_text(t, T, "taphonomy", err, "%s", te->taphonomy_verdict ? te->taphonomy_verdict : "");
		if (rc == BC_OK && !rs->art)
			rc = bc_output__meta_text(t, T, "articulated_subset", err, "empty: %s", rs->art_note);
	}
	return rc;
}

void bc_resample__describe_options(const bc_shift_options *o, bc_buf *b)
{
	if (o->draws) {
		bc__buf_printf(b, " --draws %zu", o->draws);
		bc__buf_printf(b, " --resample %s", o->resample == (BC_RESAMPLE_AGE | BC_RESAMPLE_DEPTH) ? "age,depth" :
			o->resample == BC_RESAMPLE_AGE ? "age" : o->resample == BC_RESAMPLE_DEPTH ? "depth" : "none");
		if (o->bootstrap)
			bc__buf_puts(b, " --bootstrap");
	}
	if (o->weight_references)
		bc__buf_puts(b, " --weight-references");
	if (o->background) {
		bc__buf_printf(b, " --background %s", background_word(o));
		if (o->background_with_focal)
			bc__buf_puts(b, " --background-with-focal");
	}
	if (o->quota)
		bc__buf_printf(b, " --quota %zu", o->quota);
	if (o->taphonomy)
		bc__buf_puts(b, " --taphonomy");
	if (bc_resample__wanted(o) && (o->draws || o->weight_references || o->quota))
		bc__buf_printf(b, " --seed %llu", (unsigned long long)o->seed);
}

#define RNG_WORDS "xoshiro256** (Blackman and Vigna 2021), one generator per draw seeded by splitmix64 (Steele, Lea and Flood 2014) from (seed, stream, draw index)"

int bc_resample__stamp(const bc_shift *s, bc_table *t, bc_err *err)
{
	const struct bc_resample *rs = s->rs;
	const bc_shift_options *o = &s->opts;
	const bc_meta_section S = BC_META_STAMP;
	int rc = BC_OK;
	if (!rs)
		return BC_OK;
	if (rs->has_draws || rs->has_refw || rs->has_quota) {
		rc = bc_output__meta_text(t, S, "random_numbers", err, "seed %llu; %s; results do not depend on the number of threads",
			(unsigned long long)o->seed, RNG_WORDS);
		if (rc == BC_OK)
			rc = bc_output__meta_text(t, S, "intervals_from_draws", err, "quantiles %g and %g (and the median) of the draws' values, linear interpolation between order statistics (Hyndman and Fan 1996 type 7); draws without a value are left out",
				(1 - o->level) / 2, (1 + o->level) / 2);
	}
	if (rc == BC_OK && rs->has_draws)
		rc = bc_output__meta_text(t, S, "draws", err, "%zu draws over %zu occurrences (%zu with an age drawn uniformly within their range, %zu with a depth drawn uniformly within a range that straddles %g m)%s; "
			"an age range inside one bin keeps that bin; ages falling outside the reported bins are not counted in that draw; depths are drawn only at the first boundary",
			o->draws, rs->n_pop, rs->n_age_drawn, rs->n_depth_drawn, o->zones[0],
			o->bootstrap ? "; each draw first resamples the occurrences with replacement (bootstrap)" :
			"; no bootstrap, so the draws show age and depth uncertainty only, not sampling error");
	if (rc == BC_OK && rs->has_refw)
		rc = bc_output__meta_text(t, S, "reference_weighting", err, "in each bin every reference weighs 1 (all occurrences without a reference form one unit); refw_frac_deep = mean of the references' own deep shares; "
			"interval from %zu bootstrap resamples of the %zu references with shallow or deep occurrences", rs->replicates, rs->n_units);
	if (rc == BC_OK && rs->has_bg)
		rc = bc_output__meta_text(t, S, "background", err, "all occurrences with a palaeodepth in the database%s, same bins, zones and span rule (%zu counted), focal selection %s; expected share %s",
			o->has_region ? " inside --region" : "", rs->bg_selected, o->background_with_focal ? "included" : "removed",
			o->background == BC_BACKGROUND_POOLED ? "pooled K/N over the bins the selection occupies" : "bin-weighted: sum of n_b K_b/N_b over n");
	if (rc == BC_OK && rs->has_quota)
		rc = bc_output__meta_text(t, S, "quota", err, "%zu shallow or deep occurrences drawn without replacement in each bin, %zu times; bins with fewer are NA%s",
			o->quota, rs->replicates, o->span == BC_SPAN_SPLIT ? "; fractional counts rounded" : "");
	if (rc == BC_OK && rs->has_taph)
		rc = bc_output__meta_text(t, S, "transport_flag_rule", err, "flag when the full-data trend is significant (two-sided p < %g) and articulated material alone does not support it: "
			"NOT (same sign of trend z AND (p < %g OR logistic slope of the same sign and at least half the full-data slope))", 1 - o->level, 1 - o->level);
	return rc;
}

void bc_resample__methods(const bc_shift *s, bc_buf *b)
{
	const struct bc_resample *rs = s->rs;
	const bc_shift_options *o = &s->opts;
	const bc_shift_tests *t = &s->tests;
	if (!rs)
		return;
	if (rs->has_draws) {
		bc__buf_printf(b, "Age and depth uncertainty were propagated by %zu resampling draws (seed %llu; one xoshiro256** stream per draw, Blackman and Vigna 2021, "
			"seeded by splitmix64, Steele et al. 2014, so that results do not depend on the number of threads): in each draw every occurrence",
			o->draws, (unsigned long long)o->seed);
		if (o->resample & BC_RESAMPLE_AGE)
			bc__buf_puts(b, " whose age range was not inside one bin received an age drawn uniformly within its range, and so a bin");
		if (o->resample == (BC_RESAMPLE_AGE | BC_RESAMPLE_DEPTH))
			bc__buf_puts(b, ", and every occurrence");
		if (o->resample & BC_RESAMPLE_DEPTH)
			bc__buf_printf(b, " whose palaeodepth range straddled %g m received a depth drawn uniformly within its range, and so a zone", o->zones[0]);
		if (!o->resample)
			bc__buf_puts(b, " kept its bin and zone");
		if (o->bootstrap)
			bc__buf_puts(b, "; the occurrences were first resampled with replacement (a nonparametric bootstrap; Efron and Tibshirani 1993)");
		bc__buf_printf(b, ". We report each bin's median deep share over the draws with the %g and %g quantiles, and how often each bin boundary was the most likely breakpoint",
			(1 - o->level) / 2, (1 + o->level) / 2);
		if (t->draw_break_after)
			bc__buf_printf(b, " (between %s and %s in %.0f%% of draws)", t->draw_break_before, t->draw_break_after, 100 * t->draw_break_mode_share);
		bc__buf_printf(b, "; the trend test was significant in %.0f%% of draws.", 100 * t->draw_trend_sig_share);
		if (!o->bootstrap)
			bc__buf_puts(b, " Without a bootstrap these bands show age and depth uncertainty only, not sampling error.");
		bc__buf_puts(b, " ");
	}
	if (rs->has_refw)
		bc__buf_printf(b, "To keep a few prolific publications from driving the result, each reference present in a bin was given equal weight (its occurrences sharing it equally; occurrences without a reference formed one unit), "
			"and the interval of this reference-weighted deep share comes from %zu bootstrap resamples of the references (quantiles by linear interpolation, Hyndman and Fan 1996 type 7). ", rs->replicates);
	if (rs->has_bg) {
		bc__buf_printf(b, "Depth affinity was tested against the sampled background, all occurrences with a palaeodepth in the same bins%s with the selected occurrences %s, "
			"by a one-sided binomial test of the selection's deep count against the %s background deep share",
			o->has_region ? " and region" : "", o->background_with_focal ? "included" : "removed",
			o->background == BC_BACKGROUND_POOLED ? "pooled" : "bin-weighted (sum of each bin's count times its background share)");
		bc__buf_puts(b, ", a form of the binomial environmental-affinity test used by Kiessling and Aberhan (2007) and Simpson and Harnik (2009)");
		if (isfinite(t->aff_p0))
			bc__buf_printf(b, " (%.0f of %.0f deep against %.1f expected; P(X >= k) = %.3g, P(X <= k) = %.3g: affinity %s)", t->aff_k, t->aff_n, t->aff_expected,
				t->aff_p_deep, t->aff_p_shallow, t->aff_verdict);
		bc__buf_puts(b, ". ");
	}
	if (rs->has_quota)
		bc__buf_printf(b, "To compare bins at equal sample size, each bin was subsampled to %zu shallow or deep occurrences without replacement, %zu times (bins with fewer were not used). ",
			o->quota, rs->replicates);
	if (rs->has_taph) {
		bc__buf_puts(b, "To test whether the shift could be an artefact of transported loose ossicles, the analysis was repeated on articulated material alone");
		if (isfinite(t->art_trend_z))
			bc__buf_printf(b, " (z = %.2f, p = %.3g)", t->art_trend_z, t->art_trend_p);
		bc__buf_printf(b, "; a shift was to be flagged as carried by disarticulated material when the full-data trend was significant and articulated material alone did not show it "
			"in the same direction, either significantly or with at least half the logistic slope. Result: %s. ", t->taphonomy_verdict);
	}
}

void bc_resample__references(const bc_shift *s, bc_buf *b)
{
	const struct bc_resample *rs = s->rs;
	if (!rs)
		return;
	if (rs->has_draws || rs->has_refw || rs->has_quota) {
		bc__buf_puts(b, "Blackman D, Vigna S (2021) Scrambled linear pseudorandom number generators. ACM Transactions on Mathematical Software 47(4):36.\n");
		bc__buf_puts(b, "Efron B, Tibshirani RJ (1993) An Introduction to the Bootstrap. Chapman and Hall, New York.\n");
		bc__buf_puts(b, "Hyndman RJ, Fan Y (1996) Sample quantiles in statistical packages. The American Statistician 50(4):361-365.\n");
	}
	if (rs->has_bg) {
		bc__buf_puts(b, "Kiessling W, Aberhan M (2007) Environmental determinants of marine benthic biodiversity dynamics through Triassic-Jurassic time. Paleobiology 33(3):414-434.\n");
		bc__buf_puts(b, "Simpson C, Harnik PG (2009) Assessing the role of abundance in marine bivalve extinction over the post-Paleozoic. Paleobiology 35(4):631-647.\n");
	}
	if (rs->has_draws || rs->has_refw || rs->has_quota)
		bc__buf_puts(b, "Steele GL, Lea D, Flood CH (2014) Fast splittable pseudorandom number generators. Proceedings of OOPSLA 2014, ACM, 453-472.\n");
}

/* ------------------------------------------------------------------ */
/* The taphonomic sensitivity table                                     */
/* ------------------------------------------------------------------ */

int bc_shift_write_taphonomy(const bc_shift *s, FILE *f, bc_format format, bc_err *err)
{
	const struct bc_resample *rs = s->rs;
	if (!rs || !rs->has_taph)
		return bc_err_set(err, BC_EUSAGE, "shift: the taphonomy table needs --taphonomy");
	bc_table *t = NULL;
	int rc = bc_output__table_new(&t, "taphonomy", err);
	if (rc)
		return rc;
	static const colspec fixed[] = {{"bin", BC_COL_TEXT, 0}, {"older_ma", BC_COL_REAL, -1}, {"younger_ma", BC_COL_REAL, -1}};
	static const char *const subsets[] = {"all", "articulated", "disarticulated"};
	rc = add_cols(t, fixed, NCOLS(fixed), err);
	for (size_t k = 0; rc == BC_OK && k < 3; k++) {
		char name[64];
		static const char *const what[] = {"n_%s", "frac_deep_%s", "frac_deep_lo_%s", "frac_deep_hi_%s"};
		for (size_t j = 0; rc == BC_OK && j < 4; j++) {
			snprintf(name, sizeof name, what[j], subsets[k]);
			rc = bc_output__add_column(t, name, j ? BC_COL_REAL : BC_COL_COUNT, j ? 3 : 0, err);
		}
	}
	const bc_shift *sub[3] = {s, rs->art, rs->dis};
	for (size_t i = 0; rc == BC_OK && i < s->nbins; i++) {
		const bc_shift_bin *x = &s->out[i];
		rc = bc_output__add_row(t, err);
		if (rc == BC_OK)
			rc = bc_output__set_text(t, 0, x->name, err);
		bc_output__set_num(t, 1, x->older_ma);
		bc_output__set_num(t, 2, x->younger_ma);
		for (size_t k = 0; k < 3; k++) {
			const bc_shift_bin *y = k == 0 ? x : bc_resample__same_bin(sub[k], x);
			bc_output__set_num(t, 3 + 4 * k, y ? y->n_shallow + y->n_deep : 0);
			bc_output__set_num(t, 4 + 4 * k, y ? y->frac_deep : NAN);
			bc_output__set_num(t, 5 + 4 * k, y ? y->frac_deep_lo : NAN);
			bc_output__set_num(t, 6 + 4 * k, y ? y->frac_deep_hi : NAN);
		}
	}
	if (rc == BC_OK)
		rc = bc_output__set_caption(t, "Taphonomic sensitivity: the deep share (shallow + deep occurrences, Wilson intervals) in all material, in articulated material alone "
			"(buried where it lived) and in disarticulated material alone (loose ossicles that may have been transported); partly articulated and unclassified material is only in 'all'.", err);
	const bc_meta_section T = BC_META_TESTS;
	for (size_t k = 0; rc == BC_OK && k < 3; k++) {
		const bc_shift_tests *te = sub[k] ? &sub[k]->tests : NULL;
		char key[64];
		snprintf(key, sizeof key, "trend_z_%s", subsets[k]);
		rc = bc_output__meta_num(t, T, key, te ? te->trend_z : NAN, 0, err);
		snprintf(key, sizeof key, "trend_p_%s", subsets[k]);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, key, te ? te->trend_p : NAN, 1, err);
		snprintf(key, sizeof key, "logit_slope_per_myr_%s", subsets[k]);
		if (rc == BC_OK)
			rc = bc_output__meta_num(t, T, key, te ? te->logit_slope : NAN, 0, err);
		snprintf(key, sizeof key, "breakpoint_%s", subsets[k]);
		if (rc == BC_OK)
			rc = bc_output__meta_text(t, T, key, err, "%s%s%s", te && te->break_before ? te->break_before : "NA",
				te && te->break_before ? " | " : "", te && te->break_after ? te->break_after : "");
	}
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, T, "transport_flag", err, "%s", s->tests.transport_flag ? "yes" : "no");
	if (rc == BC_OK)
		rc = bc_output__meta_text(t, T, "taphonomy", err, "%s", s->tests.taphonomy_verdict ? s->tests.taphonomy_verdict : "");
	if (rc == BC_OK)
		rc = bc_shift__stamp(s, t, err);
	if (rc == BC_OK)
		rc = bc_output__write(t, f, format, err);
	bc_output__table_free(t);
	return rc;
}
