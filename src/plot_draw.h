/*
 * plot_draw.h - private to the figure files (plot.c, plot_shift.c,
 * plot_ranges.c): the figure being drawn, its sizes and colours, and the
 * drawing helpers they share. Includes cairo.h: only files with cairo
 * include it (src/ranges.c and the tests use plot.h).
 */
#ifndef BC_PLOT_DRAW_H
#define BC_PLOT_DRAW_H

#include "plot.h"

#include <cairo.h>

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

/** Wrapped lines of text; each line and the array are owned (bc_plot__free). */
typedef struct bc_plot__lines {
	char **s;
	size_t n, cap;
} bc_plot__lines;

/** A figure being laid out and drawn: its data (bins or taxa), options, geometry and wrapped texts. */
typedef struct bc_plot__fig {
	const bc_plot_bin *bins;
	size_t n;
	size_t *order;          /* bin indices, oldest first */
	const bc_chart *chart;
	bc_plot_options o;
	bc_plot__geom g;
	int any_frac, any_few, any_band;
	double count_top;       /* top of the counts axis */
	double x_step;          /* time tick step, Myr */
	bc_plot__lines title, ylab, caption;
	char *caption_text;
	double left_labels_w;   /* y tick label column width */
	const bc_plot_taxon_range *taxa; /* the ranges figure (bc_plot_ranges); NULL for the shift figure */
	size_t ntaxa;
	size_t *torder;         /* taxa in drawing order, top first */
	double row_h;           /* height of one taxon's row */
	double count_w;         /* the right column of counts */
} bc_plot__fig;

/** Lays out one figure from `items` (bins or taxa); `cr` only measures. */
typedef int (*bc_plot__layout_fn)(bc_plot__fig *p, cairo_t *cr, const void *items, size_t n, const bc_chart *chart,
				  const bc_plot_options *opt, bc_err *err);

/* ---- drawing helpers (plot.c) ---- */

/** Sets the source colour 0xRRGGBB. */
void bc_plot__rgb(cairo_t *cr, unsigned rgb);

/** `rgb` laid over white at opacity `a`, as an opaque colour. */
unsigned bc_plot__tint(unsigned rgb, double a);

/** Selects the figure's font at `size` points, bold when `bold`. */
void bc_plot__font(cairo_t *cr, double size, int bold);

/** Advance width of `s` in the current font, points. */
double bc_plot__text_w(cairo_t *cr, const char *s);

/** Draws `s` with its baseline at y; align 0 left, 0.5 centre, 1 right. */
void bc_plot__text(cairo_t *cr, double x, double y, double align, const char *s);

/** Greedy word wrap of `text` to `maxw` points, appended to `out`. 0 or BC_ENOMEM. */
int bc_plot__wrap(cairo_t *cr, const char *text, double maxw, bc_plot__lines *out);

/** Copies the first `k` UTF-8 characters of `s` into buf. */
void bc_plot__utf8_prefix(const char *s, size_t k, char *buf, size_t cap);

/** Number of UTF-8 characters in `s`. */
size_t bc_plot__utf8_len(const char *s);

/** Formats `v` with as many decimals as the tick step `step` needs. */
void bc_plot__fmt_num(char *buf, size_t cap, double v, double step);

/** The timescale bar's row title for rank `r` ("Stage", "Period", ...). */
const char *bc_plot__rank_title(bc_rank r);

/** A data point, filled or hollow. */
void bc_plot__point(cairo_t *cr, double x, double y, int hollow);

/** A vertical interval bar from y0 to y1 with caps `cap` wide on each side. */
void bc_plot__errbar(cairo_t *cr, double x, double y0, double y1, double cap);

/** Strokes the current path dashed in `colour`. */
void bc_plot__dashed(cairo_t *cr, unsigned colour);

/** Flows the legend across [x, x + w] from `y`; returns the height used. Draws only when `draw`. */
double bc_plot__legend(cairo_t *cr, const bc_plot__fig *p, double x, double y, double w, int draw);

/* ---- layout shared by both figures (plot.c) ---- */

/** Frees what a layout allocated in `p`. */
void bc_plot__free(bc_plot__fig *p);

/** Clears `p` and takes the options both figures share. */
int bc_plot__begin(bc_plot__fig *p, const bc_plot_options *opt, const bc_chart *chart, bc_err *err);

/** Sets p->x_step: time ticks whose labels clear each other. */
void bc_plot__time_ticks(bc_plot__fig *p, cairo_t *cr);

/** Wraps the title and moves `*y` below it. 0 or BC_ENOMEM. */
int bc_plot__title_layout(bc_plot__fig *p, cairo_t *cr, double *y);

/** Lays out the timescale bar and caption below the time axis at `y`; sets the page height. */
int bc_plot__bottom_layout(bc_plot__fig *p, cairo_t *cr, double y, double left, bc_err *err);

/** Lays out with `layout`, then draws the figure into `path` in the format its extension names. */
int bc_plot__file(const char *path, bc_plot__layout_fn layout, const void *items, size_t n, const bc_chart *chart,
		  const bc_plot_options *opt, bc_err *err);

/* ---- each figure's panels, called by the shared drawing (plot.c) ---- */

/** The shift figure's bar panel of counts per bin (plot_shift.c). */
void bc_plot__counts_panel(cairo_t *cr, const bc_plot__fig *p);

/** The shift figure's deep share panel: grid, band, line, intervals, points, axes (plot_shift.c). */
void bc_plot__main_panel(cairo_t *cr, const bc_plot__fig *p);

/** The ranges figure's panel: one row of bars per taxon (plot_ranges.c). */
void bc_plot__ranges_panel(cairo_t *cr, const bc_plot__fig *p);

#endif
