/*
 * test_plot.c - the shift figure: formats by extension, input checks,
 * and rendered files read back (PNG pixels, SVG fills) to prove the
 * timescale bar carries the chart's own colours and empty bins are gaps.
 */
#include "test.h"
#include "plot.h"
#include "internal.h"

#include <cairo.h>
#include <stdint.h>
#include <stdlib.h>
#include <unistd.h>

/* A hand-made chart: bounds and colours as in the ICS chart release
 * 2024-12 (schema:color, ischart:inMYA in ics-chart-2024-12.skos.rdf). */
static const struct {
	const char *name;
	bc_rank rank;
	double older, younger;
	unsigned colour;
} chart_rows[] = {
	{"Jurassic", BC_RANK_PERIOD, 201.4, 143.1, 0x34B2C9},
	{"Cretaceous", BC_RANK_PERIOD, 143.1, 66.0, 0x7FC64E},
	{"Paleogene", BC_RANK_PERIOD, 66.0, 23.04, 0xFD9A52},
	{"Upper Cretaceous", BC_RANK_EPOCH, 100.5, 66.0, 0xA6D84A},
	{"Paleocene", BC_RANK_EPOCH, 66.0, 56.0, 0xFDA75F},
	{"Cenomanian", BC_RANK_AGE, 100.5, 93.9, 0xB3DE53},
	{"Turonian", BC_RANK_AGE, 93.9, 89.8, 0xBFE35D},
	{"Coniacian", BC_RANK_AGE, 89.8, 85.7, 0xCCE968},
	{"Santonian", BC_RANK_AGE, 85.7, 83.6, 0xD9EF74},
	{"Campanian", BC_RANK_AGE, 83.6, 72.2, 0xE6F47F},
	{"Maastrichtian", BC_RANK_AGE, 72.2, 66.0, 0xF2FA8C},
	{"Danian", BC_RANK_AGE, 66.0, 61.66, 0xFDB462},
	{"Selandian", BC_RANK_AGE, 61.66, 59.24, 0xFEBF65},
	{"Thanetian", BC_RANK_AGE, 59.24, 56.0, 0xFDBF6F},
};
#define N_CHART (sizeof chart_rows / sizeof chart_rows[0])

static bc_chart *make_chart(void)
{
	bc_chart *c = NULL;
	if (bc_chart_new(&c, "test-chart", NULL) != 0)
		return NULL;
	for (size_t i = 0; i < N_CHART; i++) {
		bc_interval iv = {0};
		iv.name = chart_rows[i].name;
		iv.rank = chart_rows[i].rank;
		iv.parent = -1;
		iv.older_ma = chart_rows[i].older;
		iv.younger_ma = chart_rows[i].younger;
		iv.older_unc = iv.younger_unc = NAN;
		iv.has_colour = 1;
		iv.colour = chart_rows[i].colour;
		if (bc_chart_add_interval(c, &iv, NULL) < 0) {
			bc_chart_free(c);
			return NULL;
		}
	}
	return c;
}

/* Stage bins (index 5.. of chart_rows), invented counts. Coniacian (2) has
 * only straddling occurrences: no deep share, a gap. Santonian (3) has 6
 * shallow + deep: drawn hollow. Bands on the four youngest bins. */
#define N_BINS 9
static void make_bins(bc_plot_bin *b)
{
	static const double sh[N_BINS] = {30, 22, 0, 4, 40, 25, 12, 18, 20};
	static const double dp[N_BINS] = {5, 6, 0, 2, 12, 14, 10, 15, 19};
	static const double st[N_BINS] = {3, 2, 3, 1, 5, 4, 2, 3, 1};
	memset(b, 0, N_BINS * sizeof *b);
	for (size_t i = 0; i < N_BINS; i++) {
		b[i].label = chart_rows[5 + i].name;
		b[i].older_ma = chart_rows[5 + i].older;
		b[i].younger_ma = chart_rows[5 + i].younger;
		b[i].n_shallow = sh[i];
		b[i].n_deep = dp[i];
		b[i].n_straddle = st[i];
		b[i].n = sh[i] + dp[i] + st[i];
		double m = sh[i] + dp[i];
		if (m > 0) {
			b[i].has_frac = 1;
			b[i].frac = dp[i] / m;
			b[i].lo = fmax(0, b[i].frac - 1.96 * sqrt(b[i].frac * (1 - b[i].frac) / m) - 0.02);
			b[i].hi = fmin(1, b[i].frac + 1.96 * sqrt(b[i].frac * (1 - b[i].frac) / m) + 0.02);
		}
		if (i >= 5) {
			b[i].has_band = 1;
			b[i].band_mid = b[i].frac;
			b[i].band_lo = fmax(0, b[i].frac - 0.12);
			b[i].band_hi = fmin(1, b[i].frac + 0.1);
		}
	}
}

