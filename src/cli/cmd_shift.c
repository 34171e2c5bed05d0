/*
 * cmd_shift.c - bathychron shift DB [options]: the occurrence-shift table.
 * Thin: the shared options (shift_options.c) go to bc_shift_option_set,
 * the work to bc_shift_compute.
 */
#include "cli.h"

#include <errno.h>
#include <string.h>

static const char help_head[] =
	"usage: bathychron shift DB [selection] [binning] [zoning] [uncertainty] [bias]\n"
	"                           [--format F] [-o FILE] [--methods]\n"
	"\n"
	"Per stratigraphic bin, oldest first: how many selected occurrences were\n"
	"shallow, deep or straddling the depth boundary, the deep share with a\n"
	"Wilson interval, the change from the previous bin (Newcombe interval,\n"
	"Fisher exact p), references, localities, articulation classes and the\n"
	"spatial coverage of the localities; below the table, trend tests across\n"
	"bins and a methods stamp.\n"
	"\n";

static const char help_tail[] =
	"Spatial coverage (columns n_cells, lat_range_deg, mst_km, n_unlocated):\n"
	"  --cell-km KM         edge of the equal-area cells (EPSG:6933) counted in n_cells\n"
	"                       (default 100); mst_km is NA above 3000 distinct points a bin\n"
	"Output:\n"
	"  --table T            bins (default) or taphonomy (the sensitivity table; needs\n"
	"                       --taphonomy)\n"
	"  --level L            confidence level of every interval (default 0.95)\n"
	"  --format F           csv (default), tsv, md, latex, json\n"
	"  -o FILE              write to FILE instead of standard output\n"
	"  --methods            print a methods paragraph with references instead of the table\n"
	"\n"
	"csv/tsv end with '#' comment lines (tests and stamp): read them with\n"
	"read.csv(f, comment.char = \"#\") in R or pandas.read_csv(f, comment=\"#\").\n"
	"Palaeodepths are interpretations, often from environment terms; bins with few\n"
	"occurrences are weak evidence; a shift can be an artefact of sampling, age\n"
	"uncertainty or transport.\n"
	"Exit status: 0 table written, 1 nothing to count, 2 usage, 3 environment.\n";

static int shift_help(void)
{
	fputs(help_head, stdout);
	fputs(cli_shift_help_selection, stdout);
	fputs(cli_shift_help_binning, stdout);
	fputs(cli_shift_help_zoning, stdout);
	fputs(cli_shift_help_draws, stdout);
	fputs(cli_shift_help_bias, stdout);
	fputs(help_tail, stdout);
	return CLI_OK;
}

int cmd_shift(int argc, char **argv)
{
	cli_shift_args sa = CLI_SHIFT_ARGS_INIT;
	bc_shift_options opts;
	bc_format format = BC_FORMAT_CSV;
	const char *out_path = NULL;
	int methods = 0, taph_table = 0;
	bc_err err = {0};
	for (int i = 1; i < argc; i++) {
		const char *a = argv[i];
		if (strcmp(a, "--help") == 0 || strcmp(a, "-h") == 0)
			return shift_help();
		if (strcmp(a, "--methods") == 0) {
			methods = 1;
			continue;
		}
		int taken = cli_shift_arg("shift", CLI_SHIFT_ALL, argc, argv, &i, &sa);
		if (taken < 0)
			return CLI_USAGE;
		if (taken)
			continue;
		char namebuf[64];
		const char *value;
		const char *name = cli_opt_name(a, namebuf, sizeof namebuf, &value);
		int known = strcmp(name, "format") == 0 || strcmp(name, "o") == 0 || strcmp(name, "output") == 0 ||
			    strcmp(name, "table") == 0;
		if (!known)
			return cli_usage("shift", "unknown option '%s'", a);
		if (!(value = cli_opt_value("shift", argc, argv, &i, value)))
			return CLI_USAGE;
		if (strcmp(name, "format") == 0) {
			if (bc_format_parse(&format, value) != BC_OK)
				return cli_usage("shift", "--format: '%s' is not csv, tsv, md, latex or json", value);
		} else if (strcmp(name, "o") == 0 || strcmp(name, "output") == 0) {
			out_path = value;
		} else if (strcmp(name, "table") == 0) {
			if (strcmp(value, "bins") == 0)
				taph_table = 0;
			else if (strcmp(value, "taphonomy") == 0)
				taph_table = 1;
			else
				return cli_usage("shift", "--table: '%s' is not bins or taphonomy", value);
		}
	}
	if (cli_shift_args_done("shift", &sa) != CLI_OK)
		return CLI_USAGE;
	if (taph_table && !sa.opts.taphonomy)
		return cli_usage("shift", "--table taphonomy needs --taphonomy");
	if (taph_table && methods)
		return cli_usage("shift", "--table taphonomy and --methods exclude each other (the methods paragraph covers both)");
	const char *db_path = sa.db_path;
	opts = sa.opts;
	bc_db *db = NULL;
	bc_shift *s = NULL;
	int status = CLI_OK;
	if (bc_db_open(&db, db_path, &err) != BC_OK)
		return cli_fail(&err);
	if (bc_shift_compute(&s, db, &opts, &err) != BC_OK) {
		status = cli_fail(&err);
		goto done;
	}
	FILE *f = stdout;
	if (out_path && !(f = fopen(out_path, "w"))) {
		cli_error("%s: cannot write: %s", out_path, strerror(errno));
		status = CLI_ENV;
		goto done;
	}
	int rc = methods ? bc_shift_write_methods(s, f, &err)
		 : taph_table ? bc_shift_write_taphonomy(s, f, format, &err)
			      : bc_shift_write(s, f, format, &err);
	if (rc != BC_OK)
		status = cli_fail(&err);
	if (f != stdout && fclose(f) != 0 && status == CLI_OK) {
		cli_error("%s: writing failed: %s", out_path, strerror(errno));
		status = CLI_ENV;
	}
done:
	bc_shift_free(s);
	bc_db_close(db);
	return status;
}
