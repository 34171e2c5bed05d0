/*
 * cmd_ranges.c - bathychron ranges DB [options]: per taxon, its range in
 * each depth zone, how the shallow range ends against the deep one, and
 * confidence limits on range ends; optionally the figure. Thin: the work
 * is bc_ranges_compute, bc_ranges_write and bc_ranges_plot.
 */
#include "cli.h"

#include <errno.h>
#include <stdio.h>
#include <string.h>

static const char help_head[] =
	"usage: bathychron ranges DB [selection] [--timescale NAME] [zoning] [--rank R]\n"
	"                            [--level L] [--draws N [--seed S] [--threads T]\n"
	"                            [--resample WHAT]] [--format F] [-o FILE] [--methods]\n"
	"                            [--figure FILE.svg|.pdf|.png [--width MM] [--older-right]\n"
	"                             [--title TEXT] [--caption TEXT] [--dpi N]]\n"
	"\n"
	"Per taxon at rank R, its stratigraphic range in each depth zone: counts,\n"
	"references, localities and horizons; the first and last occurrence as age\n"
	"bounds with their chart intervals; a confidence limit on each range end from\n"
	"the number of horizons (Strauss & Sadler 1989, Marshall 1990); and whether the\n"
	"shallow range ends before the deep one begins (ends_before), within it\n"
	"(overlaps) or after it (outlasts), with every relation the age bounds allow.\n"
	"retreat_supported says whether an end of the shallow range before the deep\n"
	"one survives the confidence limit. With --draws, how often each relation\n"
	"occurs when ages (and straddling depths) are drawn within their ranges.\n"
	"Below the table: counts of taxa by relation, then the methods stamp.\n"
	"\n";

static const char help_tail[] =
	"  --timescale NAME     chart for the interval names and the figure's timescale\n"
	"                       bar (default: the database's default chart)\n"
	"Ranges:\n"
	"  --rank R             genus (default; the genus column, else the first word of\n"
	"                       scientificName), family, order or scientificName\n"
	"  --level L            confidence level of the range-end limits (default 0.95);\n"
	"                       a limit beyond the base of the eon of the oldest horizon\n"
	"                       is held there, one beyond the present at 0 (ci_capped)\n"
	"Uncertainty (resampling draws, as for shift; doc/ranges.md):\n"
	"  --draws N            N draws: each occurrence gets an age uniform within its\n"
	"                       range and, when its depth range straddles the split, a\n"
	"                       depth uniform within it; per taxon p_ends_before,\n"
	"                       p_overlaps, p_outlasts (shares of the draws with both zones)\n"
	"  --seed S             seed of every random stream (default 1)\n"
	"  --threads T          worker threads (default: one per processor); never changes results\n"
	"  --resample WHAT      age,depth (default), age or depth\n"
	"Output:\n"
	"  --format F           csv (default), tsv, md, latex, json\n"
	"  -o FILE              write the table to FILE instead of standard output\n"
	"  --methods            print a methods paragraph with references instead of the table\n"
	"  --figure FILE        also draw one row per taxon (shallow and deep bars over\n"
	"                       the timescale bar), sorted by the last shallow occurrence;\n"
	"                       SVG, PDF or PNG by extension. --width, --older-right,\n"
	"                       --title, --caption and --dpi as for 'bathychron plot'\n"
	"\n"
	"Palaeodepths are interpretations; a range end is the last find, not the last\n"
	"living population; the limits assume horizons scattered at random through the\n"
	"true range. A 'retreat' carried by one or two occurrences is weak evidence.\n"
	"Exit status: 0 table written, 1 nothing to compare, 2 usage, 3 environment.\n";

static int ranges_help(void)
{
	fputs(help_head, stdout);
	fputs(cli_shift_help_selection, stdout);
	fputs(cli_shift_help_zoning, stdout);
	fputs(help_tail, stdout);
	return CLI_OK;
}

