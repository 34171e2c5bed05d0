/*
 * plot_shift.c - the shift figure: deep share through time with its
 * intervals and resampling band, and counts per bin, above the shared time
 * axis and timescale bar; and a computed shift table drawn as that figure,
 * with its caption in words.
 */
#include "internal.h"
#include "plot_draw.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define DEFAULT_Y_LABEL "Deep occurrences (share of shallow + deep)"

/* ---- input checks ------------------------------------------------------ */

static const char *plot_bin_name(const bc_plot_bin *b, char *buf, size_t cap)
{
	if (b->label && *b->label)
		return b->label;
	snprintf(buf, cap, "%g-%g Ma", b->older_ma, b->younger_ma);
	return buf;
}

static int plot_check_bins(const bc_plot_bin *bins, size_t n, bc_err *err)
{
	if (!bins || n == 0)
		return bc_err_set(err, BC_EINVALID, "plot: no bins to draw (the selection is empty)");
	for (size_t i = 0; i < n; i++) {
		const bc_plot_bin *b = &bins[i];
		char nb[64];
		const char *name = plot_bin_name(b, nb, sizeof nb);
		if (!isfinite(b->older_ma) || !isfinite(b->younger_ma) || !(b->older_ma > b->younger_ma))
			return bc_err_set(err, BC_EINVALID, "plot: bin %zu (%s): older_ma %g must be older than younger_ma %g",
				i + 1, name, b->older_ma, b->younger_ma);
		const double c[4] = {b->n, b->n_shallow, b->n_deep, b->n_straddle};
		static const char *const cn[4] = {"n", "n_shallow", "n_deep", "n_straddle"};
		for (int k = 0; k < 4; k++)
			if (!isfinite(c[k]) || c[k] < 0)
				return bc_err_set(err, BC_EINVALID, "plot: bin %zu (%s): %s is %g, not a count", i + 1, name, cn[k], c[k]);
		const double eps = 1e-9;
		if (b->has_frac && !(b->lo >= -eps && b->lo <= b->frac + eps && b->frac <= b->hi + eps && b->hi <= 1 + eps))
			return bc_err_set(err, BC_EINVALID, "plot: bin %zu (%s): frac_deep %g with interval %g..%g is not 0 <= lo <= frac <= hi <= 1",
				i + 1, name, b->frac, b->lo, b->hi);
		if (b->has_band && !(b->band_lo >= -eps && b->band_lo <= b->band_mid + eps && b->band_mid <= b->band_hi + eps &&
				     b->band_hi <= 1 + eps))
			return bc_err_set(err, BC_EINVALID, "plot: bin %zu (%s): resampling band %g, %g, %g is not ordered within 0..1",
				i + 1, name, b->band_lo, b->band_mid, b->band_hi);
	}
	return BC_OK;
}

/* ---- layout ------------------------------------------------------------ */

static double plot_y_frac(const bc_plot__fig *p, double f)
{
	return p->g.main.y + (1.0 - f) * p->g.main.h;
}

static double plot_y_count(const bc_plot__fig *p, double c)
{
	return p->g.counts.y + (1.0 - c / p->count_top) * p->g.counts.h;
}

static int plot_cmp_older(const void *a, const void *b, const bc_plot_bin *bins)
{
	double x = bins[*(const size_t *)a].older_ma, y = bins[*(const size_t *)b].older_ma;
	return x > y ? -1 : x < y;
}

static void plot_sort(bc_plot__fig *p)
{
	/* insertion sort: bins are few and usually already in order */
	for (size_t i = 1; i < p->n; i++)
		for (size_t j = i; j > 0 && plot_cmp_older(&p->order[j - 1], &p->order[j], p->bins) > 0; j--) {
			size_t t = p->order[j];
			p->order[j] = p->order[j - 1];
			p->order[j - 1] = t;
		}
}

/* A round axis top >= x that wastes little of the panel: 1, 1.2, 1.5, 2,
 * 2.5, 3, 4, 5, 6, 8 times a power of ten, and at least 1. */
