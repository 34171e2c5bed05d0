/*
 * plot.c - what the figures share: drawing helpers, the timescale bar, the
 * legend, the page layout (title, time axis, caption) and the output of a
 * laid-out figure to SVG, PDF or PNG through cairo. The figures themselves
 * are plot_shift.c and plot_ranges.c.
 */
#include "internal.h"
#include "plot_draw.h"

#include <cairo-pdf.h>
#include <cairo-svg.h>
#include <dlfcn.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#define CAVEAT "Palaeodepths are interpretations of the sources; a change in the deep share can be an artefact " \
	"of sampling, age uncertainty or transport of loose ossicles."

/* ---- small helpers ---------------------------------------------------- */

void bc_plot__rgb(cairo_t *cr, unsigned rgb)
{
	cairo_set_source_rgb(cr, ((rgb >> 16) & 0xff) / 255.0, ((rgb >> 8) & 0xff) / 255.0, (rgb & 0xff) / 255.0);
}

/* `rgb` laid over white at opacity `a`, as an opaque colour (no
 * transparency in the files: some journal preflight checks reject it). */
unsigned bc_plot__tint(unsigned rgb, double a)
{
	unsigned out = 0;
	for (int shift = 16; shift >= 0; shift -= 8) {
		double c = ((rgb >> shift) & 0xff) * a + 255.0 * (1.0 - a);
		out |= (unsigned)lround(c) << shift;
	}
	return out;
}

void bc_plot__font(cairo_t *cr, double size, int bold)
{
	cairo_select_font_face(cr, FONT, CAIRO_FONT_SLANT_NORMAL, bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
	cairo_set_font_size(cr, size);
}

double bc_plot__text_w(cairo_t *cr, const char *s)
{
	cairo_text_extents_t e;
	cairo_text_extents(cr, s, &e);
	return e.x_advance;
}

/* Draws `s` with its baseline at y; align 0 left, 0.5 centre, 1 right. */
void bc_plot__text(cairo_t *cr, double x, double y, double align, const char *s)
{
	cairo_move_to(cr, x - align * bc_plot__text_w(cr, s), y);
	cairo_show_text(cr, s);
}

static void plot_lines_free(bc_plot__lines *l)
{
	for (size_t i = 0; i < l->n; i++)
		free(l->s[i]);
	free(l->s);
	memset(l, 0, sizeof *l);
}

static int plot_lines_push(bc_plot__lines *l, const char *s, size_t len)
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
int bc_plot__wrap(cairo_t *cr, const char *text, double maxw, bc_plot__lines *out)
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
		if (rc == BC_OK && keep && bc_plot__text_w(cr, line.data) > maxw) {
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
void bc_plot__utf8_prefix(const char *s, size_t k, char *buf, size_t cap)
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

size_t bc_plot__utf8_len(const char *s)
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
			bc_plot__utf8_prefix(w, 1, c, sizeof c);
			pl += (size_t)snprintf(pre + pl, sizeof pre - pl, "%s. ", c);
			w += strcspn(w, " ");
		}
		if (k == 1) {
			snprintf(buf, cap, "%s%s", pre, last);
			return 1;
		}
		if (k == 2 && bc_plot__utf8_len(last) > 5) {
			char c[64];
			bc_plot__utf8_prefix(last, 4, c, sizeof c);
			snprintf(buf, cap, "%s%s.", pre, c);
			return 1;
		}
		return 0;
	}
	size_t len = bc_plot__utf8_len(name);
	if (k == 1 && len > 5) {
		char c[64];
		bc_plot__utf8_prefix(name, 4, c, sizeof c);
		snprintf(buf, cap, "%s.", c);
		return 1;
	}
	if (k == 2 && len > 3) {
		bc_plot__utf8_prefix(name, 3, buf, cap);
		return 1;
	}
	return 0;
}

