/*
 * plot_ranges.c - the ranges figure: per taxon, its shallow and deep
 * stratigraphic ranges with the confidence limit on each last occurrence,
 * above the shared time axis and timescale bar.
 */
#include "internal.h"
#include "plot_draw.h"

#include <math.h>
#include <string.h>

/* ---- the ranges figure -------------------------------------------------- */

/* Drawing order: taxa with shallow occurrences first, the one whose last
 * shallow occurrence is oldest on top; then by the deep range's end. */
static int plot_range_group(const bc_plot_taxon_range *t, double *key)
{
	const bc_plot_zone_range *z = t->shallow.n > 0 ? &t->shallow : t->deep.n > 0 ? &t->deep : NULL;
	*key = z ? (z->last_older_ma + z->last_younger_ma) / 2 : 0;
	return t->shallow.n > 0 ? 0 : t->deep.n > 0 ? 1 : 2;
}

static int plot_range_before(const bc_plot_taxon_range *a, const bc_plot_taxon_range *b)
{
	double ka, kb;
	int ga = plot_range_group(a, &ka), gb = plot_range_group(b, &kb);
	if (ga != gb)
		return ga < gb;
	if (ka != kb)
		return ka > kb;
	return strcmp(a->label ? a->label : "", b->label ? b->label : "") < 0;
}

static int plot_check_zone(const bc_plot_zone_range *z, size_t i, const char *label, const char *which, bc_err *err)
{
	if (!(z->n > 0))
		return BC_OK;
	if (!isfinite(z->first_older_ma) || !isfinite(z->first_younger_ma) || !isfinite(z->last_older_ma) ||
	    !isfinite(z->last_younger_ma) || z->first_older_ma < z->first_younger_ma || z->last_older_ma < z->last_younger_ma ||
	    z->first_older_ma < z->last_older_ma || z->first_younger_ma < z->last_younger_ma)
		return bc_err_set(err, BC_EINVALID, "plot: taxon %zu (%s): %s range %g/%g to %g/%g Ma is not ordered from older to younger",
			i + 1, label, which, z->first_older_ma, z->first_younger_ma, z->last_older_ma, z->last_younger_ma);
	return BC_OK;
}