static double plot_round_top(double x)
{
	static const double m[] = {1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6, 8, 10};
	if (!(x > 1))
		return 1;
	double p = pow(10, floor(log10(x)));
	for (size_t i = 0; i < sizeof m / sizeof m[0]; i++)
		if (x <= m[i] * p * (1 + 1e-9))
			return m[i] * p;
	return 10 * p;
}

/* Fills p->g and everything else the drawing needs; `cr` only measures. */
static int plot_layout(bc_plot__fig *p, cairo_t *cr, const bc_plot_bin *bins, size_t n, const bc_chart *chart,
		       const bc_plot_options *opt, bc_err *err)
{
	int rc = bc_plot__begin(p, opt, chart, err);
	if (rc != BC_OK)
		return rc;
	p->bins = bins;
	p->n = n;
	if ((rc = plot_check_bins(bins, n, err)) != BC_OK)
		return rc;
	if (!(p->order = bc__calloc(n, sizeof *p->order)))
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	for (size_t i = 0; i < n; i++)
		p->order[i] = i;
	plot_sort(p);

	bc_plot__geom *g = &p->g;
	g->older_right = p->o.older_right;
	g->ma_lo = INFINITY;
	g->ma_hi = -INFINITY;
	double cmax = 0;
	for (size_t i = 0; i < n; i++) {
		const bc_plot_bin *b = &bins[i];
		g->ma_lo = fmin(g->ma_lo, b->younger_ma);
		g->ma_hi = fmax(g->ma_hi, b->older_ma);
		cmax = fmax(cmax, fmax(b->n, b->n_shallow + b->n_deep + b->n_straddle));
		p->any_frac |= b->has_frac;
		p->any_band |= b->has_band;
		if (b->has_frac && b->n_shallow + b->n_deep < p->o.few)
			p->any_few = 1;
	}
	p->count_top = plot_round_top(cmax);

	const double W = p->o.width_mm * PT_PER_MM;
	g->width = W;

	/* Left column: rotated y titles, then tick labels, then ticks. */
	bc_plot__font(cr, SIZE_SMALL, 0);
	char buf[64];
	bc_plot__fmt_num(buf, sizeof buf, p->count_top, p->count_top);
	p->left_labels_w = fmax(bc_plot__text_w(cr, "0.75"), bc_plot__text_w(cr, buf));
	double row_titles = 0;
	static const bc_rank all[] = {BC_RANK_AGE, BC_RANK_EPOCH, BC_RANK_SUBPERIOD, BC_RANK_PERIOD, BC_RANK_ERA, BC_RANK_EON};
	for (size_t i = 0; i < sizeof all / sizeof all[0]; i++)
		row_titles = fmax(row_titles, bc_plot__text_w(cr, bc_plot__rank_title(all[i])));

	double main_h = fmin(fmax(0.35 * p->o.width_mm, 45.0), 80.0) * PT_PER_MM;
	bc_plot__font(cr, SIZE_AXIS, 0);
	/* a y title too long for the panel breaks before its parenthesis first */
	const char *yl = p->o.y_label ? p->o.y_label : DEFAULT_Y_LABEL;
	const char *paren = strstr(yl, " (");
	if (bc_plot__text_w(cr, yl) > main_h && paren) {
		char *first = bc__strndup(yl, (size_t)(paren - yl));
		rc = first ? bc_plot__wrap(cr, first, main_h, &p->ylab) : BC_ENOMEM;
		free(first);
		if (rc == BC_OK)
			rc = bc_plot__wrap(cr, paren + 1, main_h, &p->ylab);
	} else
		rc = bc_plot__wrap(cr, yl, main_h, &p->ylab);
	if (rc != BC_OK)
		goto nomem;
	double ytitle_w = (double)p->ylab.n * SIZE_AXIS * 1.2;
	double left = MARGIN + fmax(ytitle_w + 2.0 + p->left_labels_w + 2.0 + TICK, row_titles + 3.0);

	/* The rightmost tick label may hang over the panel's right edge by half. */
	bc_plot__font(cr, SIZE_SMALL, 0);
	bc_plot__fmt_num(buf, sizeof buf, g->older_right ? g->ma_hi : g->ma_lo, 1);
	double right = MARGIN + fmax(0, bc_plot__text_w(cr, "000.0") / 2);
	g->main.x = g->counts.x = left;
	g->main.w = g->counts.w = W - left - right;

	bc_plot__time_ticks(p, cr);

	/* Top to bottom. */
	double y = MARGIN;
	if ((rc = bc_plot__title_layout(p, cr, &y)) != BC_OK)
		goto nomem;
	y += bc_plot__legend(cr, p, left, y, g->main.w, 0) + 3.0;
	g->counts.y = y;
	g->counts.h = fmin(fmax(0.1 * p->o.width_mm, 14.0), 20.0) * PT_PER_MM;
	y += g->counts.h + PANEL_GAP;
	g->main.y = y;
	g->main.h = main_h;
	y += main_h + TICK + 1.5 + SIZE_SMALL + 2.0 + SIZE_AXIS * 1.2 + 1.0;
	return bc_plot__bottom_layout(p, cr, y, left, err);
nomem:
	return bc_err_set(err, BC_ENOMEM, "out of memory");
}

