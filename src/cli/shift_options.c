/*
 * shift_options.c - the command-line options that shift, plot and ranges
 * share (selection, binning, zoning, level, resampling draws and bias
 * checks, the database argument), parsed in one place so the three commands
 * accept exactly the same spellings.
 */
#include "cli.h"

#include <string.h>

/* Option names (without dashes) by group; each goes to bc_shift_option_set.
 * A flag takes no value and is passed to the library as "yes". */
static const struct {
	const char *name;
	unsigned group;
	int flag;
} shift_opts[] = {
	{"group", CLI_SHIFT_SELECT, 0}, {"taxon", CLI_SHIFT_SELECT, 0}, {"preservation", CLI_SHIFT_SELECT, 0},
	{"region", CLI_SHIFT_SELECT, 0}, {"timescale", CLI_SHIFT_TIMESCALE, 0}, {"bins", CLI_SHIFT_BINNING, 0},
	{"span", CLI_SHIFT_BINNING, 0}, {"split", CLI_SHIFT_ZONING, 0}, {"zones", CLI_SHIFT_ZONING, 0},
	{"level", CLI_SHIFT_LEVEL, 0}, {"cell-km", CLI_SHIFT_COVERAGE, 0},
	/* uncertainty: the resampling draws ... */
	{"draws", CLI_SHIFT_DRAWS, 0}, {"seed", CLI_SHIFT_DRAWS, 0}, {"threads", CLI_SHIFT_DRAWS, 0},
	{"resample", CLI_SHIFT_DRAWS, 0}, {"bootstrap", CLI_SHIFT_BOOTSTRAP, 1},
	/* ... and the bias checks of the shift table */
	{"weight-references", CLI_SHIFT_BIAS, 1}, {"background", CLI_SHIFT_BIAS, 0},
	{"background-with-focal", CLI_SHIFT_BIAS, 1}, {"quota", CLI_SHIFT_BIAS, 0}, {"taphonomy", CLI_SHIFT_BIAS, 1},
};

const char cli_shift_help_selection[] =
	"Selection (combined with AND):\n"
	"  --group G            taxon group (taxonGroup), case-insensitive\n"
	"  --taxon NAME         scientific name, genus, family or order, case-insensitive;\n"
	"                       a genus also matches 'Genus species' names\n"
	"  --preservation C     articulation class (articulated, partly articulated,\n"
	"                       disarticulated, unknown) or a preservation term (calyx, ...)\n"
	"  --region W,S,E,N     locality box in decimal degrees (W > E crosses 180);\n"
	"                       occurrences without coordinates are left out and counted\n";

const char cli_shift_help_binning[] =
	"Binning:\n"
	"  --timescale NAME     stored chart (default: the database's default chart)\n"
	"  --bins B             stage | epoch | period (chart ranks), a width in Myr\n"
	"                       (edges at multiples of the width from 0 Ma), or a TSV/CSV\n"
	"                       file of name, older bound, younger bound (Ma). Default stage.\n"
	"  --span R             age ranges crossing bin edges: majority (default: the bin\n"
	"                       holding most of the range), all (every bin it overlaps),\n"
	"                       split (fractional counts by overlap), max:MYR (leave out\n"
	"                       ranges longer than MYR, majority for the rest)\n";

const char cli_shift_help_zoning[] =
	"Zoning (a range [min,max] is shallow when max <= S and min < S, deep when\n"
	"min >= S, otherwise straddling; a single depth d is [d,d]):\n"
	"  --split METRES       one boundary (default 200, the conventional shelf edge)\n"
	"  --zones A,B,...      several boundaries; adds n_zone1.. columns; the fixed\n"
	"                       columns use the first boundary\n";

const char cli_shift_help_draws[] =
	"Uncertainty (resampling draws; doc/shift.md, \"Uncertainty and bias\"):\n"
	"  --draws N            N resampling draws: each occurrence gets an age uniform within\n"
	"                       its range (so a bin) and, when its depth range straddles the\n"
	"                       split, a depth uniform within it (so a zone); per bin the median\n"
	"                       frac_deep and its 2.5/97.5 % quantiles (at --level 0.95), and how\n"
	"                       often each boundary is the breakpoint\n"
	"  --seed S             seed of every random stream (default 1); same seed, same output\n"
	"                       on any machine and any number of threads\n"
	"  --threads T          worker threads (default: one per processor); never changes results\n"
	"  --resample WHAT      age,depth (default), age, depth, or none (bootstrap alone)\n"
	"  --bootstrap          each draw also resamples the occurrences with replacement, so\n"
	"                       the band includes sampling error (without it: age/depth only)\n";

