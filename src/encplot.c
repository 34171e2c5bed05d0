/*
 * encplot.c - the encounter figure: mean interval between injuring
 * encounters per depth zone (or site), log scale, with its interval, drawn
 * with cairo to SVG, PDF or PNG like the shift figure.
 */
#include "encounter.h"

#include <cairo.h>
#include <cairo-pdf.h>
#include <cairo-svg.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define FONT "DejaVu Sans" /* the shift figure's font (fonts-dejavu-core) */
#define PT_PER_MM (72.0 / 25.4)

static void fig_font(cairo_t *cr, double size, int bold)
{
	cairo_select_font_face(cr, FONT, CAIRO_FONT_SLANT_NORMAL, bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
	cairo_set_font_size(cr, size);
}

static double fig_text_width(cairo_t *cr, const char *s)
{
	cairo_text_extents_t e;
	cairo_text_extents(cr, s, &e);
	return e.x_advance;
}

/* Text with its anchor: align 0 left, 0.5 centre, 1 right; baseline at y. */
static void fig_text(cairo_t *cr, double x, double y, double align, const char *s)
{
	cairo_move_to(cr, x - align * fig_text_width(cr, s), y);
	cairo_show_text(cr, s);
}

/* Wraps `s` into lines no wider than `w`, drawn from baseline y; returns
 * the height used. Draws nothing when `draw` is 0 (measuring pass). */
static double fig_wrap(cairo_t *cr, double x, double y, double w, double lead, const char *s, int draw)
{
	char line[1024];
	size_t len = 0;
	double used = 0;
	const char *p = s;
	line[0] = '\0';
	while (*p) {
		size_t n = strcspn(p, " ");
		if (n > 200)
			n = 200; /* a very long word is cut, never overflowed */
		size_t keep = len;
		if (len + 1 + n + 1 > sizeof line)
			n = 0;
		if (len)
			line[len++] = ' ';
		memcpy(line + len, p, n);
		len += n;
		line[len] = '\0';
		if (keep && fig_text_width(cr, line) > w) {
			line[keep] = '\0';
			if (draw)
				fig_text(cr, x, y + used, 0, line);
			used += lead;
			memmove(line, p, n);
			len = n;
			line[len] = '\0';
		}
		p += strcspn(p, " ");
		while (*p == ' ')
			p++;
	}
	if (len) {
		if (draw)
			fig_text(cr, x, y + used, 0, line);
		used += lead;
	}
	return used;
}

typedef struct fig_scale {
	double x0, y0, w, h;     /* panel */
	double lmin, lmax;       /* log10 days at the bottom and top */
} fig_scale;

static double fig_y(const fig_scale *s, double days)
{
	double l = log10(days);
	return s->y0 + s->h - (l - s->lmin) / (s->lmax - s->lmin) * s->h;
}

static void fig_draw(cairo_t *cr, const bc_encounter_report *r, double W, double H, double caption_h,
		     const char *caption)
{
	size_t n = bc_encounter_report_count(r);
	cairo_set_source_rgb(cr, 1, 1, 1);
	cairo_paint(cr);
	cairo_set_source_rgb(cr, 0, 0, 0);

	/* Vertical range: every finite point and limit, widened to decades. */
	double lo = INFINITY, hi = -INFINITY;
	for (size_t i = 0; i < n; i++) {
		const bc_encounter_group *g = &bc_encounter_report_row(r, i)->individuals;
		double v[3] = {g->interval, g->interval_lo, g->interval_hi};
		for (int k = 0; k < 3; k++)
			if (isfinite(v[k]) && v[k] > 0) {
				lo = fmin(lo, v[k]);
				hi = fmax(hi, v[k]);
			}
	}
	if (!isfinite(lo)) {
		lo = 1;
		hi = 1e4;
	}
	fig_scale s;
	s.lmin = floor(log10(lo));
	s.lmax = ceil(log10(hi));
	if (s.lmax <= s.lmin)
		s.lmax = s.lmin + 1;
	s.x0 = 46;
	s.y0 = 26;
	s.w = W - s.x0 - 8;
	s.h = H - caption_h - s.y0 - 44;

	fig_font(cr, 8.5, 1);
	fig_text(cr, 8, 14, 0, "Mean interval between injuring encounters");

	/* Axes, decade ticks and grid. */
	cairo_set_line_width(cr, 0.6);
	fig_font(cr, 7, 0);
	for (double l = s.lmin; l <= s.lmax + 1e-9; l += 1) {
		double y = fig_y(&s, pow(10, l));
		cairo_set_source_rgb(cr, 0.88, 0.88, 0.88);
		cairo_move_to(cr, s.x0, y);
		cairo_line_to(cr, s.x0 + s.w, y);
		cairo_stroke(cr);
		cairo_set_source_rgb(cr, 0, 0, 0);
		char t[32];
		snprintf(t, sizeof t, "%g", pow(10, l));
		fig_text(cr, s.x0 - 3, y + 2.5, 1, t);
		/* minor ticks at 2 and 5 times the decade */
		for (int k = 2; k <= 5 && l < s.lmax; k += 3) {
			double ym = fig_y(&s, k * pow(10, l));
			cairo_move_to(cr, s.x0, ym);
			cairo_line_to(cr, s.x0 + 3, ym);
			cairo_stroke(cr);
			snprintf(t, sizeof t, "%g", k * pow(10, l));
			fig_font(cr, 5.5, 0);
			fig_text(cr, s.x0 - 3, ym + 2, 1, t);
			fig_font(cr, 7, 0);
		}
	}
	cairo_rectangle(cr, s.x0, s.y0, s.w, s.h);
	cairo_stroke(cr);
	cairo_save(cr);
	cairo_translate(cr, 10, s.y0 + s.h / 2);
	cairo_rotate(cr, -M_PI / 2);
	fig_text(cr, 0, 0, 0.5, "Days per individual (log scale)");
	cairo_restore(cr);

	/* One column per row; a bin's rows share a tint so blocks read apart. */
	double cw = s.w / (double)n;
	fig_font(cr, 6.5, 0);
	for (size_t i = 0; i < n; i++) {
		const bc_encounter_row *w = bc_encounter_report_row(r, i);
		const bc_encounter_group *g = &w->individuals;
		double x = s.x0 + cw * ((double)i + 0.5);
		/* labels: zone (its depth part) or site, then bin when grouped by
		 * bin; shrunk to fit the column */
		char zone[96];
		const char *par = strchr(w->zone, '(');
		snprintf(zone, sizeof zone, "%s", par ? par + 1 : w->zone);
		if (par && zone[0] && zone[strlen(zone) - 1] == ')')
			zone[strlen(zone) - 1] = '\0';
		const char *l1 = w->site[0] ? w->site : zone;
		const char *l2 = w->site[0] ? zone : (strcmp(w->bin, "all") ? w->bin : "");
		double fs = 6.5;
		fig_font(cr, fs, 0);
		while (fs > 4.0 && (fig_text_width(cr, l1) > cw - 2 || fig_text_width(cr, l2) > cw - 2))
			fig_font(cr, fs -= 0.25, 0);
		fig_text(cr, x, s.y0 + s.h + 10, 0.5, l1);
		if (l2[0])
			fig_text(cr, x, s.y0 + s.h + 19, 0.5, l2);
		fig_font(cr, 6.5, 0);
		char nt[48];
		snprintf(nt, sizeof nt, "%.0f of %.0f", g->x, g->n);
		cairo_set_source_rgb(cr, 0.35, 0.35, 0.35);
		fig_text(cr, x, s.y0 + s.h + (l2[0] ? 28 : 19), 0.5, nt);
		cairo_set_source_rgb(cr, 0, 0, 0);
		if (!(g->n > 0))
			continue;
		/* the interval bar; an unbounded end runs to the panel edge with an arrow */
		double ytop = isfinite(g->interval_hi) ? fig_y(&s, g->interval_hi) : s.y0;
		double ybot = g->interval_lo > 0 && isfinite(g->interval_lo) ? fig_y(&s, g->interval_lo) : s.y0 + s.h;
		cairo_set_line_width(cr, 1.0);
		cairo_move_to(cr, x, ybot);
		cairo_line_to(cr, x, ytop);
		cairo_stroke(cr);
		if (!isfinite(g->interval_hi)) {
			cairo_move_to(cr, x - 3, s.y0 + 5);
			cairo_line_to(cr, x, s.y0);
			cairo_line_to(cr, x + 3, s.y0 + 5);
			cairo_stroke(cr);
		} else {
			cairo_move_to(cr, x - 3, ytop);
			cairo_line_to(cr, x + 3, ytop);
			cairo_stroke(cr);
		}
		if (!(g->interval_lo > 0)) {
			cairo_move_to(cr, x - 3, s.y0 + s.h - 5);
			cairo_line_to(cr, x, s.y0 + s.h);
			cairo_line_to(cr, x + 3, s.y0 + s.h - 5);
			cairo_stroke(cr);
		} else {
			cairo_move_to(cr, x - 3, ybot);
			cairo_line_to(cr, x + 3, ybot);
			cairo_stroke(cr);
		}
		/* the point: filled; hollow at the edge when it is 0 or unbounded */
		if (isfinite(g->interval) && g->interval > 0) {
			cairo_arc(cr, x, fig_y(&s, g->interval), 2.6, 0, 2 * M_PI);
			cairo_fill(cr);
		} else {
			double y = isinf(g->interval) ? s.y0 + 3 : s.y0 + s.h - 3;
			cairo_set_source_rgb(cr, 1, 1, 1);
			cairo_arc(cr, x, y, 2.6, 0, 2 * M_PI);
			cairo_fill_preserve(cr);
			cairo_set_source_rgb(cr, 0, 0, 0);
			cairo_stroke(cr);
		}
	}
	fig_font(cr, 6.5, 0);
	fig_wrap(cr, 8, H - caption_h + 4, W - 16, 8, caption, 1);
}

int bc_encounter_plot(const bc_encounter_report *r, const char *path, double width_mm, bc_err *err)
{
	bc_plot_format fmt;
	int rc = bc_plot_format_from_path(&fmt, path, err); /* the shift figure's rule */
	if (rc)
		return rc;
	if (!r || bc_encounter_report_count(r) == 0)
		return bc_err_set(err, BC_EUSAGE, "%s: nothing to draw", path);
	if (!(width_mm >= 40 && width_mm <= 400))
		return bc_err_set(err, BC_EUSAGE, "figure width %g mm: choose between 40 and 400", width_mm);
	const bc_encounter_mc *mc = &bc_encounter__report_options(r)->mc;
	char caption[1200];
	snprintf(caption, sizeof caption,
		 "Points: 1/I at the midpoint duration, I the injury incidence %s; "
		 "bars: %g%% Monte Carlo interval over prevalence and duration (%ld draws, seed %llu); arrows: not bounded by the data; hollow point at the top: no regenerating individual (interval unbounded), at the bottom: all regenerating; "
		 "below each column: individuals regenerating of those examined. "
		 "Assumes a steady state, regenerates recognisable for the whole duration, every regenerate a survived predatory attack, "
		 "and animals damaged by collecting gear excluded.",
		 mc->model == BC_INCIDENCE_POISSON ? "of the Poisson model P = 1 - exp(-I D)" : "per individual at risk (P/(1-P) = I D)",
		 mc->level * 100, mc->draws, (unsigned long long)mc->seed);
	double W = width_mm * PT_PER_MM;
	/* measure the caption on a scratch surface */
	cairo_surface_t *m = cairo_image_surface_create(CAIRO_FORMAT_ARGB32, 1, 1);
	cairo_t *mcr = cairo_create(m);
	fig_font(mcr, 6.5, 0);
	double caption_h = fig_wrap(mcr, 0, 0, W - 16, 8, caption, 0) + 6;
	cairo_destroy(mcr);
	cairo_surface_destroy(m);
	double H = 210 + caption_h;

	cairo_surface_t *s = NULL;
	if (fmt == BC_PLOT_SVG)
		s = cairo_svg_surface_create(path, W, H);
	else if (fmt == BC_PLOT_PDF)
		s = cairo_pdf_surface_create(path, W, H);
	else
		s = cairo_image_surface_create(CAIRO_FORMAT_RGB24, (int)ceil(W * 300 / 72), (int)ceil(H * 300 / 72));
	cairo_t *cr = cairo_create(s);
	if (fmt == BC_PLOT_PNG)
		cairo_scale(cr, 300.0 / 72, 300.0 / 72);
	fig_draw(cr, r, W, H, caption_h, caption);
	cairo_status_t st = cairo_status(cr);
	cairo_destroy(cr);
	if (st == CAIRO_STATUS_SUCCESS && fmt == BC_PLOT_PNG)
		st = cairo_surface_write_to_png(s, path);
	cairo_surface_finish(s);
	if (st == CAIRO_STATUS_SUCCESS)
		st = cairo_surface_status(s);
	cairo_surface_destroy(s);
	if (st == CAIRO_STATUS_WRITE_ERROR || st == CAIRO_STATUS_FILE_NOT_FOUND)
		return bc_err_set(err, BC_EIO, "%s: cannot write the figure", path);
	if (st != CAIRO_STATUS_SUCCESS)
		return bc_err_set(err, BC_ERROR, "%s: drawing the figure: %s", path, cairo_status_to_string(st));
	return BC_OK;
}