static const char *out_path(const char *name)
{
	static char buf[4][600];
	static int k;
	const char *keep = getenv("BC_PLOT_SAMPLES");
	char *b = buf[k++ % 4];
	snprintf(b, sizeof buf[0], "%s/%s", keep && *keep ? keep : test_tmpdir(), name);
	return b;
}

static const char *caption_text(void)
{
	return "Selection: all crinoid occurrences (taxonGroup Crinoidea). Binning: ICS stages, an occurrence "
	       "counted in every stage its age range overlaps. Zoning: shallow above 200 m, deep below. "
	       "Chart: test-chart (bounds and colours of ICS 2024-12).";
}

static int render(const char *path, double width_mm, int older_right, bc_err *err)
{
	bc_plot_bin bins[N_BINS];
	make_bins(bins);
	bc_chart *c = make_chart();
	bc_plot_options o = BC_PLOT_OPTIONS_INIT;
	o.width_mm = width_mm;
	o.older_right = older_right;
	o.caption = caption_text();
	int rc = c ? bc_plot_shift(path, bins, N_BINS, c, &o, err) : -1;
	bc_chart_free(c);
	return rc;
}

/* ---- pure helpers ---- */

TEST(plot_format_from_extension)
{
	bc_err err = {0};
	bc_plot_format f;
	CHECK_OK(bc_plot_format_from_path(&f, "fig.svg", &err), &err);
	CHECK_INT(f, BC_PLOT_SVG);
	CHECK_OK(bc_plot_format_from_path(&f, "out/Fig.PDF", &err), &err);
	CHECK_INT(f, BC_PLOT_PDF);
	CHECK_OK(bc_plot_format_from_path(&f, "a.b/fig.png", &err), &err);
	CHECK_INT(f, BC_PLOT_PNG);
	CHECK_INT(bc_plot_format_from_path(&f, "fig.jpg", &err), BC_EUSAGE);
	CHECK_STR(err.msg, "fig.jpg: output file: unknown figure format '.jpg'; name it .svg, .pdf or .png");
	CHECK_INT(bc_plot_format_from_path(&f, "dir.png/fig", &err), BC_EUSAGE);
	CHECK_STR(err.msg, "dir.png/fig: output file: unknown figure format (no extension); name it .svg, .pdf or .png");
}

/* WCAG 2.1 relative luminance: the black/white contrast ratios cross at
 * L = sqrt(0.0525) - 0.05 = 0.179, between grey 0x75 (L 0.178) and 0x76 (L 0.181). */
TEST(plot_text_colour_by_luminance)
{
	CHECK(bc_plot__dark_text(0xFFFFFF));
	CHECK(bc_plot__dark_text(0xF2FA8C)); /* Maastrichtian yellow */
	CHECK(bc_plot__dark_text(0x767676));
	CHECK(!bc_plot__dark_text(0x757575));
	CHECK(!bc_plot__dark_text(0x0000FF)); /* L = 0.0722 */
	CHECK(!bc_plot__dark_text(0x000000));
}

