/*
 * cmd_timescale.c - bathychron timescale load|list|convert: charts in a
 * database, and the chart TSV made from an ICS SKOS release.
 */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const char help[] =
	"usage: bathychron timescale load DB FILE [--name NAME] [--default] [--replace]\n"
	"       bathychron timescale list DB [--name NAME | --charts] [--format tsv|csv]\n"
	"       bathychron timescale convert FILE [--name NAME] [--source TEXT] [--licence TEXT]\n"
	"                                    [--colours-from CHART]\n\n"
	"Chronostratigraphic charts. 'bathychron timescale SUBCOMMAND --help' describes each.\n";

static const char help_load[] =
	"usage: bathychron timescale load DB FILE [--name NAME] [--default] [--replace]\n\n"
	"Loads a chart into DB. FILE is the ICS chart as SKOS RDF/XML (.rdf, .xml; the\n"
	"2024-12, 2020 and 2017 releases are understood) or a chart in bathychron's TSV\n"
	"form (.tsv, see reference/README.md). The reader never uses the network and\n"
	"refuses files whose DTD declares entities.\n\n"
	"  --name NAME   store the chart as NAME (default: from the TSV's '# chart:' line,\n"
	"                else the file name without .skos.rdf/.rdf/.xml/.tsv)\n"
	"  --default     make it the default chart (used when no --timescale is given)\n"
	"  --replace     replace a stored chart of the same name (otherwise refused);\n"
	"                occurrences imported earlier keep the ages they were given\n\n"
	"Prints one line: loaded NAME (N intervals, M labels)[, default].\n"
	"Nothing is stored when the file has an error.\n";

static const char help_list[] =
	"usage: bathychron timescale list DB [--name NAME | --charts] [--format tsv|csv]\n\n"
	"Without --name: the table of charts, an empty line, then the intervals of the\n"
	"default chart. With --name: only the intervals of chart NAME. With --charts:\n"
	"only the table of charts.\n\n"
	"Charts table columns:    chart, default (yes/no), intervals, source, licence\n"
	"Intervals table columns: name, rank, older_ma, younger_ma, colour, older_unc,\n"
	"                         younger_unc, parent, iri\n"
	"Intervals are in chart order: each interval, then its subdivisions, oldest\n"
	"first. Ages in Ma (millions of years before present), uncertainties in Myr\n"
	"(empty when the chart states none), colour as #RRGGBB (empty when none).\n"
	"Ranks: supereon, eon, era, period, subperiod, epoch, age (= stage).\n\n"
	"  --format tsv|csv   tab-separated (default) or comma-separated (RFC 4180)\n";

static const char help_convert[] =
	"usage: bathychron timescale convert FILE [--name NAME] [--source TEXT] [--licence TEXT]\n"
	"                                    [--colours-from CHART]\n\n"
	"Reads a chart (SKOS RDF/XML or chart TSV) and writes it to standard output in\n"
	"bathychron's chart TSV form; this is how reference/charts/*.tsv are made.\n\n"
	"  --name NAME           the chart's name (default: from the file name)\n"
	"  --source TEXT         the source/citation line (default: read from the file)\n"
	"  --licence TEXT        the licence line (default: read from the file)\n"
	"  --colours-from CHART  give intervals without a colour the colour of the same\n"
	"                        interval (same IRI, else same name) in CHART, a chart\n"
	"                        file or a built-in chart name such as ics-2024-12\n"
	"  --colour-source TEXT  what to record as their colour source\n"
	"                        (default: 'CHART chart colours')\n";

static int is_help(const char *a)
{
	return strcmp(a, "--help") == 0 || strcmp(a, "-h") == 0;
}

/* Options: a table of {name, takes a value, where}. */
typedef struct opt {
	const char *name;
	int has_value;
	const char **value;
	int *flag;
} opt;

/* Parses argv[1..] into positionals and options; returns -1 after printing a usage error. */
static int parse_args(const char *cmd, int argc, char **argv, const opt *opts, size_t nopts, const char **pos, int npos)
{
	int got = 0;
	for (int i = 1; i < argc; i++) {
		const char *a = argv[i];
		if (a[0] == '-' && a[1] == '-') {
			size_t k = 0;
			while (k < nopts && strcmp(a, opts[k].name) != 0)
				k++;
			if (k == nopts)
				return cli_usage(cmd, "unknown option '%s'", a), -1;
			if (opts[k].has_value) {
				if (i + 1 >= argc)
					return cli_usage(cmd, "option %s needs a value", a), -1;
				*opts[k].value = argv[++i];
			} else {
				*opts[k].flag = 1;
			}
		} else {
			if (got == npos)
				return cli_usage(cmd, "unexpected argument '%s'", a), -1;
			pos[got++] = a;
		}
	}
	if (got != npos)
		return cli_usage(cmd, "expected %d argument%s", npos, npos == 1 ? "" : "s"), -1;
	return 0;
}