/* ---- drawing ----------------------------------------------------------- */

void bc_plot__counts_panel(cairo_t *cr, const bc_plot__fig *p)
{
	const bc_plot__box *c = &p->g.counts;
	for (size_t i = 0; i < p->n; i++) {
		const bc_plot_bin *b = &p->bins[i];
		double a = bc_plot__x(&p->g, b->older_ma), z = bc_plot__x(&p->g, b->younger_ma);
		double x0 = fmin(a, z), w = fabs(z - a);
		double inset = fmin(0.6, w * 0.1);
		const double part[3] = {b->n_deep, b->n_shallow, b->n_straddle};
		const unsigned col[3] = {OI_BLUE, OI_SKY, GREY_STRADDLE};
		double acc = 0;
		for (int k = 0; k < 3; k++) {
			if (part[k] <= 0)
				continue;
			double y0 = plot_y_count(p, acc), y1 = plot_y_count(p, acc + part[k]);
			cairo_rectangle(cr, x0 + inset, y1, w - 2 * inset, y0 - y1);
			bc_plot__rgb(cr, col[k]);
			cairo_fill(cr);
			acc += part[k];
		}
	}
	/* axes: left and bottom, ticks at 0 and the top */
	char buf[64];
	bc_plot__rgb(cr, 0x000000u);
	cairo_set_line_width(cr, LINE_AXIS);
	cairo_move_to(cr, c->x, c->y);
	cairo_line_to(cr, c->x, c->y + c->h);
	cairo_line_to(cr, c->x + c->w, c->y + c->h);
	const double ticks[2] = {0, p->count_top};
	bc_plot__font(cr, SIZE_SMALL, 0);
	for (int k = 0; k < 2; k++) {
		double y = plot_y_count(p, ticks[k]);
		cairo_move_to(cr, c->x - TICK, y);
		cairo_line_to(cr, c->x, y);
	}
	cairo_stroke(cr);
	for (int k = 0; k < 2; k++) {
		bc_plot__fmt_num(buf, sizeof buf, ticks[k], 1);
		bc_plot__text(cr, c->x - TICK - 2.0, plot_y_count(p, ticks[k]) + SIZE_SMALL * 0.36, 1.0, buf);
	}
	/* rotated title: the longest that fits the panel's height */
	bc_plot__font(cr, SIZE_AXIS, 0);
	const char *t = bc_plot__text_w(cr, "Occurrences") <= c->h ? "Occurrences" : bc_plot__text_w(cr, "Count") <= c->h ? "Count" : "n";
	cairo_save(cr);
	cairo_translate(cr, MARGIN + SIZE_AXIS * 0.85, c->y + c->h / 2);
	cairo_rotate(cr, -M_PI / 2);
	bc_plot__text(cr, 0, 0, 0.5, t);
	cairo_restore(cr);
}

/* Consecutive (oldest-first) bins that touch in time. */
static int plot_touch(const bc_plot_bin *older, const bc_plot_bin *younger)
{
	return fabs(older->younger_ma - younger->older_ma) < 1e-6;
}

