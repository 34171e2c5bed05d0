/*
 * cmd_export.c - bathychron export DB --format csv|dwca -o PATH.
 */
#include "cli.h"

#include <string.h>

static const char help[] =
	"usage: bathychron export DB --format csv|dwca -o PATH\n\n"
	"Writes the stored occurrences. --format csv writes the input columns of the\n"
	"import (Darwin Core terms plus the project's own) followed by every extra\n"
	"column kept at import; importing that file again stores the same values.\n"
	"Depths that came from an environment term are not written as numbers: the\n"
	"term is, and an import derives the same range from it. Coordinates are\n"
	"written in decimal WGS 84 (geodeticDatum EPSG:4326) beside the verbatim ones.\n\n"
	"Spreadsheet safety: a text cell starting with = + - @ tab or CR is written\n"
	"with a leading single quote, so a spreadsheet shows it instead of running it\n"
	"as a formula (OWASP \"CSV Injection\" guidance); numeric columns are never\n"
	"changed. 'bathychron import' removes exactly that quote again and says how\n"
	"many it removed.\n\n"
	"Options:\n"
	"  --format F  csv, or dwca (Darwin Core Archive)\n"
	"  -o PATH     output file; '-' is standard output (csv only)\n\n"
	"--format dwca writes a Darwin Core Archive: PATH ending in .zip gives a zip\n"
	"file, any other PATH a new folder (an existing PATH is never overwritten).\n"
	"It holds meta.xml, eml.xml, occurrence.txt with Darwin Core terms and the\n"
	"project's own terms (namespace https://bathychron.invalid/terms/), and the\n"
	"numeric ages as a ChronometricAge extension in Ma. No spreadsheet guard\n"
	"quote is added inside an archive. 'bathychron import' reads it back to the\n"
	"same occurrences (see doc/dwca.md).\n";

int cmd_export(int argc, char **argv)
{
	const char *dbpath = NULL, *outpath = NULL, *format = NULL;
	for (int i = 1; i < argc; i++) {
		const char *a = argv[i];
		if (strcmp(a, "--help") == 0 || strcmp(a, "-h") == 0) {
			fputs(help, stdout);
			return CLI_OK;
		}
		if (strcmp(a, "--format") == 0 || strcmp(a, "-o") == 0) {
			if (i + 1 >= argc)
				return cli_usage("export", "%s needs a value", a);
			*(a[1] == 'o' ? &outpath : &format) = argv[++i];
		} else if (a[0] == '-' && a[1]) {
			return cli_usage("export", "unknown option '%s'", a);
		} else if (!dbpath) {
			dbpath = a;
		} else {
			return cli_usage("export", "unexpected argument '%s'", a);
		}
	}
	if (!dbpath || !format || !outpath)
		return cli_usage("export", "expected DB --format csv|dwca -o PATH");
	if (strcmp(format, "dwca") == 0) {
		bc_err derr = {0};
		bc_db *ddb = NULL;
		long long dn = 0;
		if (strcmp(outpath, "-") == 0)
			return cli_usage("export", "--format dwca needs -o PATH.zip or -o FOLDER, not standard output");
		if (bc_db_open(&ddb, dbpath, &derr) != BC_OK)
			return cli_fail(&derr);
		int drc = bc_export_dwca(ddb, outpath, &dn, &derr);
		bc_db_close(ddb);
		if (drc != BC_OK)
			return cli_fail(&derr);
		fprintf(stderr, "%s: %lld occurrences written (Darwin Core Archive)\n", outpath, dn);
		return CLI_OK;
	}
	if (strcmp(format, "csv") != 0)
		return cli_usage("export", "--format must be csv or dwca, not '%s'", format);
	bc_err err = {0};
	bc_db *db = NULL;
	if (bc_db_open(&db, dbpath, &err) != BC_OK)
		return cli_fail(&err);
	FILE *out = strcmp(outpath, "-") == 0 ? stdout : fopen(outpath, "wb");
	if (!out) {
		bc_db_close(db);
		cli_error("%s: cannot write", outpath);
		return CLI_ENV;
	}
	long long n = 0;
	int rc = bc_export_csv(db, out, &n, &err);
	bc_db_close(db);
	if (out != stdout && fclose(out) != 0 && rc == BC_OK) {
		cli_error("%s: writing failed", outpath);
		return CLI_ENV;
	}
	if (rc != BC_OK)
		return cli_fail(&err);
	if (out != stdout)
		fprintf(stderr, "%s: %lld occurrences written\n", outpath, n);
	return CLI_OK;
}