void bc_plot__abbreviate(const char *name, size_t max_chars, char *buf, size_t cap)
{
	for (int k = 0; k < 3; k++)
		if (plot_abbrev(name, k, buf, cap) && bc_plot__utf8_len(buf) <= max_chars)
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

void bc_plot__fmt_num(char *buf, size_t cap, double v, double step)
{
	int dec = 0;
	while (dec < 6 && fabs(step * pow(10, dec) - round(step * pow(10, dec))) > 1e-6)
		dec++;
	snprintf(buf, cap, "%.*f", dec, fabs(v) < step * 1e-9 ? 0.0 : v);
}

/* ---- input checks ------------------------------------------------------ */

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
static bc_rank plot_guess_rank(const bc_plot__fig *p)
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

const char *bc_plot__rank_title(bc_rank r)
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
static void plot_bar_row(cairo_t *cr, const bc_plot__fig *p, bc_plot__box row, bc_rank rank)
{
	const bc_plot__geom *g = &p->g;
	bc_plot__font(cr, SIZE_SMALL, 0);
	for (size_t i = 0; i < bc_chart_count(p->chart); i++) {
		const bc_interval *iv = bc_chart_interval(p->chart, i);
		if (iv->rank != rank || !plot_in_view(g, iv))
			continue;
		double a = bc_plot__x(g, fmin(iv->older_ma, g->ma_hi)), b = bc_plot__x(g, fmax(iv->younger_ma, g->ma_lo));
		double x0 = fmin(a, b), w = fabs(b - a);
		unsigned fill = iv->has_colour ? iv->colour : 0xFFFFFFu;
		cairo_rectangle(cr, x0, row.y, w, row.h);
		bc_plot__rgb(cr, fill);
		/* cells narrower than four outlines keep only their fill: a row of
		 * hairline cells would otherwise print as a solid dark block */
		if (w >= 4 * LINE_AXIS) {
			cairo_fill_preserve(cr);
			bc_plot__rgb(cr, GREY_OUTLINE);
			cairo_set_line_width(cr, LINE_AXIS);
			cairo_stroke(cr);
		} else
			cairo_fill(cr);
		char label[160];
		for (int k = 0; plot_abbrev(iv->name, k, label, sizeof label); k++) {
			if (bc_plot__text_w(cr, label) <= w - 2.0) {
				bc_plot__rgb(cr, bc_plot__dark_text(fill) ? 0x000000u : 0xFFFFFFu);
				bc_plot__text(cr, x0 + w / 2, row.y + row.h / 2 + SIZE_SMALL * 0.36, 0.5, label);
				break;
			}
		}
	}
	cairo_rectangle(cr, row.x, row.y, row.w, row.h);
	bc_plot__rgb(cr, GREY_OUTLINE);
	cairo_set_line_width(cr, LINE_AXIS);
	cairo_stroke(cr);
	bc_plot__rgb(cr, 0x000000u);
	bc_plot__text(cr, g->main.x - 3.0, row.y + row.h / 2 + SIZE_SMALL * 0.36, 1.0, bc_plot__rank_title(rank));
}

/* ---- legend (measured and drawn by the same code) ---------------------- */

enum { LEG_POINT, LEG_HOLLOW, LEG_ERRBAR, LEG_BAND, LEG_SWATCH, LEG_TICK, LEG_TINT };

typedef struct plot_leg_item {
	int kind;
	unsigned colour;
	char text[96];
} plot_leg_item;

static size_t plot_legend_items(const bc_plot__fig *p, plot_leg_item *it)
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

void bc_plot__point(cairo_t *cr, double x, double y, int hollow)
{
	cairo_new_sub_path(cr);
	cairo_arc(cr, x, y, POINT_R, 0, 2 * M_PI);
	bc_plot__rgb(cr, hollow ? 0xFFFFFFu : OI_BLUE);
	cairo_fill_preserve(cr);
	bc_plot__rgb(cr, OI_BLUE);
	cairo_set_line_width(cr, LINE_DATA);
	cairo_stroke(cr);
}

void bc_plot__errbar(cairo_t *cr, double x, double y0, double y1, double cap)
{
	cairo_set_line_width(cr, LINE_ERR);
	bc_plot__rgb(cr, 0x000000u);
	cairo_move_to(cr, x, y0);
	cairo_line_to(cr, x, y1);
	cairo_move_to(cr, x - cap, y0);
	cairo_line_to(cr, x + cap, y0);
	cairo_move_to(cr, x - cap, y1);
	cairo_line_to(cr, x + cap, y1);
	cairo_stroke(cr);
}

void bc_plot__dashed(cairo_t *cr, unsigned colour)
{
	static const double dash[] = {2.0, 1.5};
	bc_plot__rgb(cr, colour);
	cairo_set_line_width(cr, LINE_ERR);
	cairo_set_dash(cr, dash, 2, 0);
	cairo_stroke(cr);
	cairo_set_dash(cr, NULL, 0, 0);
}

/* Flows the legend items into rows across [x, x + w] from `y` (top);
 * returns the height used. Draws only when `draw`. */
double bc_plot__legend(cairo_t *cr, const bc_plot__fig *p, double x, double y, double w, int draw)
{
	plot_leg_item it[8];
	size_t k = plot_legend_items(p, it);
	const double glyph = 9.0, gap = 2.0, sep = 7.0, line_h = SIZE_SMALL * 1.35;
	double cx = x, cy = y;
	bc_plot__font(cr, SIZE_SMALL, 0);
	for (size_t i = 0; i < k; i++) {
		double iw = glyph + gap + bc_plot__text_w(cr, it[i].text);
		if (cx > x && cx + iw > x + w) {
			cx = x;
			cy += line_h;
		}
		if (draw) {
			double mx = cx + glyph / 2, my = cy + line_h / 2;
			switch (it[i].kind) {
			case LEG_POINT:
			case LEG_HOLLOW:
				bc_plot__point(cr, mx, my, it[i].kind == LEG_HOLLOW);
				break;
			case LEG_ERRBAR:
				bc_plot__errbar(cr, mx, my - 3.2, my + 3.2, 1.5);
				break;
			case LEG_TINT:
				cairo_rectangle(cr, cx + 1.25, my - 2.75, glyph - 2.5, 5.5);
				bc_plot__rgb(cr, bc_plot__tint(it[i].colour, 0.35));
				cairo_fill_preserve(cr);
				bc_plot__rgb(cr, it[i].colour);
				cairo_set_line_width(cr, 0.5);
				cairo_stroke(cr);
				break;
			case LEG_TICK:
				bc_plot__rgb(cr, 0x000000u);
				cairo_set_line_width(cr, LINE_ERR);
				cairo_move_to(cr, cx + 1.0, my);
				cairo_line_to(cr, cx + glyph - 1.0, my);
				cairo_move_to(cr, cx + 1.0, my - 2.5);
				cairo_line_to(cr, cx + 1.0, my + 2.5);
				cairo_stroke(cr);
				break;
			case LEG_BAND:
				cairo_rectangle(cr, cx, my - 3.0, glyph, 6.0);
				bc_plot__rgb(cr, bc_plot__tint(OI_ORANGE, 0.4));
				cairo_fill(cr);
				cairo_move_to(cr, cx, my);
				cairo_line_to(cr, cx + glyph, my);
				bc_plot__dashed(cr, OI_VERMILLION);
				break;
			default:
				cairo_rectangle(cr, cx + 1.0, my - 3.0, glyph - 2.0, 6.0);
				bc_plot__rgb(cr, it[i].colour);
				cairo_fill(cr);
			}
			bc_plot__font(cr, SIZE_SMALL, 0);
			bc_plot__rgb(cr, 0x000000u);
			bc_plot__text(cr, cx + glyph + gap, my + SIZE_SMALL * 0.36, 0, it[i].text);
		}
		cx += iw + sep;
	}
	return cy + line_h - y;
}

/* ---- layout ------------------------------------------------------------ */

void bc_plot__free(bc_plot__fig *p)
{
	free(p->order);
	free(p->torder);
	free(p->caption_text);
	plot_lines_free(&p->title);
	plot_lines_free(&p->ylab);
	plot_lines_free(&p->caption);
}

/* Clears `p` and takes the options both figures share. */
int bc_plot__begin(bc_plot__fig *p, const bc_plot_options *opt, const bc_chart *chart, bc_err *err)
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
void bc_plot__time_ticks(bc_plot__fig *p, cairo_t *cr)
{
	const bc_plot__geom *g = &p->g;
	char buf[64];
	bc_plot__font(cr, SIZE_SMALL, 0);
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
			bc_plot__fmt_num(buf, sizeof buf, t, p->x_step);
			widest = fmax(widest, bc_plot__text_w(cr, buf));
		}
		if (p->x_step / span * g->main.w >= widest + 6.0)
			break;
		p->x_step = plot_nice_ceil(p->x_step * 1.01);
	}
}