int cmd_ranges(int argc, char **argv)
{
	cli_shift_args sa = CLI_SHIFT_ARGS_INIT;
	bc_ranges_options ro = BC_RANGES_OPTIONS_INIT;
	bc_plot_options po = BC_PLOT_OPTIONS_INIT;
	bc_format format = BC_FORMAT_CSV;
	const char *out_path = NULL, *figure = NULL;
	int figure_opts = 0, methods = 0;
	bc_err err = {0};
	for (int i = 1; i < argc; i++) {
		const char *a = argv[i];
		if (strcmp(a, "--help") == 0 || strcmp(a, "-h") == 0)
			return ranges_help();
		if (strcmp(a, "--methods") == 0) {
			methods = 1;
			continue;
		}
		if (strcmp(a, "--older-right") == 0) {
			po.older_right = 1;
			figure_opts = 1;
			continue;
		}
		int taken = cli_shift_arg("ranges", CLI_SHIFT_SELECT | CLI_SHIFT_TIMESCALE | CLI_SHIFT_ZONING | CLI_SHIFT_LEVEL | CLI_SHIFT_DRAWS,
					  argc, argv, &i, &sa);
		if (taken < 0)
			return CLI_USAGE;
		if (taken)
			continue;
		char namebuf[64];
		const char *value;
		const char *name = cli_opt_name(a, namebuf, sizeof namebuf, &value);
		if (strcmp(name, "bins") == 0 || strcmp(name, "span") == 0)
			return cli_usage("ranges", "--%s: ranges are not binned; every occurrence keeps its own age range", name);
		if (cli_shift_option_group(name) & (CLI_SHIFT_BOOTSTRAP | CLI_SHIFT_BIAS))
			return cli_usage("ranges", "--%s: a shift table option; ranges take --draws, --seed, --threads and --resample only", name);
		int known = strcmp(name, "rank") == 0 || strcmp(name, "format") == 0 || strcmp(name, "o") == 0 ||
			    strcmp(name, "output") == 0 || strcmp(name, "figure") == 0 || strcmp(name, "width") == 0 ||
			    strcmp(name, "title") == 0 || strcmp(name, "caption") == 0 || strcmp(name, "dpi") == 0;
		if (!known)
			return cli_usage("ranges", "unknown option '%s'", a);
		if (!(value = cli_opt_value("ranges", argc, argv, &i, value)))
			return CLI_USAGE;
		if (strcmp(name, "rank") == 0) {
			if (bc_ranges_option_set(&ro, "rank", value, &err) != BC_OK)
				return cli_usage("ranges", "%s", err.msg);
		} else if (strcmp(name, "format") == 0) {
			if (bc_format_parse(&format, value) != BC_OK)
				return cli_usage("ranges", "--format: '%s' is not csv, tsv, md, latex or json", value);
		} else if (strcmp(name, "o") == 0 || strcmp(name, "output") == 0) {
			out_path = value;
		} else if (strcmp(name, "figure") == 0) {
			figure = value;
		} else if (strcmp(name, "width") == 0) {
			figure_opts = 1;
			if (cli_parse_double(value, &po.width_mm) != 0 || po.width_mm < 50 || po.width_mm > 500)
				return cli_usage("ranges", "--width: '%s' is not a width between 50 and 500 mm (85 single column, 180 double)", value);
		} else if (strcmp(name, "dpi") == 0) {
			figure_opts = 1;
			if (cli_parse_double(value, &po.dpi) != 0 || po.dpi < 50 || po.dpi > 2400)
				return cli_usage("ranges", "--dpi: '%s' is not a resolution between 50 and 2400", value);
		} else if (strcmp(name, "title") == 0) {
			figure_opts = 1;
			po.title = value;
		} else {
			figure_opts = 1;
			po.caption = value;
		}
	}
	if (cli_shift_args_done("ranges", &sa) != CLI_OK)
		return CLI_USAGE;
	if (figure_opts && !figure)
		return cli_usage("ranges", "--width, --older-right, --title, --caption and --dpi need --figure FILE");
	bc_plot_format fmt;
	if (figure && bc_plot_format_from_path(&fmt, figure, &err) != BC_OK)
		return cli_usage("ranges", "%s", err.msg);
	ro.sel = sa.opts;

	bc_db *db = NULL;
	bc_ranges *r = NULL;
	FILE *f = stdout;
	int status = CLI_OK;
	if (bc_db_open(&db, sa.db_path, &err) != BC_OK)
		return cli_fail(&err);
	if (bc_ranges_compute(&r, db, &ro, &err) != BC_OK) {
		status = cli_fail(&err);
		goto done;
	}
	if (out_path && !(f = fopen(out_path, "w"))) {
		cli_error("%s: cannot write: %s", out_path, strerror(errno));
		status = CLI_ENV;
		goto done;
	}
	if ((methods ? bc_ranges_write_methods(r, f, &err) : bc_ranges_write(r, f, format, &err)) != BC_OK)
		status = cli_fail(&err);
	if (f != stdout && fclose(f) != 0 && status == CLI_OK) {
		cli_error("%s: writing failed: %s", out_path, strerror(errno));
		status = CLI_ENV;
	}
	if (status == CLI_OK && figure && bc_ranges_plot(figure, r, &po, &err) != BC_OK)
		status = cli_fail(&err);
done:
	bc_ranges_free(r);
	bc_db_close(db);
	if (figure)
		bc_plot_cleanup();
	return status;
}
