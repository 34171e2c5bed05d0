/*
 * main.c - the bathychron program: a table of commands, each in its own
 * cmd_<name>.c, built only on the public header.
 */
#include "cli.h"

#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

static const struct command {
	const char *name;
	int (*run)(int argc, char **argv);
	const char *help;
} commands[] = {
	{"init", cmd_init, "create a new database (an OGC GeoPackage) with the default chart"},
	{"timescale", cmd_timescale, "load a chronostratigraphic chart (SKOS RDF/XML or TSV), or list charts"},
	{"resolve", cmd_resolve, "turn free-text ages into chart intervals and numeric bounds"},
	{"import", cmd_import, "import occurrence spreadsheets (CSV/TSV) or Darwin Core Archives"},
	{"refs", cmd_refs, "load references from a BibTeX file"},
	{"check", cmd_check, "report quarantined rows, unlinked references, conflicts, duplicates"},
	{"shift", cmd_shift, "compute the occurrence-shift table between shallow and deep water"},
	{"plot", cmd_plot, "draw the shift as a figure (SVG, PDF or PNG)"},
	{"ranges", cmd_ranges, "per taxon, its range in each depth zone and how the shallow range ends"},
	{"export", cmd_export, "write stored occurrences as CSV or a Darwin Core Archive"},
	{"injuries", cmd_injuries, "import samples examined for regenerating arms (injuries import DB FILE)"},
	{"encounter", cmd_encounter, "injury incidence and interval between predator encounters by depth"},
};

static void usage(FILE *f)
{
	fprintf(f, "usage: bathychron COMMAND [OPTIONS] ...\n\n"
		   "Fossil occurrences through time and depth: ingest, resolve ages against the\n"
		   "International Chronostratigraphic Chart, and compute shallow-to-deep shift tables.\n\n"
		   "Commands:\n");
	for (size_t i = 0; i < sizeof commands / sizeof commands[0]; i++)
		fprintf(f, "  %-10s %s\n", commands[i].name, commands[i].help);
	fprintf(f, "\n'bathychron COMMAND --help' describes each command.\n"
		   "Exit status: 0 success, 1 data problems reported, 2 usage error, 3 environment failure.\n");
}

int cli_exit_for(int code)
{
	switch (code) {
	case BC_OK: return CLI_OK;
	case BC_EINVALID: return CLI_DATA;
	case BC_EUSAGE: return CLI_USAGE;
	default: return CLI_ENV;
	}
}

void cli_error(const char *fmt, ...)
{
	va_list ap;
	fputs("bathychron: ", stderr);
	va_start(ap, fmt);
	vfprintf(stderr, fmt, ap);
	va_end(ap);
	fputc('\n', stderr);
}

int cli_fail(const bc_err *err)
{
	cli_error("%s", err->msg[0] ? err->msg : bc_strerror(err->code));
	return cli_exit_for(err->code);
}

int cli_usage(const char *cmd, const char *fmt, ...)
{
	va_list ap;
	fprintf(stderr, "bathychron: %s: ", cmd);
	va_start(ap, fmt);
	vfprintf(stderr, fmt, ap);
	va_end(ap);
	fprintf(stderr, "\n(see 'bathychron %s --help')\n", cmd);
	return CLI_USAGE;
}

int cli_finish(int status)
{
	if (fflush(stdout) != 0 || ferror(stdout)) {
		cli_error("writing the output failed: %s", strerror(errno));
		return CLI_ENV;
	}
	return status;
}

int cli_parse_double(const char *s, double *out)
{
	char *end;
	errno = 0;
	double v = strtod(s, &end);
	if (end == s || *end || errno || !isfinite(v))
		return -1;
	*out = v;
	return 0;
}

int cli_parse_long(const char *s, long *out)
{
	char *end;
	errno = 0;
	long v = strtol(s, &end, 10);
	if (end == s || *end || errno || v < 0)
		return -1;
	*out = v;
	return 0;
}

int main(int argc, char **argv)
{
	if (argc < 2) {
		usage(stderr);
		return CLI_USAGE;
	}
	if (strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0 || strcmp(argv[1], "help") == 0) {
		usage(stdout);
		return cli_finish(CLI_OK);
	}
	if (strcmp(argv[1], "--version") == 0) {
		printf("bathychron %s (schema %d)\n", BC_VERSION, bc_db_schema_version());
		return cli_finish(CLI_OK);
	}
	for (size_t i = 0; i < sizeof commands / sizeof commands[0]; i++)
		if (strcmp(argv[1], commands[i].name) == 0)
			return cli_finish(commands[i].run(argc - 1, argv + 1));
	cli_error("'%s' is not a command; 'bathychron --help' lists them", argv[1]);
	return CLI_USAGE;
}