static int plot_layout_ranges(bc_plot__fig *p, cairo_t *cr, const bc_plot_taxon_range *taxa, size_t n, const bc_chart *chart,
			      const bc_plot_options *opt, bc_err *err)
{
	int rc = bc_plot__begin(p, opt, chart, err);
	if (rc != BC_OK)
		return rc;
	if (!taxa || n == 0)
		return bc_err_set(err, BC_EINVALID, "plot: no taxa to draw (the selection is empty)");
	p->taxa = taxa;
	p->ntaxa = n;
	bc_plot__geom *g = &p->g;
	g->ma_lo = INFINITY;
	g->ma_hi = -INFINITY;
	double cmax = 0;
	for (size_t i = 0; i < n; i++) {
		const bc_plot_taxon_range *t = &taxa[i];
		const char *label = t->label ? t->label : "";
		if ((rc = plot_check_zone(&t->shallow, i, label, "shallow", err)) != BC_OK ||
		    (rc = plot_check_zone(&t->deep, i, label, "deep", err)) != BC_OK)
			return rc;
		const bc_plot_zone_range *z[2] = {&t->shallow, &t->deep};
		for (int k = 0; k < 2; k++) {
			if (!(z[k]->n > 0))
				continue;
			g->ma_hi = fmax(g->ma_hi, z[k]->first_older_ma);
			g->ma_lo = fmin(g->ma_lo, z[k]->last_younger_ma);
			cmax = fmax(cmax, z[k]->n);
		}
	}
	if (!isfinite(g->ma_lo))
		return bc_err_set(err, BC_EINVALID, "plot: no taxon has a shallow or deep occurrence to draw");
	/* Confidence limits widen the axis by at most a quarter of the data's
	 * span; longer ones run to the edge and end in an arrow. */
	double data_lo = g->ma_lo, reach = 0.25 * (g->ma_hi - g->ma_lo);
	for (size_t i = 0; i < n; i++) {
		const bc_plot_zone_range *z[2] = {&taxa[i].shallow, &taxa[i].deep};
		for (int k = 0; k < 2; k++)
			if (z[k]->n > 0 && isfinite(z[k]->last_ci_ma))
				g->ma_lo = fmin(g->ma_lo, fmax(fmax(0.0, z[k]->last_ci_ma), data_lo - reach));
	}
	if (g->ma_hi - g->ma_lo < 1.0) {
		double mid = (g->ma_hi + g->ma_lo) / 2;
		g->ma_lo = fmax(0.0, mid - 0.5);
		g->ma_hi = g->ma_lo + 1.0;
	}
	if (!(p->torder = bc__calloc(n, sizeof *p->torder)))
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	for (size_t i = 0; i < n; i++) {
		size_t j = i;
		for (; j > 0 && plot_range_before(&taxa[i], &taxa[p->torder[j - 1]]); j--)
			p->torder[j] = p->torder[j - 1];
		p->torder[j] = i;
	}

	const double W = g->width;
	char buf[64];
	bc_plot__font(cr, SIZE_SMALL, 0);
	double label_w = 0, row_titles = 0;
	for (size_t i = 0; i < n; i++)
		label_w = fmax(label_w, bc_plot__text_w(cr, taxa[i].label ? taxa[i].label : ""));
	p->left_labels_w = label_w = fmin(label_w, 0.3 * W);
	static const bc_rank all[] = {BC_RANK_AGE, BC_RANK_EPOCH, BC_RANK_SUBPERIOD, BC_RANK_PERIOD, BC_RANK_ERA, BC_RANK_EON};
	for (size_t i = 0; i < sizeof all / sizeof all[0]; i++)
		row_titles = fmax(row_titles, bc_plot__text_w(cr, bc_plot__rank_title(all[i])));
	snprintf(buf, sizeof buf, "%.0f | %.0f", cmax, cmax);
	p->count_w = bc_plot__text_w(cr, buf);
	double left = MARGIN + fmax(label_w + 3.0, row_titles + 3.0);
	double right = MARGIN + fmax(p->count_w + 7.0, bc_plot__text_w(cr, "000.0") / 2);
	g->main.x = left;
	g->main.w = W - left - right;
	if (g->main.w < 20.0 * PT_PER_MM)
		return bc_err_set(err, BC_EUSAGE, "plot: %g mm leaves too little room beside the taxon names; use a larger width (e.g. 180)", p->o.width_mm);
	bc_plot__time_ticks(p, cr);

	double y = MARGIN;
	if ((rc = bc_plot__title_layout(p, cr, &y)) != BC_OK)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	y += bc_plot__legend(cr, p, left, y, g->main.w, 0) + 3.0;
	p->row_h = SIZE_SMALL * 1.7;
	g->main.y = y;
	g->main.h = (double)n * p->row_h;
	y += g->main.h + TICK + 1.5 + SIZE_SMALL + 2.0 + SIZE_AXIS * 1.2 + 1.0;
	return bc_plot__bottom_layout(p, cr, y, left, err);
}

/* `s` cut (at a UTF-8 character) to fit `maxw`, with an ellipsis. */
static void plot_fit_label(cairo_t *cr, const char *s, double maxw, char *buf, size_t cap)
{
	snprintf(buf, cap, "%s", s);
	if (bc_plot__text_w(cr, buf) <= maxw)
		return;
	for (size_t k = bc_plot__utf8_len(s); k > 0; k--) {
		char pre[200];
		bc_plot__utf8_prefix(s, k - 1, pre, sizeof pre);
		snprintf(buf, cap, "%s\xE2\x80\xA6", pre); /* U+2026 ellipsis */
		if (bc_plot__text_w(cr, buf) <= maxw)
			return;
	}
}