/* The wrapped title from `*y` down. */
int bc_plot__title_layout(bc_plot__fig *p, cairo_t *cr, double *y)
{
	if (!(p->o.title && *p->o.title))
		return BC_OK;
	bc_plot__font(cr, SIZE_TITLE, 1);
	int rc = bc_plot__wrap(cr, p->o.title, p->g.width - 2 * MARGIN, &p->title);
	if (rc == BC_OK)
		*y += (double)p->title.n * SIZE_TITLE * 1.25 + 2.0;
	return rc;
}

/* The timescale bar rows and the caption below the time axis at `y`;
 * sets the page height. Shared by both figures. */
int bc_plot__bottom_layout(bc_plot__fig *p, cairo_t *cr, double y, double left, bc_err *err)
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
	bc_plot__font(cr, SIZE_SMALL, 0);
	if ((rc = bc_plot__wrap(cr, p->caption_text, W - 2 * MARGIN, &p->caption)) != BC_OK)
		goto nomem;
	if (p->caption.n)
		y += 3.0 * PT_PER_MM + (double)p->caption.n * SIZE_SMALL * 1.3;
	g->height = ceil(y + MARGIN);
	return BC_OK;
nomem:
	return bc_err_set(err, BC_ENOMEM, "out of memory");
}

/* ---- drawing ----------------------------------------------------------- */

