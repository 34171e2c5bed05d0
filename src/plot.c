/*
 * plot.c - the shift figure: deep share through time with its intervals,
 * counts per bin, and a timescale bar in the chart's own colours. One
 * drawing path for SVG, PDF and PNG; the only file that includes cairo.
 */
#include "internal.h"
#include "plot.h"

#include <cairo.h>
#include <cairo-pdf.h>
#include <cairo-svg.h>
#include <dlfcn.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

/* Sizes in points. Journals ask for 6-9 pt text and 0.5-1 pt lines at the
 * printed size (common practice, no source); the figure is drawn at the
 * printed size, so these are final. */
#define PT_PER_MM (72.0 / 25.4)
#define FONT "DejaVu Sans"
#define SIZE_TITLE 9.0
#define SIZE_AXIS 8.0
#define SIZE_SMALL 7.0
#define LINE_AXIS 0.5
#define LINE_DATA 1.0
#define LINE_ERR 0.75
#define MARGIN (2.0 * PT_PER_MM)
#define ROW_H (4.5 * PT_PER_MM)
#define PANEL_GAP (4.0 * PT_PER_MM)
#define TICK 2.5
#define POINT_R 2.0

/* Data colours: the colour-blind-safe palette of Okabe, M. & Ito, K. (2008)
 * "Color Universal Design (CUD): how to make figures and presentations that
 * are friendly to colorblind people", https://jfly.uni-koeln.de/color/
 * (blue, sky blue, orange, vermillion). Intervals are black, helpers grey. */
#define OI_BLUE 0x0072B2u
#define OI_SKY 0x56B4E9u
#define OI_ORANGE 0xE69F00u
#define OI_VERMILLION 0xD55E00u
#define GREY_STRADDLE 0xBBBBBBu
#define GREY_GRID 0xE0E0E0u
#define GREY_OUTLINE 0x404040u

#define DEFAULT_Y_LABEL "Deep occurrences (share of shallow + deep)"
#define CAVEAT "Palaeodepths are interpretations of the sources; a change in the deep share can be an artefact " \
	"of sampling, age uncertainty or transport of loose ossicles."

typedef struct plot_lines {
	char **s;
	size_t n, cap;
} plot_lines;

typedef struct plot {
	const bc_plot_bin *bins;
	size_t n;
	size_t *order;          /* bin indices, oldest first */
	const bc_chart *chart;
	bc_plot_options o;
	bc_plot__geom g;
	int any_frac, any_few, any_band;
	double count_top;       /* top of the counts axis */
	double x_step;          /* time tick step, Myr */
	plot_lines title, ylab, caption;
	char *caption_text;
	double left_labels_w;   /* y tick label column width */
	const bc_plot_taxon_range *taxa; /* the ranges figure (bc_plot_ranges); NULL for the shift figure */
	size_t ntaxa;
	size_t *torder;         /* taxa in drawing order, top first */
	double row_h;           /* height of one taxon's row */
	double count_w;         /* the right column of counts */
} plot;

/* ---- small helpers ---------------------------------------------------- */

static void plot_rgb(cairo_t *cr, unsigned rgb)
{
	cairo_set_source_rgb(cr, ((rgb >> 16) & 0xff) / 255.0, ((rgb >> 8) & 0xff) / 255.0, (rgb & 0xff) / 255.0);
}

/* `rgb` laid over white at opacity `a`, as an opaque colour (no
 * transparency in the files: some journal preflight checks reject it). */
static unsigned plot_tint(unsigned rgb, double a)
{
	unsigned out = 0;
	for (int shift = 16; shift >= 0; shift -= 8) {
		double c = ((rgb >> shift) & 0xff) * a + 255.0 * (1.0 - a);
		out |= (unsigned)lround(c) << shift;
	}
	return out;
}

static void plot_font(cairo_t *cr, double size, int bold)
{
	cairo_select_font_face(cr, FONT, CAIRO_FONT_SLANT_NORMAL, bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
	cairo_set_font_size(cr, size);
}

static double plot_text_w(cairo_t *cr, const char *s)
{
	cairo_text_extents_t e;
	cairo_text_extents(cr, s, &e);
	return e.x_advance;
}

/* Draws `s` with its baseline at y; align 0 left, 0.5 centre, 1 right. */
static void plot_text(cairo_t *cr, double x, double y, double align, const char *s)
{
	cairo_move_to(cr, x - align * plot_text_w(cr, s), y);
	cairo_show_text(cr, s);
}

static void plot_lines_free(plot_lines *l)
{
	for (size_t i = 0; i < l->n; i++)
		free(l->s[i]);
	free(l->s);
	memset(l, 0, sizeof *l);
}

static int plot_lines_push(plot_lines *l, const char *s, size_t len)
{
	char **p = bc__grow(l->s, l->n, &l->cap, sizeof *p, 8);
	if (!p)
		return BC_ENOMEM;
	l->s = p;
	if (!(l->s[l->n] = bc__strndup(s, len)))
		return BC_ENOMEM;
	l->n++;
	return BC_OK;
}

/* Greedy word wrap of `text` to `maxw` points in the current font; a
 * newline forces a break; a word longer than a line gets a line of its own. */
static int plot_wrap(cairo_t *cr, const char *text, double maxw, plot_lines *out)
{
	bc_buf line = {0};
	int rc = BC_OK;
	const char *p = text;
	while (*p && rc == BC_OK) {
		size_t sp = strspn(p, " ");
		p += sp;
		if (*p == '\n') {
			rc = plot_lines_push(out, line.data ? line.data : "", line.len);
			line.len = 0;
			p++;
			continue;
		}
		size_t wl = strcspn(p, " \n");
		if (!wl)
			continue;
		size_t keep = line.len;
		if (keep)
			rc = bc__buf_append(&line, " ", 1);
		if (rc == BC_OK)
			rc = bc__buf_append(&line, p, wl);
		if (rc == BC_OK && keep && plot_text_w(cr, line.data) > maxw) {
			rc = plot_lines_push(out, line.data, keep);
			if (rc == BC_OK) {
				line.len = 0;
				rc = bc__buf_append(&line, p, wl);
			}
		}
		p += wl;
	}
	if (rc == BC_OK && line.len)
		rc = plot_lines_push(out, line.data, line.len);
	bc__buf_free(&line);
	return rc;
}

/* Copies the first `k` UTF-8 characters of `s` into buf. */
static void plot_utf8_prefix(const char *s, size_t k, char *buf, size_t cap)
{
	size_t i = 0, chars = 0;
	while (s[i] && chars < k) {
		i++;
		while (((unsigned char)s[i] & 0xC0) == 0x80)
			i++;
		chars++;
	}
	if (i >= cap)
		i = cap - 1;
	memcpy(buf, s, i);
	buf[i] = '\0';
}

static size_t plot_utf8_len(const char *s)
{
	size_t n = 0;
	for (; *s; s++)
		n += ((unsigned char)*s & 0xC0) != 0x80;
	return n;
}

/* Candidate k (0 = full name) of an interval label, shortest last; returns
 * 0 when there is no candidate k. Multi-word names keep the last word and
 * abbreviate the qualifiers ("E. Cretaceous", "E. Cret."); one-word names
 * shorten to four letters and a stop, then three letters ("Maas.", "Maa").
 * Single letters are never used: they collide with the chart's period symbols. */
static int plot_abbrev(const char *name, int k, char *buf, size_t cap)
{
	const char *last = strrchr(name, ' ');
	if (k == 0) {
		snprintf(buf, cap, "%s", name);
		return 1;
	}
	if (last) {
		last++;
		char pre[128] = "";
		size_t pl = 0;
		for (const char *w = name; w < last - 1 && pl + 4 < sizeof pre;) {
			w += strspn(w, " ");
			if (w >= last - 1)
				break;
			char c[8];
			plot_utf8_prefix(w, 1, c, sizeof c);
			pl += (size_t)snprintf(pre + pl, sizeof pre - pl, "%s. ", c);
			w += strcspn(w, " ");
		}
		if (k == 1) {
			snprintf(buf, cap, "%s%s", pre, last);
			return 1;
		}
		if (k == 2 && plot_utf8_len(last) > 5) {
			char c[64];
			plot_utf8_prefix(last, 4, c, sizeof c);
			snprintf(buf, cap, "%s%s.", pre, c);
			return 1;
		}
		return 0;
	}
	size_t len = plot_utf8_len(name);
	if (k == 1 && len > 5) {
		char c[64];
		plot_utf8_prefix(name, 4, c, sizeof c);
		snprintf(buf, cap, "%s.", c);
		return 1;
	}
	if (k == 2 && len > 3) {
		plot_utf8_prefix(name, 3, buf, cap);
		return 1;
	}
	return 0;
}

void bc_plot__abbreviate(const char *name, size_t max_chars, char *buf, size_t cap)
{
	for (int k = 0; k < 3; k++)
		if (plot_abbrev(name, k, buf, cap) && plot_utf8_len(buf) <= max_chars)
			return;
	buf[0] = '\0';
}

/* Relative luminance of an sRGB colour (W3C WCAG 2.1, definition of
 * "relative luminance"). Black text has the better contrast ratio exactly
 * when (L + 0.05) / 0.05 > 1.05 / (L + 0.05), i.e. L > sqrt(0.0525) - 0.05. */
int bc_plot__dark_text(unsigned rgb)
{
	double lin[3];
	for (int i = 0; i < 3; i++) {
		double c = ((rgb >> (16 - 8 * i)) & 0xff) / 255.0;
		lin[i] = c <= 0.04045 ? c / 12.92 : pow((c + 0.055) / 1.055, 2.4);
	}
	double l = 0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2];
	return l > sqrt(0.0525) - 0.05;
}