static void plot_band(cairo_t *cr, const bc_plot__fig *p)
{
	/* runs of touching bins with a band: polygon through bin midpoints;
	 * a bin alone gets a block half its width */
	for (size_t s = 0; s < p->n;) {
		const bc_plot_bin *b = &p->bins[p->order[s]];
		if (!b->has_band) {
			s++;
			continue;
		}
		size_t e = s + 1;
		while (e < p->n && p->bins[p->order[e]].has_band && plot_touch(&p->bins[p->order[e - 1]], &p->bins[p->order[e]]))
			e++;
		for (int pass = 0; pass < 2; pass++) {
			cairo_new_path(cr);
			if (e - s == 1) {
				double mid = (b->older_ma + b->younger_ma) / 2, hw = (b->older_ma - b->younger_ma) / 4;
				double xa = bc_plot__x(&p->g, mid - hw), xb = bc_plot__x(&p->g, mid + hw);
				if (pass == 0)
					cairo_rectangle(cr, fmin(xa, xb), plot_y_frac(p, b->band_hi), fabs(xb - xa),
						plot_y_frac(p, b->band_lo) - plot_y_frac(p, b->band_hi));
				else {
					cairo_move_to(cr, xa, plot_y_frac(p, b->band_mid));
					cairo_line_to(cr, xb, plot_y_frac(p, b->band_mid));
				}
			} else if (pass == 0) {
				for (size_t i = s; i < e; i++) {
					const bc_plot_bin *q = &p->bins[p->order[i]];
					cairo_line_to(cr, bc_plot__x(&p->g, (q->older_ma + q->younger_ma) / 2), plot_y_frac(p, q->band_hi));
				}
				for (size_t i = e; i-- > s;) {
					const bc_plot_bin *q = &p->bins[p->order[i]];
					cairo_line_to(cr, bc_plot__x(&p->g, (q->older_ma + q->younger_ma) / 2), plot_y_frac(p, q->band_lo));
				}
				cairo_close_path(cr);
			} else {
				for (size_t i = s; i < e; i++) {
					const bc_plot_bin *q = &p->bins[p->order[i]];
					cairo_line_to(cr, bc_plot__x(&p->g, (q->older_ma + q->younger_ma) / 2), plot_y_frac(p, q->band_mid));
				}
			}
			if (pass == 0) {
				bc_plot__rgb(cr, bc_plot__tint(OI_ORANGE, 0.4));
				cairo_fill(cr);
			} else
				bc_plot__dashed(cr, OI_VERMILLION);
		}
		s = e;
	}
}

