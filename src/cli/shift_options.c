/*
 * shift_options.c - the command-line options that shift, plot and ranges
 * share (selection, binning, zoning, level, the database argument), parsed
 * in one place so the three commands accept exactly the same spellings.
 */
#include "cli.h"

#include <string.h>

/* Option names (without dashes) by group; each goes to bc_shift_option_set. */
static const struct {
	const char *name;
	unsigned group;
} shift_opts[] = {
	{"group", CLI_SHIFT_SELECT}, {"taxon", CLI_SHIFT_SELECT}, {"preservation", CLI_SHIFT_SELECT},
	{"region", CLI_SHIFT_SELECT}, {"timescale", CLI_SHIFT_TIMESCALE}, {"bins", CLI_SHIFT_BINNING},
	{"span", CLI_SHIFT_BINNING}, {"split", CLI_SHIFT_ZONING}, {"zones", CLI_SHIFT_ZONING},
	{"level", CLI_SHIFT_LEVEL},
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
		if (!(value = cli_opt_value(cmd, argc, argv, i, value)))
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