double bc_plot__x(const bc_plot__geom *g, double ma)
{
	double t = (ma - g->ma_lo) / (g->ma_hi - g->ma_lo);
	return g->main.x + (g->older_right ? t : 1.0 - t) * g->main.w;
}

/* A "nice" number >= x: 1, 2 or 5 times a power of ten (tick steps). */
static double plot_nice_ceil(double x)
{
	if (!(x > 0))
		return 1;
	double p = pow(10, floor(log10(x)));
	double m = x / p;
	return (m <= 1 + 1e-9 ? 1 : m <= 2 + 1e-9 ? 2 : m <= 5 + 1e-9 ? 5 : 10) * p;
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

static void plot_fmt_num(char *buf, size_t cap, double v, double step)
{
	int dec = 0;
	while (dec < 6 && fabs(step * pow(10, dec) - round(step * pow(10, dec))) > 1e-6)
		dec++;
	snprintf(buf, cap, "%.*f", dec, fabs(v) < step * 1e-9 ? 0.0 : v);
}

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

int bc_plot_format_from_path(bc_plot_format *out, const char *path, bc_err *err)
{
	const char *slash = path ? strrchr(path, '/') : NULL;
	const char *dot = path ? strrchr(slash ? slash : path, '.') : NULL;
	if (dot && strcasecmp(dot, ".svg") == 0)
		*out = BC_PLOT_SVG;
	else if (dot && strcasecmp(dot, ".pdf") == 0)
		*out = BC_PLOT_PDF;
	else if (dot && strcasecmp(dot, ".png") == 0)
		*out = BC_PLOT_PNG;
	else
		return bc_err_set(err, BC_EUSAGE, "%s: output file: unknown figure format %s%s%s; name it .svg, .pdf or .png",
			path && *path ? path : "(none)", dot ? "'" : "(no extension)", dot ? dot : "", dot ? "'" : "");
	return BC_OK;
}

/* ---- timescale rows ---------------------------------------------------- */

static int plot_in_view(const bc_plot__geom *g, const bc_interval *iv)
{
	return iv->younger_ma < g->ma_hi - 1e-9 && iv->older_ma > g->ma_lo + 1e-9;
}

static size_t plot_rank_count(const bc_chart *c, const bc_plot__geom *g, bc_rank r)
{
	size_t k = 0;
	for (size_t i = 0; c && i < bc_chart_count(c); i++) {
		const bc_interval *iv = bc_chart_interval(c, i);
		k += iv->rank == r && plot_in_view(g, iv);
	}
	return k;
}

/* The rank whose intervals coincide with the most bins (finer wins ties);
 * for bins that match no interval (fixed widths), the finest rank whose
 * cells in view are on average at least 4 mm wide. */
static bc_rank plot_guess_rank(const plot *p)
{
	static const bc_rank ranks[] = {BC_RANK_AGE, BC_RANK_EPOCH, BC_RANK_PERIOD, BC_RANK_ERA, BC_RANK_EON};
	const size_t nr = sizeof ranks / sizeof ranks[0];
	bc_rank best = BC_RANK_UNKNOWN;
	size_t best_n = 0;
	for (size_t r = 0; r < nr; r++) {
		size_t matched = 0;
		for (size_t b = 0; b < p->n; b++)
			for (size_t i = 0; i < bc_chart_count(p->chart); i++) {
				const bc_interval *iv = bc_chart_interval(p->chart, i);
				if (iv->rank == ranks[r] && fabs(iv->older_ma - p->bins[b].older_ma) < 0.01 &&
				    fabs(iv->younger_ma - p->bins[b].younger_ma) < 0.01) {
					matched++;
					break;
				}
			}
		if (matched > best_n) {
			best_n = matched;
			best = ranks[r];
		}
	}
	if (best != BC_RANK_UNKNOWN)
		return best;
	for (size_t r = 0; r < nr; r++) {
		size_t k = plot_rank_count(p->chart, &p->g, ranks[r]);
		if (k && p->g.main.w / (double)k >= 4.0 * PT_PER_MM)
			return ranks[r];
	}
	return BC_RANK_PERIOD;
}

static const char *plot_rank_title(bc_rank r)
{
	switch (r) {
	case BC_RANK_AGE: return "Stage";
	case BC_RANK_EPOCH: return "Epoch";
	case BC_RANK_SUBPERIOD: return "Subperiod";
	case BC_RANK_PERIOD: return "Period";
	case BC_RANK_ERA: return "Era";
	case BC_RANK_EON: return "Eon";
	default: return "";
	}
}

/* One row of the timescale bar: each interval of `rank` in view, filled
 * with the chart's colour, outlined, named as fully as its cell allows. */
static void plot_bar_row(cairo_t *cr, const plot *p, bc_plot__box row, bc_rank rank)
{
	const bc_plot__geom *g = &p->g;
	plot_font(cr, SIZE_SMALL, 0);
	for (size_t i = 0; i < bc_chart_count(p->chart); i++) {
		const bc_interval *iv = bc_chart_interval(p->chart, i);
		if (iv->rank != rank || !plot_in_view(g, iv))
			continue;
		double a = bc_plot__x(g, fmin(iv->older_ma, g->ma_hi)), b = bc_plot__x(g, fmax(iv->younger_ma, g->ma_lo));
		double x0 = fmin(a, b), w = fabs(b - a);
		unsigned fill = iv->has_colour ? iv->colour : 0xFFFFFFu;
		cairo_rectangle(cr, x0, row.y, w, row.h);
		plot_rgb(cr, fill);
		/* cells narrower than four outlines keep only their fill: a row of
		 * hairline cells would otherwise print as a solid dark block */
		if (w >= 4 * LINE_AXIS) {
			cairo_fill_preserve(cr);
			plot_rgb(cr, GREY_OUTLINE);
			cairo_set_line_width(cr, LINE_AXIS);
			cairo_stroke(cr);
		} else
			cairo_fill(cr);
		char label[160];
		for (int k = 0; plot_abbrev(iv->name, k, label, sizeof label); k++) {
			if (plot_text_w(cr, label) <= w - 2.0) {
				plot_rgb(cr, bc_plot__dark_text(fill) ? 0x000000u : 0xFFFFFFu);
				plot_text(cr, x0 + w / 2, row.y + row.h / 2 + SIZE_SMALL * 0.36, 0.5, label);
				break;
			}
		}
	}
	cairo_rectangle(cr, row.x, row.y, row.w, row.h);
	plot_rgb(cr, GREY_OUTLINE);
	cairo_set_line_width(cr, LINE_AXIS);
	cairo_stroke(cr);
	plot_rgb(cr, 0x000000u);
	plot_text(cr, g->main.x - 3.0, row.y + row.h / 2 + SIZE_SMALL * 0.36, 1.0, plot_rank_title(rank));
}

/* ---- legend (measured and drawn by the same code) ---------------------- */

enum { LEG_POINT, LEG_HOLLOW, LEG_ERRBAR, LEG_BAND, LEG_SWATCH, LEG_TICK, LEG_TINT };

typedef struct plot_leg_item {
	int kind;
	unsigned colour;
	char text[96];
} plot_leg_item;

static size_t plot_legend_items(const plot *p, plot_leg_item *it)
{
	size_t k = 0;
	if (p->taxa) {
		it[k++] = (plot_leg_item){LEG_SWATCH, OI_SKY, "Shallow"};
		it[k++] = (plot_leg_item){LEG_SWATCH, OI_BLUE, "Deep"};
		it[k++] = (plot_leg_item){LEG_TINT, OI_BLUE, "Allowed by the age ranges"};
		plot_leg_item t = {LEG_TICK, 0x000000u, ""};
		snprintf(t.text, sizeof t.text, "%g %% limit on the last occurrence", 100.0 * p->o.level);
		it[k++] = t;
		return k;
	}
	if (p->any_frac) {
		it[k++] = (plot_leg_item){LEG_POINT, OI_BLUE, "Deep share"};
		plot_leg_item e = {LEG_ERRBAR, 0x000000u, ""};
		snprintf(e.text, sizeof e.text, "%g %% Wilson interval", 100.0 * p->o.level);
		it[k++] = e;
	}
	if (p->any_few) {
		plot_leg_item h = {LEG_HOLLOW, OI_BLUE, ""};
		snprintf(h.text, sizeof h.text, "Hollow: fewer than %g shallow + deep", p->o.few);
		it[k++] = h;
	}
	if (p->any_band) {
		/* the band is the (1 - level)/2 .. (1 + level)/2 quantiles of the draws */
		plot_leg_item band = {LEG_BAND, OI_ORANGE, ""};
		snprintf(band.text, sizeof band.text, "Resampling %g-%g %% (dashed: median)", 50.0 * (1.0 - p->o.level),
			50.0 * (1.0 + p->o.level));
		it[k++] = band;
	}
	it[k++] = (plot_leg_item){LEG_SWATCH, OI_BLUE, "Deep"};
	it[k++] = (plot_leg_item){LEG_SWATCH, OI_SKY, "Shallow"};
	it[k++] = (plot_leg_item){LEG_SWATCH, GREY_STRADDLE, "Straddling the boundary"};
	return k;
}

static void plot_point(cairo_t *cr, double x, double y, int hollow)
{
	cairo_new_sub_path(cr);
	cairo_arc(cr, x, y, POINT_R, 0, 2 * M_PI);
	plot_rgb(cr, hollow ? 0xFFFFFFu : OI_BLUE);
	cairo_fill_preserve(cr);
	plot_rgb(cr, OI_BLUE);
	cairo_set_line_width(cr, LINE_DATA);
	cairo_stroke(cr);
}

static void plot_errbar(cairo_t *cr, double x, double y0, double y1, double cap)
{
	cairo_set_line_width(cr, LINE_ERR);
	plot_rgb(cr, 0x000000u);
	cairo_move_to(cr, x, y0);
	cairo_line_to(cr, x, y1);
	cairo_move_to(cr, x - cap, y0);
	cairo_line_to(cr, x + cap, y0);
	cairo_move_to(cr, x - cap, y1);
	cairo_line_to(cr, x + cap, y1);
	cairo_stroke(cr);
}

static void plot_dashed(cairo_t *cr, unsigned colour)
{
	static const double dash[] = {2.0, 1.5};
	plot_rgb(cr, colour);
	cairo_set_line_width(cr, LINE_ERR);
	cairo_set_dash(cr, dash, 2, 0);
	cairo_stroke(cr);
	cairo_set_dash(cr, NULL, 0, 0);
}

/* Flows the legend items into rows across [x, x + w] from `y` (top);
 * returns the height used. Draws only when `draw`. */
static double plot_legend(cairo_t *cr, const plot *p, double x, double y, double w, int draw)
{
	plot_leg_item it[8];
	size_t k = plot_legend_items(p, it);
	const double glyph = 9.0, gap = 2.0, sep = 7.0, line_h = SIZE_SMALL * 1.35;
	double cx = x, cy = y;
	plot_font(cr, SIZE_SMALL, 0);
	for (size_t i = 0; i < k; i++) {
		double iw = glyph + gap + plot_text_w(cr, it[i].text);
		if (cx > x && cx + iw > x + w) {
			cx = x;
			cy += line_h;
		}
		if (draw) {
			double mx = cx + glyph / 2, my = cy + line_h / 2;
			switch (it[i].kind) {
			case LEG_POINT:
			case LEG_HOLLOW:
				plot_point(cr, mx, my, it[i].kind == LEG_HOLLOW);
				break;
			case LEG_ERRBAR:
				plot_errbar(cr, mx, my - 3.2, my + 3.2, 1.5);
				break;
			case LEG_TINT:
				cairo_rectangle(cr, cx + 1.25, my - 2.75, glyph - 2.5, 5.5);
				plot_rgb(cr, plot_tint(it[i].colour, 0.35));
				cairo_fill_preserve(cr);
				plot_rgb(cr, it[i].colour);
				cairo_set_line_width(cr, 0.5);
				cairo_stroke(cr);
				break;
			case LEG_TICK:
				plot_rgb(cr, 0x000000u);
				cairo_set_line_width(cr, LINE_ERR);
				cairo_move_to(cr, cx + 1.0, my);
				cairo_line_to(cr, cx + glyph - 1.0, my);
				cairo_move_to(cr, cx + 1.0, my - 2.5);
				cairo_line_to(cr, cx + 1.0, my + 2.5);
				cairo_stroke(cr);
				break;
			case LEG_BAND:
				cairo_rectangle(cr, cx, my - 3.0, glyph, 6.0);
				plot_rgb(cr, plot_tint(OI_ORANGE, 0.4));
				cairo_fill(cr);
				cairo_move_to(cr, cx, my);
				cairo_line_to(cr, cx + glyph, my);
				plot_dashed(cr, OI_VERMILLION);
				break;
			default:
				cairo_rectangle(cr, cx + 1.0, my - 3.0, glyph - 2.0, 6.0);
				plot_rgb(cr, it[i].colour);
				cairo_fill(cr);
			}
			plot_font(cr, SIZE_SMALL, 0);
			plot_rgb(cr, 0x000000u);
			plot_text(cr, cx + glyph + gap, my + SIZE_SMALL * 0.36, 0, it[i].text);
		}
		cx += iw + sep;
	}
	return cy + line_h - y;
}

/* ---- layout ------------------------------------------------------------ */

static double plot_y_frac(const plot *p, double f)
{
	return p->g.main.y + (1.0 - f) * p->g.main.h;
}

static double plot_y_count(const plot *p, double c)
{
	return p->g.counts.y + (1.0 - c / p->count_top) * p->g.counts.h;
}

static int plot_cmp_older(const void *a, const void *b, const bc_plot_bin *bins)
{
	double x = bins[*(const size_t *)a].older_ma, y = bins[*(const size_t *)b].older_ma;
	return x > y ? -1 : x < y;
}

static void plot_sort(plot *p)
{
	/* insertion sort: bins are few and usually already in order */
	for (size_t i = 1; i < p->n; i++)
		for (size_t j = i; j > 0 && plot_cmp_older(&p->order[j - 1], &p->order[j], p->bins) > 0; j--) {
			size_t t = p->order[j];
			p->order[j] = p->order[j - 1];
			p->order[j - 1] = t;
		}
}

static void plot_free(plot *p)
{
	free(p->order);
	free(p->torder);
	free(p->caption_text);
	plot_lines_free(&p->title);
	plot_lines_free(&p->ylab);
	plot_lines_free(&p->caption);
}

static int plot_bottom_layout(plot *p, cairo_t *cr, double y, double left, bc_err *err);

/* Clears `p` and takes the options both figures share. */
static int plot_begin(plot *p, const bc_plot_options *opt, const bc_chart *chart, bc_err *err)
{
	memset(p, 0, sizeof *p);
	bc_plot_options def = BC_PLOT_OPTIONS_INIT;
	p->o = opt ? *opt : def;
	p->chart = chart;
	if (!(p->o.width_mm >= 50 && p->o.width_mm <= 500))
		return bc_err_set(err, BC_EUSAGE, "plot: width %g mm is outside 50..500 mm (85 single column, 180 double)", p->o.width_mm);
	if (!(p->o.dpi >= 50 && p->o.dpi <= 2400))
		return bc_err_set(err, BC_EUSAGE, "plot: resolution %g dpi is outside 50..2400", p->o.dpi);
	if (!(p->o.level > 0 && p->o.level < 1))
		return bc_err_set(err, BC_EUSAGE, "plot: confidence level %g is not between 0 and 1", p->o.level);
	if (!(p->o.few >= 0))
		p->o.few = 0;
	p->g.older_right = p->o.older_right;
	p->g.width = p->o.width_mm * PT_PER_MM;
	return BC_OK;
}

/* Time ticks for g->ma_lo..ma_hi over g->main.w: about one per 14 mm,
 * then widened until the labels clear each other. */
static void plot_time_ticks(plot *p, cairo_t *cr)
{
	const bc_plot__geom *g = &p->g;
	char buf[64];
	plot_font(cr, SIZE_SMALL, 0);
	double span = g->ma_hi - g->ma_lo;
	double target = fmax(2.0, g->main.w / (14.0 * PT_PER_MM));
	/* the 1-2-5 step nearest (in ratio) to the target, then widened */
	double raw = span / target, up = plot_nice_ceil(raw);
	double mant = up / pow(10, floor(log10(up) + 1e-9));
	double down = up / (mant < 1.5 ? 2.0 : mant < 3 ? 2.0 : 2.5);
	p->x_step = raw / down < up / raw ? down : up;
	for (int guard = 0; guard < 20; guard++) {
		double widest = 0;
		for (double t = ceil(g->ma_lo / p->x_step) * p->x_step; t <= g->ma_hi + 1e-9; t += p->x_step) {
			plot_fmt_num(buf, sizeof buf, t, p->x_step);
			widest = fmax(widest, plot_text_w(cr, buf));
		}
		if (p->x_step / span * g->main.w >= widest + 6.0)
			break;
		p->x_step = plot_nice_ceil(p->x_step * 1.01);
	}
}

/* The wrapped title from `*y` down. */
static int plot_title_layout(plot *p, cairo_t *cr, double *y)
{
	if (!(p->o.title && *p->o.title))
		return BC_OK;
	plot_font(cr, SIZE_TITLE, 1);
	int rc = plot_wrap(cr, p->o.title, p->g.width - 2 * MARGIN, &p->title);
	if (rc == BC_OK)
		*y += (double)p->title.n * SIZE_TITLE * 1.25 + 2.0;
	return rc;
}

/* Fills p->g and everything else the drawing needs; `cr` only measures. */
static int plot_layout(plot *p, cairo_t *cr, const bc_plot_bin *bins, size_t n, const bc_chart *chart,
		       const bc_plot_options *opt, bc_err *err)
{
	int rc = plot_begin(p, opt, chart, err);
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
	plot_font(cr, SIZE_SMALL, 0);
	char buf[64];
	plot_fmt_num(buf, sizeof buf, p->count_top, p->count_top);
	p->left_labels_w = fmax(plot_text_w(cr, "0.75"), plot_text_w(cr, buf));
	double row_titles = 0;
	static const bc_rank all[] = {BC_RANK_AGE, BC_RANK_EPOCH, BC_RANK_SUBPERIOD, BC_RANK_PERIOD, BC_RANK_ERA, BC_RANK_EON};
	for (size_t i = 0; i < sizeof all / sizeof all[0]; i++)
		row_titles = fmax(row_titles, plot_text_w(cr, plot_rank_title(all[i])));

	double main_h = fmin(fmax(0.35 * p->o.width_mm, 45.0), 80.0) * PT_PER_MM;
	plot_font(cr, SIZE_AXIS, 0);
	/* a y title too long for the panel breaks before its parenthesis first */
	const char *yl = p->o.y_label ? p->o.y_label : DEFAULT_Y_LABEL;
	const char *paren = strstr(yl, " (");
	if (plot_text_w(cr, yl) > main_h && paren) {
		char *first = bc__strndup(yl, (size_t)(paren - yl));
		rc = first ? plot_wrap(cr, first, main_h, &p->ylab) : BC_ENOMEM;
		free(first);
		if (rc == BC_OK)
			rc = plot_wrap(cr, paren + 1, main_h, &p->ylab);
	} else
		rc = plot_wrap(cr, yl, main_h, &p->ylab);
	if (rc != BC_OK)
		goto nomem;
	double ytitle_w = (double)p->ylab.n * SIZE_AXIS * 1.2;
	double left = MARGIN + fmax(ytitle_w + 2.0 + p->left_labels_w + 2.0 + TICK, row_titles + 3.0);

	/* The rightmost tick label may hang over the panel's right edge by half. */
	plot_font(cr, SIZE_SMALL, 0);
	plot_fmt_num(buf, sizeof buf, g->older_right ? g->ma_hi : g->ma_lo, 1);
	double right = MARGIN + fmax(0, plot_text_w(cr, "000.0") / 2);
	g->main.x = g->counts.x = left;
	g->main.w = g->counts.w = W - left - right;

	plot_time_ticks(p, cr);

	/* Top to bottom. */
	double y = MARGIN;
	if ((rc = plot_title_layout(p, cr, &y)) != BC_OK)
		goto nomem;
	y += plot_legend(cr, p, left, y, g->main.w, 0) + 3.0;
	g->counts.y = y;
	g->counts.h = fmin(fmax(0.1 * p->o.width_mm, 14.0), 20.0) * PT_PER_MM;
	y += g->counts.h + PANEL_GAP;
	g->main.y = y;
	g->main.h = main_h;
	y += main_h + TICK + 1.5 + SIZE_SMALL + 2.0 + SIZE_AXIS * 1.2 + 1.0;
	return plot_bottom_layout(p, cr, y, left, err);
nomem:
	return bc_err_set(err, BC_ENOMEM, "out of memory");
}

/* The timescale bar rows and the caption below the time axis at `y`;
 * sets the page height. Shared by both figures. */
static int plot_bottom_layout(plot *p, cairo_t *cr, double y, double left, bc_err *err)
{
	bc_plot__geom *g = &p->g;
	const bc_chart *chart = p->chart;
	const double W = g->width;
	int rc;
	if (chart) {
		g->fine_rank = p->o.bar_rank != BC_RANK_UNKNOWN ? p->o.bar_rank : plot_guess_rank(p);
		g->coarse_rank = p->o.bar_coarse_rank != BC_RANK_UNKNOWN ? p->o.bar_coarse_rank
				 : g->fine_rank > BC_RANK_PERIOD ? BC_RANK_PERIOD
				 : g->fine_rank > BC_RANK_SUPEREON ? (bc_rank)(g->fine_rank - 1) : BC_RANK_UNKNOWN;
		if (g->coarse_rank == g->fine_rank)
			g->coarse_rank = BC_RANK_UNKNOWN;
		g->coarse_row = (bc_plot__box){left, y, g->main.w, 0};
		if (g->coarse_rank != BC_RANK_UNKNOWN && plot_rank_count(chart, g, g->coarse_rank)) {
			g->coarse_row.h = ROW_H;
			y += ROW_H;
		}
		g->fine_row = (bc_plot__box){left, y, g->main.w, 0};
		if (plot_rank_count(chart, g, g->fine_rank)) {
			g->fine_row.h = ROW_H;
			y += ROW_H;
		}
	}

	/* Caption: the caller's text, then the standing caveat. */
	bc_buf cap = {0};
	rc = bc__buf_puts(&cap, p->o.caption ? p->o.caption : "");
	if (rc == BC_OK && !p->o.no_caveat)
		rc = bc__buf_printf(&cap, "%s%s", cap.len ? " " : "", CAVEAT);
	if (rc == BC_OK)
		rc = bc__buf_append(&cap, "", 0);
	if (rc != BC_OK) {
		bc__buf_free(&cap);
		goto nomem;
	}
	p->caption_text = cap.data;
	plot_font(cr, SIZE_SMALL, 0);
	if ((rc = plot_wrap(cr, p->caption_text, W - 2 * MARGIN, &p->caption)) != BC_OK)
		goto nomem;
	if (p->caption.n)
		y += 3.0 * PT_PER_MM + (double)p->caption.n * SIZE_SMALL * 1.3;
	g->height = ceil(y + MARGIN);
	return BC_OK;
nomem:
	return bc_err_set(err, BC_ENOMEM, "out of memory");
}

/* ---- drawing ----------------------------------------------------------- */

static void plot_time_axis(cairo_t *cr, const plot *p)
{
	const bc_plot__geom *g = &p->g;
	double base = g->main.y + g->main.h;
	char buf[64];
	plot_font(cr, SIZE_SMALL, 0);
	cairo_set_line_width(cr, LINE_AXIS);
	for (double t = ceil(g->ma_lo / p->x_step - 1e-9) * p->x_step; t <= g->ma_hi + 1e-9; t += p->x_step) {
		double x = bc_plot__x(g, t);
		plot_rgb(cr, 0x000000u);
		cairo_move_to(cr, x, base);
		cairo_line_to(cr, x, base + TICK);
		cairo_stroke(cr);
		plot_fmt_num(buf, sizeof buf, t, p->x_step);
		plot_text(cr, x, base + TICK + 1.5 + SIZE_SMALL * 0.75, 0.5, buf);
	}
	plot_font(cr, SIZE_AXIS, 0);
	plot_text(cr, g->main.x + g->main.w / 2, base + TICK + 1.5 + SIZE_SMALL + 2.0 + SIZE_AXIS * 0.8, 0.5, "Age (Ma)");
}

static void plot_counts_panel(cairo_t *cr, const plot *p)
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
			plot_rgb(cr, col[k]);
			cairo_fill(cr);
			acc += part[k];
		}
	}
	/* axes: left and bottom, ticks at 0 and the top */
	char buf[64];
	plot_rgb(cr, 0x000000u);
	cairo_set_line_width(cr, LINE_AXIS);
	cairo_move_to(cr, c->x, c->y);
	cairo_line_to(cr, c->x, c->y + c->h);
	cairo_line_to(cr, c->x + c->w, c->y + c->h);
	const double ticks[2] = {0, p->count_top};
	plot_font(cr, SIZE_SMALL, 0);
	for (int k = 0; k < 2; k++) {
		double y = plot_y_count(p, ticks[k]);
		cairo_move_to(cr, c->x - TICK, y);
		cairo_line_to(cr, c->x, y);
	}
	cairo_stroke(cr);
	for (int k = 0; k < 2; k++) {
		plot_fmt_num(buf, sizeof buf, ticks[k], 1);
		plot_text(cr, c->x - TICK - 2.0, plot_y_count(p, ticks[k]) + SIZE_SMALL * 0.36, 1.0, buf);
	}
	/* rotated title: the longest that fits the panel's height */
	plot_font(cr, SIZE_AXIS, 0);
	const char *t = plot_text_w(cr, "Occurrences") <= c->h ? "Occurrences" : plot_text_w(cr, "Count") <= c->h ? "Count" : "n";
	cairo_save(cr);
	cairo_translate(cr, MARGIN + SIZE_AXIS * 0.85, c->y + c->h / 2);
	cairo_rotate(cr, -M_PI / 2);
	plot_text(cr, 0, 0, 0.5, t);
	cairo_restore(cr);
}