TEST(plot_abbreviations)
{
	char b[64];
	bc_plot__abbreviate("Maastrichtian", 20, b, sizeof b);
	CHECK_STR(b, "Maastrichtian");
	bc_plot__abbreviate("Maastrichtian", 6, b, sizeof b);
	CHECK_STR(b, "Maas.");
	bc_plot__abbreviate("Maastrichtian", 4, b, sizeof b);
	CHECK_STR(b, "Maa");
	bc_plot__abbreviate("Maastrichtian", 2, b, sizeof b);
	CHECK_STR(b, "");
	bc_plot__abbreviate("Upper Cretaceous", 13, b, sizeof b);
	CHECK_STR(b, "U. Cretaceous");
	bc_plot__abbreviate("Upper Cretaceous", 12, b, sizeof b);
	CHECK_STR(b, "U. Cret.");
	bc_plot__abbreviate("Upper Cretaceous", 7, b, sizeof b);
	CHECK_STR(b, "");
	bc_plot__abbreviate("Ypresian", 4, b, sizeof b);
	CHECK_STR(b, "Ypr");
}

/* ---- input checks ---- */

TEST(plot_rejects_bad_input)
{
	bc_err err = {0};
	bc_plot_bin bins[N_BINS];
	const char *p = out_path("bad.svg");
	make_bins(bins);
	bins[1].older_ma = 80;
	CHECK_INT(bc_plot_shift(p, bins, N_BINS, NULL, NULL, &err), BC_EINVALID);
	CHECK_STR(err.msg, "plot: bin 2 (Turonian): older_ma 80 must be older than younger_ma 89.8");
	make_bins(bins);
	bins[0].frac = 1.5;
	CHECK_INT(bc_plot_shift(p, bins, N_BINS, NULL, NULL, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "bin 1 (Cenomanian): frac_deep 1.5") != NULL);
	make_bins(bins);
	bins[4].n_deep = -1;
	CHECK_INT(bc_plot_shift(p, bins, N_BINS, NULL, NULL, &err), BC_EINVALID);
	CHECK_STR(err.msg, "plot: bin 5 (Campanian): n_deep is -1, not a count");
	CHECK_INT(bc_plot_shift(p, bins, 0, NULL, NULL, &err), BC_EINVALID);
	make_bins(bins);
	bc_plot_options o = BC_PLOT_OPTIONS_INIT;
	o.width_mm = 10;
	CHECK_INT(bc_plot_shift(p, bins, N_BINS, NULL, &o, &err), BC_EUSAGE);
	CHECK(access(p, F_OK) != 0); /* nothing written on refusal */
	char gif[600];
	snprintf(gif, sizeof gif, "%s", out_path("fig.gif"));
	CHECK_INT(bc_plot_shift(gif, bins, N_BINS, NULL, NULL, &err), BC_EUSAGE);
	CHECK(access(gif, F_OK) != 0);
	CHECK_INT(bc_plot_shift("/nonexistent-dir/fig.png", bins, N_BINS, NULL, NULL, &err), BC_EIO);
	CHECK(strstr(err.msg, "/nonexistent-dir/fig.png: cannot write the figure:") == err.msg);
}

/* ---- layout ---- */

TEST(plot_layout_ranks_and_direction)
{
	bc_err err = {0};
	bc_plot_bin bins[N_BINS];
	make_bins(bins);
	bc_chart *c = make_chart();
	CHECK(c != NULL);
	bc_plot__geom g;
	bc_plot_options o = BC_PLOT_OPTIONS_INIT;
	int rc = bc_plot__layout(&g, bins, N_BINS, c, &o, &err);
	if (rc == 0) {
		/* stage bins: stage row under a period row; older on the left */
		CHECK_INT(g.fine_rank, BC_RANK_AGE);
		CHECK_INT(g.coarse_rank, BC_RANK_PERIOD);
		CHECK(g.fine_row.h > 0 && g.coarse_row.h > 0);
		CHECK(g.coarse_row.y < g.fine_row.y);
		CHECK(g.fine_row.y > g.main.y + g.main.h);
		CHECK_NEAR(g.ma_hi, 100.5, 1e-12);
		CHECK_NEAR(g.ma_lo, 56.0, 1e-12);
		CHECK(bc_plot__x(&g, 100.5) < bc_plot__x(&g, 56.0));
		CHECK_NEAR(g.width, 85.0 * 72 / 25.4, 1e-9);
		o.older_right = 1;
		rc = bc_plot__layout(&g, bins, N_BINS, c, &o, &err);
	}
	if (rc == 0) {
		CHECK(bc_plot__x(&g, 100.5) > bc_plot__x(&g, 56.0));
		/* two epoch-wide bins: the epoch row, with periods above */
		bc_plot_bin two[2] = {{.older_ma = 100.5, .younger_ma = 66.0, .n = 3}, {.older_ma = 66.0, .younger_ma = 56.0, .n = 2}};
		o.older_right = 0;
		rc = bc_plot__layout(&g, two, 2, c, &o, &err);
	}
	if (rc == 0) {
		CHECK_INT(g.fine_rank, BC_RANK_EPOCH);
		CHECK_INT(g.coarse_rank, BC_RANK_PERIOD);
	}
	bc_chart_free(c);
	CHECK_OK(rc, &err);
}