void bc_plot__main_panel(cairo_t *cr, const bc_plot__fig *p)
{
	const bc_plot__box *m = &p->g.main;
	static const double yt[] = {0, 0.25, 0.5, 0.75, 1};
	char buf[32];
	/* grid */
	cairo_set_line_width(cr, LINE_AXIS);
	bc_plot__rgb(cr, GREY_GRID);
	for (size_t k = 1; k < 4; k++) {
		cairo_move_to(cr, m->x, plot_y_frac(p, yt[k]));
		cairo_line_to(cr, m->x + m->w, plot_y_frac(p, yt[k]));
	}
	cairo_stroke(cr);

	plot_band(cr, p);

	/* the line, broken at empty bins and at gaps in time */
	cairo_new_path(cr);
	const bc_plot_bin *prev = NULL;
	for (size_t i = 0; i < p->n; i++) {
		const bc_plot_bin *b = &p->bins[p->order[i]];
		if (!b->has_frac) {
			prev = NULL;
			continue;
		}
		double x = bc_plot__x(&p->g, (b->older_ma + b->younger_ma) / 2), y = plot_y_frac(p, b->frac);
		if (prev && plot_touch(prev, b))
			cairo_line_to(cr, x, y);
		else
			cairo_move_to(cr, x, y);
		prev = b;
	}
	bc_plot__rgb(cr, OI_BLUE);
	cairo_set_line_width(cr, LINE_DATA);
	cairo_stroke(cr);

	for (size_t i = 0; i < p->n; i++) {
		const bc_plot_bin *b = &p->bins[p->order[i]];
		if (!b->has_frac)
			continue;
		double x = bc_plot__x(&p->g, (b->older_ma + b->younger_ma) / 2);
		bc_plot__errbar(cr, x, plot_y_frac(p, b->lo), plot_y_frac(p, b->hi), 1.5);
	}
	for (size_t i = 0; i < p->n; i++) {
		const bc_plot_bin *b = &p->bins[p->order[i]];
		if (b->has_frac)
			bc_plot__point(cr, bc_plot__x(&p->g, (b->older_ma + b->younger_ma) / 2), plot_y_frac(p, b->frac),
				b->n_shallow + b->n_deep < p->o.few);
	}

	/* axes */
	bc_plot__rgb(cr, 0x000000u);
	cairo_set_line_width(cr, LINE_AXIS);
	cairo_move_to(cr, m->x, m->y);
	cairo_line_to(cr, m->x, m->y + m->h);
	cairo_line_to(cr, m->x + m->w, m->y + m->h);
	for (size_t k = 0; k < 5; k++) {
		cairo_move_to(cr, m->x - TICK, plot_y_frac(p, yt[k]));
		cairo_line_to(cr, m->x, plot_y_frac(p, yt[k]));
	}
	cairo_stroke(cr);
	bc_plot__font(cr, SIZE_SMALL, 0);
	for (size_t k = 0; k < 5; k++) {
		bc_plot__fmt_num(buf, sizeof buf, yt[k], yt[k] == 0.25 || yt[k] == 0.75 ? 0.01 : 0.1);
		if (yt[k] == 0 || yt[k] == 1)
			snprintf(buf, sizeof buf, "%g", yt[k]);
		bc_plot__text(cr, m->x - TICK - 2.0, plot_y_frac(p, yt[k]) + SIZE_SMALL * 0.36, 1.0, buf);
	}
	/* rotated y title, one or more lines, centred on the panel */
	bc_plot__font(cr, SIZE_AXIS, 0);
	double lh = SIZE_AXIS * 1.2;
	double x0 = m->x - TICK - 2.0 - p->left_labels_w - 2.0 - (double)p->ylab.n * lh;
	for (size_t k = 0; k < p->ylab.n; k++) {
		cairo_save(cr);
		cairo_translate(cr, x0 + (double)k * lh + SIZE_AXIS * 0.85, m->y + m->h / 2);
		cairo_rotate(cr, -M_PI / 2);
		bc_plot__text(cr, 0, 0, 0.5, p->ylab.s[k]);
		cairo_restore(cr);
	}
}

/* ---- output ------------------------------------------------------------ */

int bc_plot__layout(bc_plot__geom *out, const bc_plot_bin *bins, size_t n, const bc_chart *chart,
		    const bc_plot_options *opt, bc_err *err)
{
	bc_plot__fig p;
	cairo_surface_t *s = cairo_image_surface_create(CAIRO_FORMAT_ARGB32, 1, 1);
	cairo_t *cr = cairo_create(s);
	int rc = plot_layout(&p, cr, bins, n, chart, opt, err);
	if (rc == BC_OK)
		*out = p.g;
	bc_plot__free(&p);
	cairo_destroy(cr);
	cairo_surface_destroy(s);
	return rc;
}

static int layout_shift(bc_plot__fig *p, cairo_t *cr, const void *items, size_t n, const bc_chart *chart,
			const bc_plot_options *opt, bc_err *err)
{
	return plot_layout(p, cr, items, n, chart, opt, err);
}

int bc_plot_shift(const char *path, const bc_plot_bin *bins, size_t n, const bc_chart *chart,
		  const bc_plot_options *opt, bc_err *err)
{
	return bc_plot__file(path, layout_shift, bins, n, chart, opt, err);
}

/* ---- a computed shift table as a figure -------------------------------- */