/* Consecutive (oldest-first) bins that touch in time. */
static int plot_touch(const bc_plot_bin *older, const bc_plot_bin *younger)
{
	return fabs(older->younger_ma - younger->older_ma) < 1e-6;
}

static void plot_band(cairo_t *cr, const plot *p)
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
				plot_rgb(cr, plot_tint(OI_ORANGE, 0.4));
				cairo_fill(cr);
			} else
				plot_dashed(cr, OI_VERMILLION);
		}
		s = e;
	}
}

static void plot_main_panel(cairo_t *cr, const plot *p)
{
	const bc_plot__box *m = &p->g.main;
	static const double yt[] = {0, 0.25, 0.5, 0.75, 1};
	char buf[32];
	/* grid */
	cairo_set_line_width(cr, LINE_AXIS);
	plot_rgb(cr, GREY_GRID);
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
	plot_rgb(cr, OI_BLUE);
	cairo_set_line_width(cr, LINE_DATA);
	cairo_stroke(cr);

	for (size_t i = 0; i < p->n; i++) {
		const bc_plot_bin *b = &p->bins[p->order[i]];
		if (!b->has_frac)
			continue;
		double x = bc_plot__x(&p->g, (b->older_ma + b->younger_ma) / 2);
		plot_errbar(cr, x, plot_y_frac(p, b->lo), plot_y_frac(p, b->hi), 1.5);
	}
	for (size_t i = 0; i < p->n; i++) {
		const bc_plot_bin *b = &p->bins[p->order[i]];
		if (b->has_frac)
			plot_point(cr, bc_plot__x(&p->g, (b->older_ma + b->younger_ma) / 2), plot_y_frac(p, b->frac),
				b->n_shallow + b->n_deep < p->o.few);
	}

	/* axes */
	plot_rgb(cr, 0x000000u);
	cairo_set_line_width(cr, LINE_AXIS);
	cairo_move_to(cr, m->x, m->y);
	cairo_line_to(cr, m->x, m->y + m->h);
	cairo_line_to(cr, m->x + m->w, m->y + m->h);
	for (size_t k = 0; k < 5; k++) {
		cairo_move_to(cr, m->x - TICK, plot_y_frac(p, yt[k]));
		cairo_line_to(cr, m->x, plot_y_frac(p, yt[k]));
	}
	cairo_stroke(cr);
	plot_font(cr, SIZE_SMALL, 0);
	for (size_t k = 0; k < 5; k++) {
		plot_fmt_num(buf, sizeof buf, yt[k], yt[k] == 0.25 || yt[k] == 0.75 ? 0.01 : 0.1);
		if (yt[k] == 0 || yt[k] == 1)
			snprintf(buf, sizeof buf, "%g", yt[k]);
		plot_text(cr, m->x - TICK - 2.0, plot_y_frac(p, yt[k]) + SIZE_SMALL * 0.36, 1.0, buf);
	}
	/* rotated y title, one or more lines, centred on the panel */
	plot_font(cr, SIZE_AXIS, 0);
	double lh = SIZE_AXIS * 1.2;
	double x0 = m->x - TICK - 2.0 - p->left_labels_w - 2.0 - (double)p->ylab.n * lh;
	for (size_t k = 0; k < p->ylab.n; k++) {
		cairo_save(cr);
		cairo_translate(cr, x0 + (double)k * lh + SIZE_AXIS * 0.85, m->y + m->h / 2);
		cairo_rotate(cr, -M_PI / 2);
		plot_text(cr, 0, 0, 0.5, p->ylab.s[k]);
		cairo_restore(cr);
	}
}