static int open_db(bc_db **db, const char *path)
{
	bc_err err = {0};
	if (bc_db_open(db, path, &err) != BC_OK)
		return cli_fail(&err);
	return CLI_OK;
}

static int cmd_load(int argc, char **argv)
{
	const char *name = NULL, *pos[2];
	int make_default = 0, replace = 0;
	const opt opts[] = {{"--name", 1, &name, NULL}, {"--default", 0, NULL, &make_default}, {"--replace", 0, NULL, &replace}};
	if (parse_args("timescale load", argc, argv, opts, 3, pos, 2))
		return CLI_USAGE;
	bc_err err = {0};
	bc_chart *chart = NULL;
	bc_db *db = NULL;
	int status = open_db(&db, pos[0]);
	if (status)
		return status;
	if (bc_chart_load_file(&chart, pos[1], name, &err) != BC_OK ||
	    (replace ? bc_timescale_replace : bc_timescale_store)(db, chart, pos[1], make_default, &err) != BC_OK) {
		status = cli_fail(&err);
	} else {
		printf("loaded %s (%zu intervals, %zu labels)%s\n", bc_chart_name(chart), bc_chart_count(chart),
			bc_chart_label_count(chart), make_default ? ", default" : "");
	}
	bc_chart_free(chart);
	bc_db_close(db);
	return status;
}

/* One cell: CSV quoting (RFC 4180) or TSV with tabs and newlines as spaces. */
static void cell(const char *s, bc_format f, int last)
{
	/* a name from a user's chart starting = + - @ tab CR gets a leading '
	 * so a spreadsheet shows text, not a formula (OWASP "CSV Injection") */
	int guard = s[0] && strchr("=+-@\t\r", s[0]) != NULL;
	if (f == BC_FORMAT_CSV && strpbrk(s, ",\"\r\n")) {
		putchar('"');
		if (guard)
			putchar('\'');
		for (; *s; s++) {
			if (*s == '"')
				putchar('"');
			putchar(*s);
		}
		putchar('"');
	} else {
		if (guard)
			putchar('\'');
		for (; *s; s++)
			putchar(*s == '\t' || *s == '\n' || *s == '\r' ? ' ' : *s);
	}
	putchar(last ? '\n' : f == BC_FORMAT_CSV ? ',' : '\t');
}

static void number_cell(double v, bc_format f, int last)
{
	char buf[40] = "";
	if (!isnan(v))
		for (int prec = 0; prec <= 17; prec++) {
			snprintf(buf, sizeof buf, "%.*f", prec, v);
			if (strtod(buf, NULL) == v)
				break;
		}
	cell(buf, f, last);
}

static void print_charts(const bc_timescale_info *v, size_t n, bc_format f)
{
	static const char *const cols[] = {"chart", "default", "intervals", "source", "licence"};
	for (size_t i = 0; i < 5; i++)
		cell(cols[i], f, i == 4);
	for (size_t i = 0; i < n; i++) {
		char count[32];
		snprintf(count, sizeof count, "%zu", v[i].n_intervals);
		cell(v[i].name, f, 0);
		cell(v[i].is_default ? "yes" : "no", f, 0);
		cell(count, f, 0);
		cell(v[i].source, f, 0);
		cell(v[i].licence, f, 1);
	}
}

static void print_intervals(const bc_chart *c, bc_format f)
{
	static const char *const cols[] = {"name", "rank", "older_ma", "younger_ma", "colour", "older_unc", "younger_unc", "parent", "iri"};
	for (size_t i = 0; i < 9; i++)
		cell(cols[i], f, i == 8);
	for (size_t i = 0; i < bc_chart_count(c); i++) {
		const bc_interval *iv = bc_chart_interval(c, i);
		char col[8] = "";
		if (iv->has_colour)
			snprintf(col, sizeof col, "#%06X", iv->colour & 0xFFFFFFu);
		cell(iv->name, f, 0);
		cell(bc_rank_name(iv->rank), f, 0);
		number_cell(iv->older_ma, f, 0);
		number_cell(iv->younger_ma, f, 0);
		cell(col, f, 0);
		number_cell(iv->older_unc, f, 0);
		number_cell(iv->younger_unc, f, 0);
		cell(iv->parent >= 0 ? bc_chart_interval(c, (size_t)iv->parent)->name : "", f, 0);
		cell(iv->iri, f, 1);
	}
}