const char cli_shift_help_bias[] =
	"Bias (each adds columns, tests and stamp lines; --draws N also sets their\n"
	"replicates, default 1000):\n"
	"  --weight-references  each reference in a bin weighs 1 (a prolific monograph cannot\n"
	"                       make a shift); interval by bootstrap over references\n"
	"  --background V       depth affinity against all occurrences of the same bins (the\n"
	"                       sampled background): binned (expected share weighted by the\n"
	"                       selection's bins) or pooled; one-sided binomial tests\n"
	"  --background-with-focal  keep the selection in the background (default: removed)\n"
	"  --quota N            subsample each bin to N shallow or deep occurrences, repeated;\n"
	"                       median and quantiles of frac_deep (bins with fewer: NA)\n"
	"  --taphonomy          repeat on articulated material alone; flag a shift carried by\n"
	"                       disarticulated material (possibly transported ossicles)\n";

const char *cli_opt_name(const char *arg, char *buf, size_t cap, const char **value)
{
	const char *name = arg[0] == '-' ? (arg[1] == '-' ? arg + 2 : arg + 1) : arg;
	const char *eq = strchr(name, '=');
	*value = NULL;
	if (eq && (size_t)(eq - name) < cap) {
		memcpy(buf, name, (size_t)(eq - name));
		buf[eq - name] = '\0';
		*value = eq + 1;
		return buf;
	}
	return name;
}

const char *cli_opt_value(const char *cmd, int argc, char **argv, int *i, const char *inline_value)
{
	if (inline_value)
		return inline_value;
	if (*i + 1 >= argc) {
		cli_usage(cmd, "option '%s' needs a value", argv[*i]);
		return NULL;
	}
	return argv[++*i];
}

unsigned cli_shift_option_group(const char *name)
{
	for (size_t k = 0; k < sizeof shift_opts / sizeof shift_opts[0]; k++)
		if (strcmp(name, shift_opts[k].name) == 0)
			return shift_opts[k].group;
	return 0;
}

int cli_shift_arg(const char *cmd, unsigned groups, int argc, char **argv, int *i, cli_shift_args *a)
{
	const char *arg = argv[*i];
	if (arg[0] != '-' || arg[1] == '\0') {
		if (a->db_path) {
			cli_usage(cmd, "more than one database given ('%s' and '%s')", a->db_path, arg);
			return -1;
		}
		a->db_path = arg;
		return 1;
	}
	char buf[64];
	const char *value;
	const char *name = cli_opt_name(arg, buf, sizeof buf, &value);
	for (size_t k = 0; k < sizeof shift_opts / sizeof shift_opts[0]; k++) {
		if (strcmp(name, shift_opts[k].name) != 0)
			continue;
		if (!(groups & shift_opts[k].group))
			return 0; /* the caller says why it does not take this option */
		if (shift_opts[k].flag && value) {
			cli_usage(cmd, "--%s takes no value", name);
			return -1;
		}
		if (shift_opts[k].flag)
			value = "yes";
		else if (!(value = cli_opt_value(cmd, argc, argv, i, value)))
			return -1;
		bc_err err = {0};
		a->have_split |= strcmp(name, "split") == 0;
		a->have_zones |= strcmp(name, "zones") == 0;
		if (bc_shift_option_set(&a->opts, name, value, &err) != BC_OK) {
			cli_usage(cmd, "%s", err.msg);
			return -1;
		}
		return 1;
	}
	return 0;
}

int cli_shift_args_done(const char *cmd, const cli_shift_args *a)
{
	if (!a->db_path)
		return cli_usage(cmd, "expected a database file");
	if (a->have_split && a->have_zones)
		return cli_usage(cmd, "--split and --zones exclude each other (--zones A,B uses A as the split)");
	return CLI_OK;
}
