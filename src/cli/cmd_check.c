/*
 * cmd_check.c - bathychron check DB: the data-quality report.
 */
#include "cli.h"

#include <string.h>

static const char help[] =
	"usage: bathychron check DB [--format tsv|csv|json] [--quarantine [--kind K]] [-o FILE]\n\n"
	"Reports, one row each, with columns problem, batch, file, line, key, detail:\n"
	"  quarantined           rows an import could not use (field in key, reason in detail)\n"
	"  unlinked_reference    an associatedReferences key with no loaded reference\n"
	"  age_conflict          age numbers and names disagree by more than 0.5 Myr\n"
	"                        (the numbers were stored)\n"
	"  duplicate             probable duplicates: same taxon, locality, age and reference\n"
	"  locality_coordinates  one locality name given different coordinates\n"
	"                        (more than 200 m apart)\n"
	"  near_duplicate_locality  unnamed localities less than 100 m apart in the\n"
	"                        same formation: probably one site (never merged)\n"
	"and, for information only, a no_coordinates row counting occurrences\n"
	"without coordinates.\n\n"
	"Options:\n"
	"  --format F    tsv (default), csv or json\n"
	"  --quarantine  instead of the report, write every quarantined row as CSV:\n"
	"                quarantine_batch, quarantine_file, quarantine_line,\n"
	"                quarantine_field, quarantine_reason, then the row's own columns.\n"
	"                Fix the cells and import the file again; the five quarantine_*\n"
	"                columns are then kept as extra columns (delete them if unwanted).\n"
	"  --kind K      with --quarantine: rows of occurrence imports (default,\n"
	"                'occurrences') or of 'bathychron injuries import' ('injuries')\n"
	"  -o FILE       write to FILE instead of standard output\n\n"
	"Exit status: 0 no problems, 1 problems reported (the no_coordinates count\n"
	"alone is not a problem), 2 usage error, 3 environment failure.\n";

int cmd_check(int argc, char **argv)
{
	bc_check_options o = BC_CHECK_OPTIONS_INIT;
	const char *dbpath = NULL, *outpath = NULL;
	for (int i = 1; i < argc; i++) {
		const char *a = argv[i];
		if (strcmp(a, "--help") == 0 || strcmp(a, "-h") == 0) {
			fputs(help, stdout);
			return CLI_OK;
		}
		if (strcmp(a, "--format") == 0) {
			if (i + 1 >= argc)
				return cli_usage("check", "--format needs a value");
			if (bc_format_parse(&o.format, argv[++i]) != BC_OK ||
				(o.format != BC_FORMAT_TSV && o.format != BC_FORMAT_CSV && o.format != BC_FORMAT_JSON))
				return cli_usage("check", "--format must be tsv, csv or json, not '%s'", argv[i]);
		} else if (strcmp(a, "--quarantine") == 0) {
			o.quarantine = 1;
		} else if (strcmp(a, "--kind") == 0) {
			if (i + 1 >= argc)
				return cli_usage("check", "--kind needs a value");
			o.kind = argv[++i];
			if (strcmp(o.kind, "occurrences") != 0 && strcmp(o.kind, "injuries") != 0)
				return cli_usage("check", "--kind must be occurrences or injuries, not '%s'", o.kind);
		} else if (strcmp(a, "-o") == 0) {
			if (i + 1 >= argc)
				return cli_usage("check", "-o needs a file");
			outpath = argv[++i];
		} else if (a[0] == '-' && a[1]) {
			return cli_usage("check", "unknown option '%s'", a);
		} else if (!dbpath) {
			dbpath = a;
		} else {
			return cli_usage("check", "unexpected argument '%s'", a);
		}
	}
	if (!dbpath)
		return cli_usage("check", "expected a database");
	bc_err err = {0};
	bc_db *db = NULL;
	if (bc_db_open(&db, dbpath, &err) != BC_OK)
		return cli_fail(&err);
	FILE *out = stdout;
	if (outpath && strcmp(outpath, "-") != 0 && !(out = fopen(outpath, "wb"))) {
		bc_db_close(db);
		cli_error("%s: cannot write", outpath);
		return CLI_ENV;
	}
	long long n = 0;
	int rc = bc_check_run(db, &o, out, &n, &err);
	bc_db_close(db);
	if (out != stdout && fclose(out) != 0 && rc == BC_OK) {
		cli_error("%s: writing failed", outpath);
		return CLI_ENV;
	}
	if (rc != BC_OK)
		return cli_fail(&err);
	return n ? CLI_DATA : CLI_OK;
}