/* Page, font options and title: the top of both figures. */
static void plot_draw_top(cairo_t *cr, const plot *p)
{
	const bc_plot__geom *g = &p->g;
	cairo_font_options_t *fo = cairo_font_options_create();
	cairo_font_options_set_hint_metrics(fo, CAIRO_HINT_METRICS_OFF);
	cairo_font_options_set_hint_style(fo, CAIRO_HINT_STYLE_NONE);
	cairo_set_font_options(cr, fo);
	cairo_font_options_destroy(fo);

	cairo_rectangle(cr, 0, 0, g->width, g->height);
	plot_rgb(cr, 0xFFFFFFu);
	cairo_fill(cr);
	cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);

	double y = MARGIN;
	if (p->title.n) {
		plot_font(cr, SIZE_TITLE, 1);
		plot_rgb(cr, 0x000000u);
		for (size_t k = 0; k < p->title.n; k++)
			plot_text(cr, MARGIN, y + SIZE_TITLE * 0.9 + (double)k * SIZE_TITLE * 1.25, 0, p->title.s[k]);
	}
}

/* Time axis, timescale bar and caption: the bottom of both figures. */
static void plot_draw_bottom(cairo_t *cr, const plot *p)
{
	const bc_plot__geom *g = &p->g;
	plot_time_axis(cr, p);
	if (g->coarse_row.h > 0)
		plot_bar_row(cr, p, g->coarse_row, g->coarse_rank);
	if (g->fine_row.h > 0)
		plot_bar_row(cr, p, g->fine_row, g->fine_rank);

	plot_font(cr, SIZE_SMALL, 0);
	plot_rgb(cr, 0x000000u);
	double cy = fmax(g->fine_row.y + g->fine_row.h, g->main.y + g->main.h + TICK + 1.5 + SIZE_SMALL + 2.0 + SIZE_AXIS * 1.2 + 1.0);
	cy += 3.0 * PT_PER_MM;
	for (size_t k = 0; k < p->caption.n; k++)
		plot_text(cr, MARGIN, cy + SIZE_SMALL * 0.9 + (double)k * SIZE_SMALL * 1.3, 0, p->caption.s[k]);
}