int bc_plot__selection_words(bc_buf *b, const bc_shift_options *o)
{
	size_t start = b->len;
	int rc = BC_OK;
	if (o->group)
		rc |= bc__buf_printf(b, "%sgroup %s", b->len > start ? ", " : "", o->group);
	if (o->taxon)
		rc |= bc__buf_printf(b, "%staxon %s", b->len > start ? ", " : "", o->taxon);
	if (o->preservation)
		rc |= bc__buf_printf(b, "%spreservation %s", b->len > start ? ", " : "", o->preservation);
	if (o->has_region)
		rc |= bc__buf_printf(b, "%sregion %g,%g,%g,%g (W,S,E,N)", b->len > start ? ", " : "",
			o->region[0], o->region[1], o->region[2], o->region[3]);
	if (b->len == start)
		rc |= bc__buf_puts(b, "all occurrences");
	return rc ? BC_ENOMEM : BC_OK;
}

int bc_plot__zoning_words(bc_buf *b, const bc_shift_options *o)
{
	int rc = BC_OK;
	if (!o->n_zones)
		return bc__buf_puts(b, "no depth boundary");
	rc |= bc__buf_printf(b, "shallow above %g m, deep at or below %g m (a depth range crossing %g m counted as straddling)",
		o->zones[0], o->zones[0], o->zones[0]);
	if (o->zones_given && o->n_zones > 1) {
		rc |= bc__buf_puts(b, "; further boundaries at ");
		for (size_t i = 1; i < o->n_zones; i++)
			rc |= bc__buf_printf(b, "%s%g", i > 1 ? ", " : "", o->zones[i]);
		rc |= bc__buf_puts(b, " m");
	}
	return rc ? BC_ENOMEM : BC_OK;
}

/* The resampling band in words: what was drawn, how often, with which seed. */
static int plot_band_words(bc_buf *b, const bc_shift *s, const bc_shift_options *opts)
{
	const bc_shift_tests *t = bc_shift_tests_get(s);
	int rc = BC_OK;
	int age = (opts->resample & BC_RESAMPLE_AGE) != 0, depth = (opts->resample & BC_RESAMPLE_DEPTH) != 0;
	if (!t->n_draws)
		return BC_OK;
	rc |= bc__buf_printf(b, " Shaded band: %g-%g %% quantiles of the deep share over %zu resampling draws (seed %llu) in which ",
		50.0 * (1.0 - opts->level), 50.0 * (1.0 + opts->level), t->n_draws, (unsigned long long)opts->seed);
	if (age)
		rc |= bc__buf_puts(b, "each age was drawn uniformly within its age range");
	if (depth)
		rc |= bc__buf_printf(b, "%seach depth range crossing %g m gave a depth drawn uniformly within it", age ? " and " : "",
			opts->zones[0]);
	if (opts->bootstrap)
		rc |= bc__buf_printf(b, "%sthe occurrences were resampled with replacement (bootstrap)", age || depth ? ", and " : "");
	rc |= bc__buf_puts(b, "; dashed line: their median.");
	if (!opts->bootstrap)
		rc |= bc__buf_puts(b, " The band shows age and depth uncertainty only, not sampling error.");
	return rc ? BC_ENOMEM : BC_OK;
}