static void plot_time_axis(cairo_t *cr, const bc_plot__fig *p)
{
	const bc_plot__geom *g = &p->g;
	double base = g->main.y + g->main.h;
	char buf[64];
	bc_plot__font(cr, SIZE_SMALL, 0);
	cairo_set_line_width(cr, LINE_AXIS);
	for (double t = ceil(g->ma_lo / p->x_step - 1e-9) * p->x_step; t <= g->ma_hi + 1e-9; t += p->x_step) {
		double x = bc_plot__x(g, t);
		bc_plot__rgb(cr, 0x000000u);
		cairo_move_to(cr, x, base);
		cairo_line_to(cr, x, base + TICK);
		cairo_stroke(cr);
		bc_plot__fmt_num(buf, sizeof buf, t, p->x_step);
		bc_plot__text(cr, x, base + TICK + 1.5 + SIZE_SMALL * 0.75, 0.5, buf);
	}
	bc_plot__font(cr, SIZE_AXIS, 0);
	bc_plot__text(cr, g->main.x + g->main.w / 2, base + TICK + 1.5 + SIZE_SMALL + 2.0 + SIZE_AXIS * 0.8, 0.5, "Age (Ma)");
}

/* Page, font options and title: the top of both figures. */
static void plot_draw_top(cairo_t *cr, const bc_plot__fig *p)
{
	const bc_plot__geom *g = &p->g;
	cairo_font_options_t *fo = cairo_font_options_create();
	cairo_font_options_set_hint_metrics(fo, CAIRO_HINT_METRICS_OFF);
	cairo_font_options_set_hint_style(fo, CAIRO_HINT_STYLE_NONE);
	cairo_set_font_options(cr, fo);
	cairo_font_options_destroy(fo);

	cairo_rectangle(cr, 0, 0, g->width, g->height);
	bc_plot__rgb(cr, 0xFFFFFFu);
	cairo_fill(cr);
	cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);

	double y = MARGIN;
	if (p->title.n) {
		bc_plot__font(cr, SIZE_TITLE, 1);
		bc_plot__rgb(cr, 0x000000u);
		for (size_t k = 0; k < p->title.n; k++)
			bc_plot__text(cr, MARGIN, y + SIZE_TITLE * 0.9 + (double)k * SIZE_TITLE * 1.25, 0, p->title.s[k]);
	}
}

/* Time axis, timescale bar and caption: the bottom of both figures. */
static void plot_draw_bottom(cairo_t *cr, const bc_plot__fig *p)
{
	const bc_plot__geom *g = &p->g;
	plot_time_axis(cr, p);
	if (g->coarse_row.h > 0)
		plot_bar_row(cr, p, g->coarse_row, g->coarse_rank);
	if (g->fine_row.h > 0)
		plot_bar_row(cr, p, g->fine_row, g->fine_rank);

	bc_plot__font(cr, SIZE_SMALL, 0);
	bc_plot__rgb(cr, 0x000000u);
	double cy = fmax(g->fine_row.y + g->fine_row.h, g->main.y + g->main.h + TICK + 1.5 + SIZE_SMALL + 2.0 + SIZE_AXIS * 1.2 + 1.0);
	cy += 3.0 * PT_PER_MM;
	for (size_t k = 0; k < p->caption.n; k++)
		bc_plot__text(cr, MARGIN, cy + SIZE_SMALL * 0.9 + (double)k * SIZE_SMALL * 1.3, 0, p->caption.s[k]);
}

static void plot_draw(cairo_t *cr, const bc_plot__fig *p)
{
	const bc_plot__geom *g = &p->g;
	plot_draw_top(cr, p);
	if (p->taxa) {
		bc_plot__legend(cr, p, g->main.x, g->main.y - 3.0 - bc_plot__legend(cr, p, g->main.x, 0, g->main.w, 0), g->main.w, 1);
		bc_plot__ranges_panel(cr, p);
	} else {
		bc_plot__legend(cr, p, g->main.x, g->counts.y - 3.0 - bc_plot__legend(cr, p, g->main.x, 0, g->main.w, 0), g->main.w, 1);
		bc_plot__counts_panel(cr, p);
		bc_plot__main_panel(cr, p);
	}
	plot_draw_bottom(cr, p);
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
static int plot_render(bc_plot__fig *p, const char *path, bc_plot_format fmt, bc_err *err)
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
int bc_plot__file(const char *path, bc_plot__layout_fn layout, const void *items, size_t n, const bc_chart *chart,
		  const bc_plot_options *opt, bc_err *err)
{
	bc_plot__fig p;
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
	bc_plot__free(&p);
	return rc;
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
