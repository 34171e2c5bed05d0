/*
 * cmd_shift.c - bathychron shift DB [options]: the occurrence-shift table.
 * Thin: options go to bc_shift_option_set, the work to bc_shift_compute.
 */
#include "cli.h"

#include <errno.h>
#include <string.h>

static const char help[] =
	"usage: bathychron shift DB [selection] [binning] [zoning] [uncertainty] [--format F] [-o FILE] [--methods]\n"
	"\n"
	"Per stratigraphic bin, oldest first: how many selected occurrences were\n"
	"shallow, deep or straddling the depth boundary, the deep share with a\n"
	"Wilson interval, the change from the previous bin (Newcombe interval,\n"
	"Fisher exact p), references, localities and articulation classes; below\n"
	"the table, trend tests across bins and a methods stamp.\n"
	"\n"
	"Selection (combined with AND):\n"
	"  --group G            taxon group (taxonGroup), case-insensitive\n"
	"  --taxon NAME         scientific name, genus, family or order, case-insensitive;\n"
	"                       a genus also matches 'Genus species' names\n"
	"  --preservation C     articulation class (articulated, partly articulated,\n"
	"                       disarticulated, unknown) or a preservation term (calyx, ...)\n"
	"  --region W,S,E,N     locality box in decimal degrees (W > E crosses 180);\n"
	"                       occurrences without coordinates are left out and counted\n"
	"Binning:\n"
	"  --timescale NAME     stored chart (default: the database's default chart)\n"
	"  --bins B             stage | epoch | period (chart ranks), a width in Myr\n"
	"                       (edges at multiples of the width from 0 Ma), or a TSV/CSV\n"
	"                       file of name, older bound, younger bound (Ma). Default stage.\n"
	"  --span R             age ranges crossing bin edges: majority (default: the bin\n"
	"                       holding most of the range), all (every bin it overlaps),\n"
	"                       split (fractional counts by overlap), max:MYR (leave out\n"
	"                       ranges longer than MYR, majority for the rest)\n"
	"Zoning (a range [min,max] is shallow when max <= S and min < S, deep when\n"
	"min >= S, otherwise straddling; a single depth d is [d,d]):\n"
	"  --split METRES       one boundary (default 200, the conventional shelf edge)\n"
	"  --zones A,B,...      several boundaries; adds n_zone1.. columns; the fixed\n"
	"                       columns use the first boundary\n"
	"Uncertainty and bias (each adds columns, tests and stamp lines; doc/shift.md):\n"
	"  --draws N            N resampling draws: each occurrence gets an age uniform within\n"
	"                       its range (so a bin) and, when its depth range straddles the\n"
	"                       split, a depth uniform within it (so a zone); per bin the median\n"
	"                       frac_deep and its 2.5/97.5 % quantiles (at --level 0.95), and how\n"
	"                       often each boundary is the breakpoint. N also sets the replicates\n"
	"                       of --weight-references and --quota (default 1000)\n"
	"  --seed S             seed of every random stream (default 1); same seed, same output\n"
	"                       on any machine and any number of threads\n"
	"  --threads T          worker threads (default: one per processor); never changes results\n"
	"  --resample WHAT      age,depth (default), age, depth, or none (bootstrap alone)\n"
	"  --bootstrap          each draw also resamples the occurrences with replacement, so\n"
	"                       the band includes sampling error (without it: age/depth only)\n"
	"  --weight-references  each reference in a bin weighs 1 (a prolific monograph cannot\n"
	"                       make a shift); interval by bootstrap over references\n"
	"  --background V       depth affinity against all occurrences of the same bins (the\n"
	"                       sampled background): binned (expected share weighted by the\n"
	"                       selection's bins) or pooled; one-sided binomial tests\n"
	"  --background-with-focal  keep the selection in the background (default: removed)\n"
	"  --quota N            subsample each bin to N shallow or deep occurrences, repeated;\n"
	"                       median and quantiles of frac_deep (bins with fewer: NA)\n"
	"  --taphonomy          repeat on articulated material alone; flag a shift carried by\n"
	"                       disarticulated material (possibly transported ossicles)\n"
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

/* The uncertainty and bias options: they take a value and go straight to
 * the library (the shared selection, binning and zoning options are
 * parsed by shift_options.c). */
static const char *const uncert_opts[] = {"draws", "seed", "threads", "resample", "background", "quota"};
/* Flags without a value, passed to the library as "yes". */
static const char *const uncert_flags[] = {"bootstrap", "weight-references", "background-with-focal", "taphonomy"};

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
		if (strcmp(a, "--help") == 0 || strcmp(a, "-h") == 0) {
			fputs(help, stdout);
			return CLI_OK;
		}
		if (strcmp(a, "--methods") == 0) {
			methods = 1;
			continue;
		}
		int flag = 0;
		for (size_t k = 0; k < sizeof uncert_flags / sizeof uncert_flags[0]; k++)
			flag |= strncmp(a, "--", 2) == 0 && strcmp(a + 2, uncert_flags[k]) == 0;
		if (flag) {
			if (bc_shift_option_set(&sa.opts, a + 2, "yes", &err) != BC_OK)
				return cli_usage("shift", "%s", err.msg);
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
		int uncert = 0;
		for (size_t k = 0; k < sizeof uncert_opts / sizeof uncert_opts[0]; k++)
			uncert |= strcmp(name, uncert_opts[k]) == 0;
		int known = uncert || strcmp(name, "format") == 0 || strcmp(name, "o") == 0 || strcmp(name, "output") == 0 ||
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
		} else if (bc_shift_option_set(&sa.opts, name, value, &err) != BC_OK) {
			return cli_usage("shift", "%s", err.msg);
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