static void plot_range_bar(cairo_t *cr, const bc_plot__fig *p, const bc_plot_zone_range *z, double y0, double h, unsigned colour)
{
	const bc_plot__geom *g = &p->g;
	if (!(z->n > 0))
		return;
	double a = bc_plot__x(g, z->first_older_ma), b = bc_plot__x(g, z->last_younger_ma);
	double x0 = fmin(a, b), w = fmax(fabs(b - a), 1.2);
	if (fabs(b - a) < 1.2)
		x0 = (a + b) / 2 - 0.6;
	/* the tint is outlined in the zone's colour, so a tinted deep bar is
	 * not read as a solid shallow one */
	cairo_rectangle(cr, x0 + 0.25, y0 + 0.25, w - 0.5, h - 0.5);
	bc_plot__rgb(cr, bc_plot__tint(colour, 0.35));
	cairo_fill_preserve(cr);
	bc_plot__rgb(cr, colour);
	cairo_set_line_width(cr, 0.5);
	cairo_stroke(cr);
	if (z->first_younger_ma > z->last_older_ma) {
		double c = bc_plot__x(g, z->first_younger_ma), d = bc_plot__x(g, z->last_older_ma);
		cairo_rectangle(cr, fmin(c, d), y0, fabs(d - c), h);
		bc_plot__rgb(cr, colour);
		cairo_fill(cr);
	}
	if (isfinite(z->last_ci_ma)) {
		int beyond = z->last_ci_ma < g->ma_lo - 1e-9;
		double ci = fmax(z->last_ci_ma, g->ma_lo);
		double xe = bc_plot__x(g, fmin(ci, z->last_younger_ma)), xs = bc_plot__x(g, z->last_younger_ma);
		double ym = y0 + h / 2, xc = bc_plot__x(g, ci);
		bc_plot__rgb(cr, 0x000000u);
		cairo_set_line_width(cr, LINE_ERR);
		cairo_move_to(cr, xs, ym);
		cairo_line_to(cr, xe, ym);
		if (beyond) {
			/* an arrow: the limit lies off the axis */
			double dir = xc > xs ? -1.0 : 1.0;
			cairo_move_to(cr, xc + dir * 2.5, y0 - 0.5);
			cairo_line_to(cr, xc, ym);
			cairo_line_to(cr, xc + dir * 2.5, y0 + h + 0.5);
		} else {
			cairo_move_to(cr, xc, y0 - 1.0);
			cairo_line_to(cr, xc, y0 + h + 1.0);
		}
		cairo_stroke(cr);
	}
}

void bc_plot__ranges_panel(cairo_t *cr, const bc_plot__fig *p)
{
	const bc_plot__geom *g = &p->g;
	const bc_plot__box *m = &g->main;
	char buf[256];
	/* zebra rows and the time grid, under everything */
	for (size_t r = 0; r < p->ntaxa; r += 2) {
		cairo_rectangle(cr, m->x, m->y + (double)r * p->row_h, m->w, p->row_h);
		bc_plot__rgb(cr, 0xF3F3F3u);
		cairo_fill(cr);
	}
	cairo_set_line_width(cr, LINE_AXIS);
	bc_plot__rgb(cr, GREY_GRID);
	for (double t = ceil(g->ma_lo / p->x_step - 1e-9) * p->x_step; t <= g->ma_hi + 1e-9; t += p->x_step) {
		cairo_move_to(cr, bc_plot__x(g, t), m->y);
		cairo_line_to(cr, bc_plot__x(g, t), m->y + m->h);
	}
	cairo_stroke(cr);
	bc_plot__font(cr, SIZE_SMALL, 0);
	double bh = p->row_h * 0.3;
	for (size_t r = 0; r < p->ntaxa; r++) {
		const bc_plot_taxon_range *t = &p->taxa[p->torder[r]];
		double yc = m->y + ((double)r + 0.5) * p->row_h;
		plot_range_bar(cr, p, &t->shallow, yc - bh - 0.4, bh, OI_SKY);
		plot_range_bar(cr, p, &t->deep, yc + 0.4, bh, OI_BLUE);
		bc_plot__rgb(cr, 0x000000u);
		plot_fit_label(cr, t->label ? t->label : "", p->left_labels_w, buf, sizeof buf);
		bc_plot__text(cr, m->x - 3.0, yc + SIZE_SMALL * 0.36, 1.0, buf);
		snprintf(buf, sizeof buf, "%.0f | %.0f", t->shallow.n, t->deep.n);
		bc_plot__text(cr, m->x + m->w + 7.0, yc + SIZE_SMALL * 0.36, 0, buf);
	}
	bc_plot__rgb(cr, 0x000000u);
	cairo_set_line_width(cr, LINE_AXIS);
	cairo_move_to(cr, m->x, m->y + m->h);
	cairo_line_to(cr, m->x + m->w, m->y + m->h);
	cairo_stroke(cr);
}

/* ---- output ------------------------------------------------------------ */

static int layout_ranges(bc_plot__fig *p, cairo_t *cr, const void *items, size_t n, const bc_chart *chart,
			 const bc_plot_options *opt, bc_err *err)
{
	return plot_layout_ranges(p, cr, items, n, chart, opt, err);
}

int bc_plot_ranges(const char *path, const bc_plot_taxon_range *taxa, size_t n, const bc_chart *chart,
		   const bc_plot_options *opt, bc_err *err)
{
	return bc_plot__file(path, layout_ranges, taxa, n, chart, opt, err);
}
