/*
 * plot.h - private geometry of the shift figure, so unit tests can find
 * the panels and the timescale bar in a rendered image. The drawing
 * internals the figure files share are in plot_draw.h (it includes cairo.h).
 */
#ifndef BC_PLOT_H
#define BC_PLOT_H

#include "bathychron.h"
#include "internal.h"

/** A rectangle in points (1/72 inch) from the page's top left. */
typedef struct bc_plot__box {
	double x, y, w, h;
} bc_plot__box;

/** Where everything goes; all lengths in points. */
typedef struct bc_plot__geom {
	double width, height;     /* the page */
	bc_plot__box counts;      /* bar panel of counts per bin */
	bc_plot__box main;        /* deep share panel */
	bc_plot__box coarse_row;  /* timescale bar, coarser rank (h 0 when not drawn) */
	bc_plot__box fine_row;    /* timescale bar, the bins' rank (h 0 when not drawn) */
	bc_rank fine_rank, coarse_rank;
	double ma_lo, ma_hi;      /* time axis range, Ma */
	int older_right;
} bc_plot__geom;

/** Lays the figure out exactly as bc_plot_shift() would draw it. */
int bc_plot__layout(bc_plot__geom *out, const bc_plot_bin *bins, size_t n, const bc_chart *chart,
		    const bc_plot_options *opt, bc_err *err);

/** Horizontal page position (points) of the age `ma`. */
double bc_plot__x(const bc_plot__geom *g, double ma);

/** 1 when black text reads better than white on colour 0xRRGGBB (WCAG 2.1 relative luminance). */
int bc_plot__dark_text(unsigned rgb);

/**
 * Writes into `buf` (size `cap`) the first of the name's candidate labels
 * (full name, "E. Cretaceous", "E. Cret.", "Maas.", "Maa") of at most
 * `max_chars` characters, or "" when none is that short. The drawing uses
 * the same candidates with measured widths instead of a character budget.
 */
void bc_plot__abbreviate(const char *name, size_t max_chars, char *buf, size_t cap);

/**
 * Appends the selection of `o` in words ("group crinoids, taxon Aus"; "all
 * occurrences" when none), as captions and stamps name it. 0 or BC_ENOMEM.
 */
int bc_plot__selection_words(bc_buf *b, const bc_shift_options *o);

/** Appends the zoning of `o` in words ("shallow above 200 m, deep at or below 200 m"). */
int bc_plot__zoning_words(bc_buf *b, const bc_shift_options *o);

#endif