static int cmd_list(int argc, char **argv)
{
	const char *name = NULL, *format = "tsv", *pos[1];
	int charts_only = 0;
	const opt opts[] = {{"--name", 1, &name, NULL}, {"--format", 1, &format, NULL}, {"--charts", 0, NULL, &charts_only}};
	if (parse_args("timescale list", argc, argv, opts, 3, pos, 1))
		return CLI_USAGE;
	bc_format f;
	if (bc_format_parse(&f, format) != BC_OK || (f != BC_FORMAT_TSV && f != BC_FORMAT_CSV))
		return cli_usage("timescale list", "--format must be tsv or csv, not '%s'", format);
	if (name && charts_only)
		return cli_usage("timescale list", "--name and --charts do not go together");
	bc_err err = {0};
	bc_db *db = NULL;
	bc_chart *chart = NULL;
	bc_timescale_info *v = NULL;
	size_t n = 0;
	int status = open_db(&db, pos[0]);
	if (status)
		return status;
	if (!name && bc_timescale_list(&v, &n, db, &err) != BC_OK)
		status = cli_fail(&err);
	else if (!charts_only && bc_timescale_get(&chart, db, name, &err) != BC_OK)
		status = cli_fail(&err);
	if (status == CLI_OK) {
		if (!name) {
			print_charts(v, n, f);
			if (!charts_only)
				putchar('\n');
		}
		if (chart)
			print_intervals(chart, f);
	}
	free(v);
	bc_chart_free(chart);
	bc_db_close(db);
	return status;
}

static int cmd_convert(int argc, char **argv)
{
	const char *name = NULL, *source = NULL, *licence = NULL, *colours = NULL, *colour_source = NULL, *pos[1];
	const opt opts[] = {{"--name", 1, &name, NULL}, {"--source", 1, &source, NULL}, {"--licence", 1, &licence, NULL},
		{"--colours-from", 1, &colours, NULL}, {"--colour-source", 1, &colour_source, NULL}};
	if (parse_args("timescale convert", argc, argv, opts, 5, pos, 1))
		return CLI_USAGE;
	bc_err err = {0};
	bc_chart *chart = NULL, *from = NULL;
	int status = CLI_OK;
	if (bc_chart_load_file(&chart, pos[0], name, &err) != BC_OK) {
		status = cli_fail(&err);
		goto done;
	}
	if ((source || licence) &&
	    bc_chart_set_source(chart, source ? source : bc_chart_source(chart), licence ? licence : bc_chart_licence(chart), &err) != BC_OK) {
		status = cli_fail(&err);
		goto done;
	}
	if (colours) {
		int rc = strchr(colours, '/') || strchr(colours, '.') ? bc_chart_load_file(&from, colours, NULL, &err)
								      : bc_chart_builtin(&from, colours, &err);
		char cs[256];
		snprintf(cs, sizeof cs, "%s chart colours", from ? bc_chart_name(from) : colours);
		if (rc != BC_OK || bc_chart_copy_colours(chart, from, colour_source ? colour_source : cs, &err) < 0) {
			status = cli_fail(&err);
			goto done;
		}
	}
	if (bc_chart_write_tsv(chart, stdout, &err) != BC_OK)
		status = cli_fail(&err);
done:
	bc_chart_free(chart);
	bc_chart_free(from);
	return status;
}

int cmd_timescale(int argc, char **argv)
{
	if (argc < 2)
		return cli_usage("timescale", "expected a subcommand: load, list or convert");
	if (is_help(argv[1])) {
		fputs(help, stdout);
		return CLI_OK;
	}
	static const struct {
		const char *name, *help;
		int (*run)(int, char **);
	} subs[] = {{"load", help_load, cmd_load}, {"list", help_list, cmd_list}, {"convert", help_convert, cmd_convert}};
	for (size_t i = 0; i < sizeof subs / sizeof subs[0]; i++) {
		if (strcmp(argv[1], subs[i].name) != 0)
			continue;
		for (int k = 2; k < argc; k++)
			if (is_help(argv[k])) {
				fputs(subs[i].help, stdout);
				return CLI_OK;
			}
		return subs[i].run(argc - 1, argv + 1);
	}
	return cli_usage("timescale", "'%s' is not a subcommand (load, list or convert)", argv[1]);
}