static void plot_ranges_panel(cairo_t *cr, const plot *p);

static void plot_draw(cairo_t *cr, const plot *p)
{
	const bc_plot__geom *g = &p->g;
	plot_draw_top(cr, p);
	if (p->taxa) {
		plot_legend(cr, p, g->main.x, g->main.y - 3.0 - plot_legend(cr, p, g->main.x, 0, g->main.w, 0), g->main.w, 1);
		plot_ranges_panel(cr, p);
	} else {
		plot_legend(cr, p, g->main.x, g->counts.y - 3.0 - plot_legend(cr, p, g->main.x, 0, g->main.w, 0), g->main.w, 1);
		plot_counts_panel(cr, p);
		plot_main_panel(cr, p);
	}
	plot_draw_bottom(cr, p);
}

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

static int plot_layout_ranges(plot *p, cairo_t *cr, const bc_plot_taxon_range *taxa, size_t n, const bc_chart *chart,
			      const bc_plot_options *opt, bc_err *err)
{
	int rc = plot_begin(p, opt, chart, err);
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
	plot_font(cr, SIZE_SMALL, 0);
	double label_w = 0, row_titles = 0;
	for (size_t i = 0; i < n; i++)
		label_w = fmax(label_w, plot_text_w(cr, taxa[i].label ? taxa[i].label : ""));
	p->left_labels_w = label_w = fmin(label_w, 0.3 * W);
	static const bc_rank all[] = {BC_RANK_AGE, BC_RANK_EPOCH, BC_RANK_SUBPERIOD, BC_RANK_PERIOD, BC_RANK_ERA, BC_RANK_EON};
	for (size_t i = 0; i < sizeof all / sizeof all[0]; i++)
		row_titles = fmax(row_titles, plot_text_w(cr, plot_rank_title(all[i])));
	snprintf(buf, sizeof buf, "%.0f | %.0f", cmax, cmax);
	p->count_w = plot_text_w(cr, buf);
	double left = MARGIN + fmax(label_w + 3.0, row_titles + 3.0);
	double right = MARGIN + fmax(p->count_w + 7.0, plot_text_w(cr, "000.0") / 2);
	g->main.x = left;
	g->main.w = W - left - right;
	if (g->main.w < 20.0 * PT_PER_MM)
		return bc_err_set(err, BC_EUSAGE, "plot: %g mm leaves too little room beside the taxon names; use a larger width (e.g. 180)", p->o.width_mm);
	plot_time_ticks(p, cr);

	double y = MARGIN;
	if ((rc = plot_title_layout(p, cr, &y)) != BC_OK)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	y += plot_legend(cr, p, left, y, g->main.w, 0) + 3.0;
	p->row_h = SIZE_SMALL * 1.7;
	g->main.y = y;
	g->main.h = (double)n * p->row_h;
	y += g->main.h + TICK + 1.5 + SIZE_SMALL + 2.0 + SIZE_AXIS * 1.2 + 1.0;
	return plot_bottom_layout(p, cr, y, left, err);
}