/* ---- rendered files ---- */

static int png_pixel(cairo_surface_t *s, int x, int y)
{
	int w = cairo_image_surface_get_width(s), h = cairo_image_surface_get_height(s);
	if (x < 0 || y < 0 || x >= w || y >= h)
		return -1;
	const unsigned char *row = cairo_image_surface_get_data(s) + (size_t)y * (size_t)cairo_image_surface_get_stride(s);
	uint32_t px;
	memcpy(&px, row + 4 * (size_t)x, 4);
	return (int)(px & 0xFFFFFFu);
}

/* Pixels of exactly `rgb` in the box (points) scaled by k. */
static long png_count(cairo_surface_t *s, const bc_plot__box *b, double k, unsigned rgb)
{
	long n = 0;
	for (int y = (int)(b->y * k); y < (int)((b->y + b->h) * k); y++)
		for (int x = (int)(b->x * k); x < (int)((b->x + b->w) * k); x++)
			n += png_pixel(s, x, y) == (int)rgb;
	return n;
}

static int be32(const unsigned char *p)
{
	return (int)((uint32_t)p[0] << 24 | (uint32_t)p[1] << 16 | (uint32_t)p[2] << 8 | p[3]);
}

static void check_png(double width_mm, int older_right)
{
	bc_err err = {0};
	char name[64];
	snprintf(name, sizeof name, "shift-%gmm%s.png", width_mm, older_right ? "-older-right" : "");
	const char *p = out_path(name);
	CHECK_OK(render(p, width_mm, older_right, &err), &err);

	/* signature, IHDR size at 300 dpi, pHYs 11811 px/m (PNG spec 11.3.5.3) */
	char *raw = NULL;
	size_t len = 0;
	CHECK_OK(bc__read_file(p, &raw, &len, &err), &err);
	const unsigned char *u = (const unsigned char *)raw;
	int sig_ok = len > 70 && memcmp(u, "\x89PNG\r\n\x1a\n", 8) == 0 && memcmp(u + 12, "IHDR", 4) == 0;
	int w = sig_ok ? be32(u + 16) : 0, h = sig_ok ? be32(u + 20) : 0;
	int phys = sig_ok && memcmp(u + 37, "pHYs", 4) == 0 ? be32(u + 41) : 0;
	free(raw);
	CHECK(sig_ok);
	CHECK_INT(w, (int)ceil(width_mm / 25.4 * 300));
	CHECK(h > w / 2 && h < 3 * w);
	CHECK_INT(phys, 11811);

	bc_plot_bin bins[N_BINS];
	make_bins(bins);
	bc_chart *c = make_chart();
	bc_plot_options o = BC_PLOT_OPTIONS_INIT;
	o.width_mm = width_mm;
	o.older_right = older_right;
	o.caption = caption_text();
	bc_plot__geom g;
	int rc = bc_plot__layout(&g, bins, N_BINS, c, &o, &err);
	bc_chart_free(c);
	CHECK_OK(rc, &err);

	cairo_surface_t *s = cairo_image_surface_create_from_png(p);
	CHECK(cairo_surface_status(s) == CAIRO_STATUS_SUCCESS);
	CHECK_INT(cairo_image_surface_get_width(s), w);
	const double k = 300.0 / 72.0;
	long found[N_CHART];
	for (size_t i = 0; i < N_CHART; i++) {
		const bc_plot__box *row = chart_rows[i].rank == BC_RANK_AGE ? &g.fine_row : &g.coarse_row;
		found[i] = png_count(s, row, k, chart_rows[i].colour);
	}
	bc_plot__box page = {0, 0, g.width, g.height};
	long jurassic = png_count(s, &page, k, 0x34B2C9);
	long epoch = png_count(s, &page, k, 0xA6D84A);

	/* the empty Coniacian bin is a gap; its neighbours are not */
	bc_plot__box gap = {bc_plot__x(&g, (89.8 + 85.7) / 2) - 1, g.main.y, 2, g.main.h};
	bc_plot__box full = {bc_plot__x(&g, (93.9 + 89.8) / 2) - 1, g.main.y, 2, g.main.h};
	long gap_blue = png_count(s, &gap, k, 0x0072B2), full_blue = png_count(s, &full, k, 0x0072B2);
	/* Santonian (6 of 10 needed) hollow, Campanian filled: pixel at the point's centre */
	double ys = g.main.y + (1 - bins[3].frac) * g.main.h, yc = g.main.y + (1 - bins[4].frac) * g.main.h;
	int santonian = png_pixel(s, (int)(bc_plot__x(&g, (85.7 + 83.6) / 2) * k), (int)(ys * k));
	int campanian = png_pixel(s, (int)(bc_plot__x(&g, (83.6 + 72.2) / 2) * k), (int)(yc * k));
	cairo_surface_destroy(s);

	for (size_t i = 0; i < N_CHART; i++) {
		if (chart_rows[i].rank == BC_RANK_EPOCH || strcmp(chart_rows[i].name, "Jurassic") == 0)
			continue;
		CHECK_MSG(found[i] > 200, "%s: %ld pixels of #%06X in its timescale row", chart_rows[i].name, found[i], chart_rows[i].colour);
	}
	CHECK_INT(jurassic, 0); /* out of view */
	CHECK_INT(epoch, 0);    /* epochs are not drawn for stage bins */
	CHECK_INT(gap_blue, 0);
	CHECK(full_blue > 20);
	CHECK_INT(santonian, 0xFFFFFF);
	CHECK_INT(campanian, 0x0072B2);
}