int bc_plot_shift_caption(char **out, const bc_shift *s, const bc_shift_options *opts, const char *chart_name,
			  bc_err *err)
{
	bc_buf b = {0};
	int rc = BC_OK;
	const bc_shift_summary *u = bc_shift_summary_get(s);
	static const char *const rank[] = {"stages", "epochs", "periods"};
	*out = NULL;
	rc |= bc__buf_printf(&b, "Deep share (deep / (shallow + deep)) with %g %% Wilson intervals; selection: ", 100.0 * opts->level);
	rc |= bc_plot__selection_words(&b, opts);
	switch (opts->bins) {
	case BC_BINS_WIDTH:
		rc |= bc__buf_printf(&b, "; bins of %g Myr", opts->bin_width);
		break;
	case BC_BINS_FILE:
		rc |= bc__buf_printf(&b, "; bins from %s", opts->bins_file ? opts->bins_file : "a file");
		break;
	default:
		rc |= bc__buf_printf(&b, "; bins: %s of chart %s", rank[opts->bins],
			opts->timescale ? opts->timescale : chart_name ? chart_name : "(default)");
		break;
	}
	switch (opts->span) {
	case BC_SPAN_ALL:
		rc |= bc__buf_puts(&b, ", an age range counted in every bin it overlaps");
		break;
	case BC_SPAN_SPLIT:
		rc |= bc__buf_puts(&b, ", an age range divided among the bins it overlaps");
		break;
	case BC_SPAN_MAX:
		rc |= bc__buf_printf(&b, ", age ranges longer than %g Myr left out, the rest in the bin holding most of the range", opts->span_max_myr);
		break;
	default:
		rc |= bc__buf_puts(&b, ", an age range in the bin holding most of it");
		break;
	}
	rc |= bc__buf_puts(&b, "; ");
	rc |= bc_plot__zoning_words(&b, opts);
	rc |= bc__buf_printf(&b, "; %zu of %zu selected occurrences counted", u->n_used, u->n_selected);
	const struct { size_t n; const char *why; } ex[] = {
		{u->n_no_coordinates, "without coordinates"}, {u->n_outside_region, "outside the region"},
		{u->n_no_depth, "without palaeodepth"}, {u->n_too_long, "with too long an age range"},
		{u->n_outside_bins, "outside every bin"},
	};
	size_t k = 0;
	for (size_t i = 0; i < sizeof ex / sizeof ex[0]; i++)
		if (ex[i].n)
			rc |= bc__buf_printf(&b, "%s%zu %s", k++ ? ", " : " (left out: ", ex[i].n, ex[i].why);
	if (k)
		rc |= bc__buf_puts(&b, ")");
	if (chart_name && (opts->bins > BC_BINS_PERIOD || (opts->timescale && strcmp(opts->timescale, chart_name) != 0)))
		rc |= bc__buf_printf(&b, ". Timescale bar: chart %s.", chart_name);
	else
		rc |= bc__buf_puts(&b, ".");
	rc |= plot_band_words(&b, s, opts);
	if (rc || !b.data) {
		bc__buf_free(&b);
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	}
	*out = b.data;
	return BC_OK;
}

int bc_plot_shift_table(const char *path, const bc_shift *s, const bc_shift_options *opts, const bc_chart *chart,
			const bc_plot_options *opt, bc_err *err)
{
	bc_plot_options o = BC_PLOT_OPTIONS_INIT;
	bc_plot_format fmt;
	char *caption = NULL;
	size_t n = bc_shift_bin_count(s);
	int rc = bc_plot_format_from_path(&fmt, path, err);
	if (rc != BC_OK)
		return rc;
	if (opt)
		o = *opt;
	o.level = opts->level;
	bc_plot_bin *bins = bc__calloc(n ? n : 1, sizeof *bins);
	if (!bins)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	for (size_t i = 0; i < n; i++) {
		const bc_shift_bin *x = bc_shift_bin_at(s, i);
		bc_plot_bin *b = &bins[i];
		b->label = x->name;
		b->older_ma = x->older_ma;
		b->younger_ma = x->younger_ma;
		b->n = x->n;
		b->n_shallow = x->n_shallow;
		b->n_deep = x->n_deep;
		b->n_straddle = x->n_straddle;
		b->has_frac = x->n_shallow + x->n_deep > 0;
		b->frac = x->frac_deep;
		b->lo = x->frac_deep_lo;
		b->hi = x->frac_deep_hi;
		/* the resampling band: quantiles of frac_deep over the draws in
		 * which the bin had shallow or deep occurrences */
		b->has_band = x->has_draws && isfinite(x->draw_mid);
		if (b->has_band) {
			b->band_lo = x->draw_lo;
			b->band_mid = x->draw_mid;
			b->band_hi = x->draw_hi;
		}
	}
	if (!o.caption) {
		rc = bc_plot_shift_caption(&caption, s, opts, chart ? bc_chart_name(chart) : NULL, err);
		o.caption = caption;
	}
	if (rc == BC_OK)
		rc = bc_plot_shift(path, bins, n, chart, &o, err);
	free(caption);
	free(bins);
	return rc;
}