/* `s` cut (at a UTF-8 character) to fit `maxw`, with an ellipsis. */
static void plot_fit_label(cairo_t *cr, const char *s, double maxw, char *buf, size_t cap)
{
	snprintf(buf, cap, "%s", s);
	if (plot_text_w(cr, buf) <= maxw)
		return;
	for (size_t k = plot_utf8_len(s); k > 0; k--) {
		char pre[200];
		plot_utf8_prefix(s, k - 1, pre, sizeof pre);
		snprintf(buf, cap, "%s\xE2\x80\xA6", pre); /* U+2026 ellipsis */
		if (plot_text_w(cr, buf) <= maxw)
			return;
	}
}

static void plot_range_bar(cairo_t *cr, const plot *p, const bc_plot_zone_range *z, double y0, double h, unsigned colour)
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
	plot_rgb(cr, plot_tint(colour, 0.35));
	cairo_fill_preserve(cr);
	plot_rgb(cr, colour);
	cairo_set_line_width(cr, 0.5);
	cairo_stroke(cr);
	if (z->first_younger_ma > z->last_older_ma) {
		double c = bc_plot__x(g, z->first_younger_ma), d = bc_plot__x(g, z->last_older_ma);
		cairo_rectangle(cr, fmin(c, d), y0, fabs(d - c), h);
		plot_rgb(cr, colour);
		cairo_fill(cr);
	}
	if (isfinite(z->last_ci_ma)) {
		int beyond = z->last_ci_ma < g->ma_lo - 1e-9;
		double ci = fmax(z->last_ci_ma, g->ma_lo);
		double xe = bc_plot__x(g, fmin(ci, z->last_younger_ma)), xs = bc_plot__x(g, z->last_younger_ma);
		double ym = y0 + h / 2, xc = bc_plot__x(g, ci);
		plot_rgb(cr, 0x000000u);
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

static void plot_ranges_panel(cairo_t *cr, const plot *p)
{
	const bc_plot__geom *g = &p->g;
	const bc_plot__box *m = &g->main;
	char buf[256];
	/* zebra rows and the time grid, under everything */
	for (size_t r = 0; r < p->ntaxa; r += 2) {
		cairo_rectangle(cr, m->x, m->y + (double)r * p->row_h, m->w, p->row_h);
		plot_rgb(cr, 0xF3F3F3u);
		cairo_fill(cr);
	}
	cairo_set_line_width(cr, LINE_AXIS);
	plot_rgb(cr, GREY_GRID);
	for (double t = ceil(g->ma_lo / p->x_step - 1e-9) * p->x_step; t <= g->ma_hi + 1e-9; t += p->x_step) {
		cairo_move_to(cr, bc_plot__x(g, t), m->y);
		cairo_line_to(cr, bc_plot__x(g, t), m->y + m->h);
	}
	cairo_stroke(cr);
	plot_font(cr, SIZE_SMALL, 0);
	double bh = p->row_h * 0.3;
	for (size_t r = 0; r < p->ntaxa; r++) {
		const bc_plot_taxon_range *t = &p->taxa[p->torder[r]];
		double yc = m->y + ((double)r + 0.5) * p->row_h;
		plot_range_bar(cr, p, &t->shallow, yc - bh - 0.4, bh, OI_SKY);
		plot_range_bar(cr, p, &t->deep, yc + 0.4, bh, OI_BLUE);
		plot_rgb(cr, 0x000000u);
		plot_fit_label(cr, t->label ? t->label : "", p->left_labels_w, buf, sizeof buf);
		plot_text(cr, m->x - 3.0, yc + SIZE_SMALL * 0.36, 1.0, buf);
		snprintf(buf, sizeof buf, "%.0f | %.0f", t->shallow.n, t->deep.n);
		plot_text(cr, m->x + m->w + 7.0, yc + SIZE_SMALL * 0.36, 0, buf);
	}
	plot_rgb(cr, 0x000000u);
	cairo_set_line_width(cr, LINE_AXIS);
	cairo_move_to(cr, m->x, m->y + m->h);
	cairo_line_to(cr, m->x + m->w, m->y + m->h);
	cairo_stroke(cr);
}

/* ---- output ------------------------------------------------------------ */

static cairo_status_t plot_write_buf(void *closure, const unsigned char *data, unsigned int len)
{
	return bc__buf_append(closure, (const char *)data, len) == BC_OK ? CAIRO_STATUS_SUCCESS : CAIRO_STATUS_NO_MEMORY;
}

/* CRC-32 as PNG defines it (ISO/IEC 15948, annex D). */
static uint32_t plot_crc32(const unsigned char *p, size_t n)
{
	uint32_t c = 0xFFFFFFFFu;
	for (size_t i = 0; i < n; i++) {
		c ^= p[i];
		for (int k = 0; k < 8; k++)
			c = (c >> 1) ^ (0xEDB88320u & (0u - (c & 1u)));
	}
	return c ^ 0xFFFFFFFFu;
}

static void plot_be32(unsigned char *p, uint32_t v)
{
	p[0] = (unsigned char)(v >> 24);
	p[1] = (unsigned char)(v >> 16);
	p[2] = (unsigned char)(v >> 8);
	p[3] = (unsigned char)v;
}

/* Writes the PNG with a pHYs chunk after IHDR, so the file states its
 * resolution (PNG spec, 11.3.5.3: pixels per metre, unit 1). */
static int plot_write_png(FILE *f, const bc_buf *png, double dpi)
{
	static const unsigned char sig[8] = {0x89, 'P', 'N', 'G', '\r', '\n', 0x1A, '\n'};
	if (png->len < 33 || memcmp(png->data, sig, 8) != 0 || memcmp(png->data + 12, "IHDR", 4) != 0)
		return BC_ERROR;
	unsigned char phys[21];
	uint32_t ppm = (uint32_t)lround(dpi / 0.0254);
	plot_be32(phys, 9);
	memcpy(phys + 4, "pHYs", 4);
	plot_be32(phys + 8, ppm);
	plot_be32(phys + 12, ppm);
	phys[16] = 1;
	plot_be32(phys + 17, plot_crc32(phys + 4, 13));
	if (fwrite(png->data, 1, 33, f) != 33 || fwrite(phys, 1, sizeof phys, f) != sizeof phys ||
	    fwrite(png->data + 33, 1, png->len - 33, f) != png->len - 33)
		return BC_EIO;
	return BC_OK;
}

static cairo_status_t plot_write_file(void *closure, const unsigned char *data, unsigned int len)
{
	return fwrite(data, 1, len, closure) == len ? CAIRO_STATUS_SUCCESS : CAIRO_STATUS_WRITE_ERROR;
}

int bc_plot__layout(bc_plot__geom *out, const bc_plot_bin *bins, size_t n, const bc_chart *chart,
		    const bc_plot_options *opt, bc_err *err)
{
	plot p;
	cairo_surface_t *s = cairo_image_surface_create(CAIRO_FORMAT_ARGB32, 1, 1);
	cairo_t *cr = cairo_create(s);
	int rc = plot_layout(&p, cr, bins, n, chart, opt, err);
	if (rc == BC_OK)
		*out = p.g;
	plot_free(&p);
	cairo_destroy(cr);
	cairo_surface_destroy(s);
	return rc;
}

/* A 1x1 surface and context for measuring text, with the drawing's font options. */
static cairo_t *plot_measure_cr(cairo_surface_t **s)
{
	*s = cairo_image_surface_create(CAIRO_FORMAT_ARGB32, 1, 1);
	cairo_t *cr = cairo_create(*s);
	cairo_font_options_t *fo = cairo_font_options_create();
	cairo_font_options_set_hint_metrics(fo, CAIRO_HINT_METRICS_OFF);
	cairo_font_options_set_hint_style(fo, CAIRO_HINT_STYLE_NONE);
	cairo_set_font_options(cr, fo);
	cairo_font_options_destroy(fo);
	return cr;
}

/* Draws a laid-out figure into `path` as `fmt`; removes the file on failure. */
static int plot_render(plot *p, const char *path, bc_plot_format fmt, bc_err *err)
{
	cairo_surface_t *s = NULL;
	cairo_t *cr = NULL;
	FILE *f = NULL;
	bc_buf png = {0};
	int rc = BC_OK;
	if (!(f = fopen(path, "wb"))) {
		rc = bc_err_set(err, BC_EIO, "%s: cannot write the figure: %s", path, strerror(errno));
		goto done;
	}
	const double W = p->g.width, H = p->g.height;
	if (fmt == BC_PLOT_SVG) {
		s = cairo_svg_surface_create_for_stream(plot_write_file, f, W, H);
		cairo_svg_surface_set_document_unit(s, CAIRO_SVG_UNIT_PT);
	} else if (fmt == BC_PLOT_PDF) {
		s = cairo_pdf_surface_create_for_stream(plot_write_file, f, W, H);
		cairo_pdf_surface_set_metadata(s, CAIRO_PDF_METADATA_CREATOR, "bathychron " BC_VERSION);
		if (p->o.title && *p->o.title)
			cairo_pdf_surface_set_metadata(s, CAIRO_PDF_METADATA_TITLE, p->o.title);
	} else {
		double k = p->o.dpi / 72.0;
		s = cairo_image_surface_create(CAIRO_FORMAT_RGB24, (int)ceil(W * k), (int)ceil(H * k));
	}
	cr = cairo_create(s);
	if (fmt == BC_PLOT_PNG)
		cairo_scale(cr, p->o.dpi / 72.0, p->o.dpi / 72.0);
	plot_draw(cr, p);
	cairo_status_t st = cairo_status(cr);
	cairo_destroy(cr);
	cr = NULL;
	if (st == CAIRO_STATUS_SUCCESS && fmt == BC_PLOT_PNG) {
		cairo_surface_flush(s);
		st = cairo_surface_write_to_png_stream(s, plot_write_buf, &png);
		if (st == CAIRO_STATUS_SUCCESS) {
			int w = plot_write_png(f, &png, p->o.dpi);
			if (w == BC_EIO)
				st = CAIRO_STATUS_WRITE_ERROR;
			else if (w != BC_OK)
				st = CAIRO_STATUS_PNG_ERROR;
		}
	}
	cairo_surface_finish(s);
	if (st == CAIRO_STATUS_SUCCESS)
		st = cairo_surface_status(s);
	if (st == CAIRO_STATUS_NO_MEMORY)
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
	else if (st == CAIRO_STATUS_WRITE_ERROR)
		rc = bc_err_set(err, BC_EIO, "%s: cannot write the figure: %s", path, strerror(errno ? errno : EIO));
	else if (st != CAIRO_STATUS_SUCCESS)
		rc = bc_err_set(err, BC_ERROR, "%s: drawing the figure: %s", path, cairo_status_to_string(st));
	if (fclose(f) != 0 && rc == BC_OK)
		rc = bc_err_set(err, BC_EIO, "%s: cannot write the figure: %s", path, strerror(errno));
	f = NULL;
	if (rc != BC_OK)
		remove(path);
done:
	if (f)
		fclose(f);
	if (cr)
		cairo_destroy(cr);
	if (s)
		cairo_surface_destroy(s);
	bc__buf_free(&png);
	return rc;
}

/* The two figures differ only in their layout: each entry point names its
 * data and layout; measuring, rendering and clean-up are shared here. */
typedef int (*plot_layout_fn)(plot *p, cairo_t *cr, const void *items, size_t n, const bc_chart *chart,
			      const bc_plot_options *opt, bc_err *err);

static int plot_file(const char *path, plot_layout_fn layout, const void *items, size_t n, const bc_chart *chart,
		     const bc_plot_options *opt, bc_err *err)
{
	plot p;
	bc_plot_format fmt;
	cairo_surface_t *s = NULL;
	int rc = bc_plot_format_from_path(&fmt, path, err);
	if (rc != BC_OK)
		return rc;
	/* measure on a scratch surface with the same font options */
	cairo_t *cr = plot_measure_cr(&s);
	rc = layout(&p, cr, items, n, chart, opt, err);
	cairo_destroy(cr);
	cairo_surface_destroy(s);
	if (rc == BC_OK)
		rc = plot_render(&p, path, fmt, err);
	plot_free(&p);
	return rc;
}

static int layout_shift(plot *p, cairo_t *cr, const void *items, size_t n, const bc_chart *chart,
			const bc_plot_options *opt, bc_err *err)
{
	return plot_layout(p, cr, items, n, chart, opt, err);
}

static int layout_ranges(plot *p, cairo_t *cr, const void *items, size_t n, const bc_chart *chart,
			 const bc_plot_options *opt, bc_err *err)
{
	return plot_layout_ranges(p, cr, items, n, chart, opt, err);
}

int bc_plot_shift(const char *path, const bc_plot_bin *bins, size_t n, const bc_chart *chart,
		  const bc_plot_options *opt, bc_err *err)
{
	return plot_file(path, layout_shift, bins, n, chart, opt, err);
}

int bc_plot_ranges(const char *path, const bc_plot_taxon_range *taxa, size_t n, const bc_chart *chart,
		   const bc_plot_options *opt, bc_err *err)
{
	return plot_file(path, layout_ranges, taxa, n, chart, opt, err);
}

void bc_plot_cleanup(void)
{
	cairo_debug_reset_static_data();
	/* fontconfig is loaded by cairo; the library does not link it directly */
	void *sym = dlsym(RTLD_DEFAULT, "FcFini");
	void (*fini)(void) = NULL;
	memcpy(&fini, &sym, sizeof fini);
	if (fini)
		fini();
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