TEST(plot_png_single_column)
{
	check_png(85, 0);
}

TEST(plot_png_double_column)
{
	check_png(180, 0);
}

TEST(plot_png_older_right)
{
	check_png(85, 1);
}

/* cairo writes SVG colours as rgb(R%, G%, B%); collect them as 0xRRGGBB. */
static size_t svg_colours(const char *text, unsigned *out, size_t max)
{
	size_t n = 0;
	for (const char *p = text; (p = strstr(p, "rgb(")) != NULL && n < max; p += 4) {
		double v[3];
		int pct = 0;
		if (sscanf(p, "rgb(%lf%%, %lf%%, %lf%%)", &v[0], &v[1], &v[2]) == 3)
			pct = 1;
		else if (sscanf(p, "rgb(%lf, %lf, %lf)", &v[0], &v[1], &v[2]) != 3)
			continue;
		unsigned c = 0;
		for (int i = 0; i < 3; i++)
			c = c << 8 | (unsigned)lround(pct ? v[i] * 2.55 : v[i]);
		out[n++] = c;
	}
	return n;
}

TEST(plot_svg_has_chart_colours)
{
	bc_err err = {0};
	const char *p = out_path("shift-85mm.svg");
	CHECK_OK(render(p, 85, 0, &err), &err);
	char *text = NULL;
	CHECK_OK(bc__read_file(p, &text, NULL, &err), &err);
	static unsigned cols[20000];
	size_t n = svg_colours(text, cols, sizeof cols / sizeof cols[0]);
	int is_svg = strstr(text, "<svg") != NULL && strstr(text, "</svg>") != NULL && strstr(text, "width=\"240.94") != NULL;
	free(text);
	CHECK(is_svg);
	for (size_t i = 0; i < N_CHART; i++) {
		int seen = 0;
		for (size_t j = 0; j < n; j++)
			seen |= cols[j] == chart_rows[i].colour;
		int want = chart_rows[i].rank != BC_RANK_EPOCH && strcmp(chart_rows[i].name, "Jurassic") != 0;
		CHECK_MSG(seen == want, "%s #%06X %s in the SVG", chart_rows[i].name, chart_rows[i].colour, seen ? "found" : "not found");
	}
}

