/*
 * cmd_plot.c - bathychron plot DB [shift options] -o FILE: the shift table
 * drawn as a figure. Thin: the options are shift's (shift_options.c), the
 * table comes from bc_shift_compute, the drawing from bc_plot_shift_table.
 */
#include "cli.h"

#include <stdio.h>
#include <string.h>

static const char help_head[] =
	"usage: bathychron plot DB [selection] [binning] [zoning] [uncertainty] [--level L]\n"
	"                          -o FILE.svg|FILE.pdf|FILE.png [--width MM] [--older-right]\n"
	"                          [--title TEXT] [--caption TEXT] [--dpi N]\n"
	"\n"
	"Draws the occurrence-shift table of 'bathychron shift' with the same options:\n"
	"the deep share per bin with its Wilson interval (hollow points: fewer than 10\n"
	"shallow + deep occurrences; empty bins are gaps, not zeros), the counts per bin\n"
	"(deep, shallow, straddling), and a timescale bar in the chart's own colours.\n"
	"With --draws, a shaded band spans the resampling quantiles of the deep share\n"
	"and a dashed line their median. The bias options of shift (--weight-references,\n"
	"--background, --quota, --taphonomy) are not drawn: see 'bathychron shift'.\n"
	"\n";

static const char help_tail[] =
	"  --level L            confidence level of the intervals (default 0.95)\n"
	"Figure:\n"
	"  -o FILE              the figure; its extension chooses SVG, PDF or PNG\n"
	"  --width MM           width in mm (default 85, a single journal column; 180 for\n"
	"                       two columns); text is drawn at its printed size\n"
	"  --older-right        older ages on the right (default: on the left)\n"
	"  --title TEXT         a bold title line above the figure\n"
	"  --caption TEXT       the caption below the figure (default: the selection,\n"
	"                       binning, zoning, chart and counts in words; '' for none)\n"
	"  --dpi N              PNG resolution (default 300)\n"
	"\n"
	"The caption always ends with a caution: palaeodepths are interpretations, and a\n"
	"change in the deep share can be an artefact of sampling, age uncertainty or\n"
	"transport. The timescale bar uses the chart of --timescale (default: the\n"
	"database's default chart). Needs the DejaVu Sans font for the intended look.\n"
	"Exit status: 0 figure written, 1 nothing to draw, 2 usage, 3 environment.\n";

static int plot_help(void)
{
	fputs(help_head, stdout);
	fputs(cli_shift_help_selection, stdout);
	fputs(cli_shift_help_binning, stdout);
	fputs(cli_shift_help_zoning, stdout);
	fputs(cli_shift_help_draws, stdout);
	fputs(help_tail, stdout);
	return CLI_OK;
}

int cmd_plot(int argc, char **argv)
{
	cli_shift_args sa = CLI_SHIFT_ARGS_INIT;
	bc_plot_options po = BC_PLOT_OPTIONS_INIT;
	const char *out_path = NULL;
	bc_err err = {0};
	for (int i = 1; i < argc; i++) {
		const char *a = argv[i];
		if (strcmp(a, "--help") == 0 || strcmp(a, "-h") == 0)
			return plot_help();
		if (strcmp(a, "--older-right") == 0) {
			po.older_right = 1;
			continue;
		}
		int taken = cli_shift_arg("plot", CLI_SHIFT_ALL & ~(CLI_SHIFT_BIAS | CLI_SHIFT_COVERAGE), argc, argv, &i, &sa);
		if (taken < 0)
			return CLI_USAGE;
		if (taken)
			continue;
		char namebuf[64];
		const char *value;
		const char *name = cli_opt_name(a, namebuf, sizeof namebuf, &value);
		if (cli_shift_option_group(name) == CLI_SHIFT_BIAS)
			return cli_usage("plot", "--%s: the figure does not draw it; see 'bathychron shift --%s'", name, name);
		int known = strcmp(name, "o") == 0 || strcmp(name, "output") == 0 || strcmp(name, "width") == 0 ||
			    strcmp(name, "title") == 0 || strcmp(name, "caption") == 0 || strcmp(name, "dpi") == 0;
		if (!known)
			return cli_usage("plot", "unknown option '%s'", a);
		if (!(value = cli_opt_value("plot", argc, argv, &i, value)))
			return CLI_USAGE;
		if (strcmp(name, "o") == 0 || strcmp(name, "output") == 0) {
			out_path = value;
		} else if (strcmp(name, "width") == 0) {
			if (cli_parse_double(value, &po.width_mm) != 0 || po.width_mm < 50 || po.width_mm > 500)
				return cli_usage("plot", "--width: '%s' is not a width between 50 and 500 mm (85 single column, 180 double)", value);
		} else if (strcmp(name, "dpi") == 0) {
			if (cli_parse_double(value, &po.dpi) != 0 || po.dpi < 50 || po.dpi > 2400)
				return cli_usage("plot", "--dpi: '%s' is not a resolution between 50 and 2400", value);
		} else if (strcmp(name, "title") == 0) {
			po.title = value;
		} else {
			po.caption = value;
		}
	}
	if (cli_shift_args_done("plot", &sa) != CLI_OK)
		return CLI_USAGE;
	if (!out_path)
		return cli_usage("plot", "expected -o FILE.svg, FILE.pdf or FILE.png");
	bc_plot_format fmt;
	if (bc_plot_format_from_path(&fmt, out_path, &err) != BC_OK)
		return cli_usage("plot", "%s", err.msg);

	bc_db *db = NULL;
	bc_shift *s = NULL;
	bc_chart *chart = NULL;
	int status = CLI_OK;
	if (bc_db_open(&db, sa.db_path, &err) != BC_OK)
		return cli_fail(&err);
	if (bc_timescale_get(&chart, db, sa.opts.timescale, &err) != BC_OK ||
	    bc_shift_compute(&s, db, &sa.opts, &err) != BC_OK ||
	    bc_plot_shift_table(out_path, s, &sa.opts, chart, &po, &err) != BC_OK)
		status = cli_fail(&err);
	bc_shift_free(s);
	bc_chart_free(chart);
	bc_db_close(db);
	bc_plot_cleanup();
	return status;
}