TEST(plot_pdf_written)
{
	bc_err err = {0};
	const char *p = out_path("shift-180mm.pdf");
	CHECK_OK(render(p, 180, 0, &err), &err);
	char *text = NULL;
	size_t len = 0;
	CHECK_OK(bc__read_file(p, &text, &len, &err), &err);
	int ok = len > 1000 && memcmp(text, "%PDF-", 5) == 0 && strstr(text + len - 32, "%%EOF") != NULL;
	free(text);
	CHECK(ok);
}

/* Also leaves the 180 mm SVG and the 85 mm PDF beside the others, for
 * tests/external/test_plot_files.sh (run with BC_PLOT_SAMPLES=DIR). */
TEST(plot_samples_other_formats)
{
	bc_err err = {0};
	const char *svg = out_path("shift-180mm.svg"), *pdf = out_path("shift-85mm.pdf");
	CHECK_OK(render(svg, 180, 0, &err), &err);
	CHECK_OK(render(pdf, 85, 0, &err), &err);
	CHECK(access(svg, R_OK) == 0);
	CHECK(access(pdf, R_OK) == 0);
}

/* No chart, a lone bin, every bin empty: still a figure, no timescale
 * bar, and nothing drawn as a zero. */
TEST(plot_sparse_inputs)
{
	bc_err err = {0};
	bc_plot_bin one = {.label = "lone", .older_ma = 72.2, .younger_ma = 66.0, .n = 4, .n_shallow = 3, .n_deep = 1,
			   .has_frac = 1, .frac = 0.25, .lo = 0.05, .hi = 0.7};
	CHECK_OK(bc_plot_shift(out_path("lone.svg"), &one, 1, NULL, NULL, &err), &err);
	bc_plot__geom g;
	CHECK_OK(bc_plot__layout(&g, &one, 1, NULL, NULL, &err), &err);
	CHECK(g.fine_row.h == 0 && g.coarse_row.h == 0);
	bc_plot_bin empty[2] = {{.older_ma = 80, .younger_ma = 70, .n = 2, .n_straddle = 2}, {.older_ma = 70, .younger_ma = 60}};
	const char *p = out_path("empty.png");
	CHECK_OK(bc_plot_shift(p, empty, 2, NULL, NULL, &err), &err);
	CHECK_OK(bc_plot__layout(&g, empty, 2, NULL, NULL, &err), &err);
	cairo_surface_t *s = cairo_image_surface_create_from_png(p);
	CHECK(cairo_surface_status(s) == CAIRO_STATUS_SUCCESS);
	long blue = png_count(s, &g.main, 300.0 / 72.0, 0x0072B2);
	cairo_surface_destroy(s);
	CHECK_INT(blue, 0);
}

/* Every allocation of ours that can fail gives BC_ENOMEM or success,
 * never a crash or a leak (the sanitizer build checks the leaks). */
TEST(plot_out_of_memory)
{
	bc_plot_bin bins[N_BINS];
	make_bins(bins);
	bc_chart *c = make_chart();
	CHECK(c != NULL);
	bc_plot_options o = BC_PLOT_OPTIONS_INIT;
	o.caption = caption_text();
	const char *p = out_path("oom.pdf");
	int failures = 0, bad = 0;
	for (long k = 1; k < 400; k++) {
		bc_err err = {0};
		bc__alloc_fail_after(k);
		int rc = bc_plot_shift(p, bins, N_BINS, c, &o, &err);
		bc__alloc_fail_after(0);
		if (rc == BC_ENOMEM)
			failures++;
		else if (rc != 0)
			bad = rc;
		if (rc == 0)
			break;
	}
	bc_chart_free(c);
	CHECK_INT(bad, 0);
	CHECK(failures > 5);
}

/* Runs last (tests run in file order): frees cairo's and fontconfig's
 * font caches so the sanitizer build reports no leaks; a second figure
 * after the clean-up must still draw. */
TEST(plot_zz_cleanup)
{
	bc_err err = {0};
	bc_plot_cleanup();
	CHECK_OK(render(out_path("after-cleanup.png"), 85, 0, &err), &err);
	bc_plot_cleanup();
}
