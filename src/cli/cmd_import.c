/*
 * cmd_import.c - bathychron import DB FILE...: occurrence spreadsheets in,
 * bad rows to the quarantine, one summary line per file.
 */
#include "cli.h"

#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define MAX_PRINTED 20               /* row messages printed per file */
#define PROGRESS_MIN_BYTES (8u << 20) /* no bar for small files */

static const char help[] =
	"usage: bathychron import DB FILE... [--map PROFILE] [--dry-run]\n"
	"                        [--environments FILE] [--preservation FILE]\n"
	"                        [--timescale NAME] [--keep-guard-quotes]\n\n"
	"Imports occurrence spreadsheets (CSV or TSV, UTF-8, a header row; the\n"
	"delimiter is detected) into DB. Columns are the Darwin Core terms and\n"
	"project terms of the input contract (scientificName, locality,\n"
	"earliestAgeOrLowestStage, minimumPaleodepthInMeters, preservationMode, ...);\n"
	"other columns are kept with each row and come back on export.\n\n"
	"Each file is one transaction and one batch. A row that cannot be used is\n"
	"never dropped: it goes to the quarantine with file, line, field and reason,\n"
	"and is printed here as FILE:LINE: field: reason (the first 20 per file; all\n"
	"of them with 'bathychron check DB --quarantine'). A file whose content was\n"
	"imported before is refused.\n\n"
	"A FILE may also be a Darwin Core Archive: a .zip file or a folder holding\n"
	"meta.xml (Occurrence core; MeasurementOrFact rows for palaeodepth and\n"
	"preservation; ChronometricAge rows converted to Ma; eml.xml kept with the\n"
	"batch). Messages then name the data file inside it\n"
	"(archive.zip/occurrence.txt:LINE: field: reason). An archive with a path\n"
	"leaving it, an oversized or over-compressed entry, or a DTD in its XML is\n"
	"refused whole (see doc/dwca.md).\n\n"
	"Options:\n"
	"  --map PROFILE        map your own headers onto the terms: a shipped profile\n"
	"                       name (e.g. 'example') or a .map file; see\n"
	"                       import/maps/example.map for the format\n"
	"  --dry-run            validate and report, write nothing\n"
	"  --environments FILE  environment -> depth terms adding to / overriding\n"
	"                       reference/environments.tsv (term, min_m, max_m, note, source)\n"
	"  --preservation FILE  preservation terms adding to / overriding\n"
	"                       reference/preservation.tsv (term, class, note, source)\n"
	"  --timescale NAME     resolve ages on this stored chart (default: the DB's default)\n"
	"  --keep-guard-quotes  keep a leading ' before = + - @ (by default the quote\n"
	"                       that 'export' adds against formula injection is removed,\n"
	"                       and the count is reported)\n\n"
	"Ages: numbers (earliest/latestChronometricAge, Ma) win over stage text when both\n"
	"agree; a disagreement of more than 0.5 Myr is stored and flagged (see 'check').\n"
	"Palaeodepths are interpretations; environment-only rows get the range of the\n"
	"environment vocabulary, each term with its source.\n\n"
	"Exit status: 0 all rows stored, 1 rows quarantined or a file refused,\n"
	"2 usage error, 3 environment failure.\n";

typedef struct report_state {
	long long printed, suppressed;
	int tty;
	int bar_drawn;
} report_state;

static void on_report(void *ctx, const char *msg)
{
	report_state *s = ctx;
	if (s->printed < MAX_PRINTED) {
		if (s->bar_drawn) {
			fputs("\r\033[K", stderr);
			s->bar_drawn = 0;
		}
		cli_error("%s", msg);
		s->printed++;
	} else {
		s->suppressed++;
	}
}

static void on_progress(void *ctx, uint64_t done, uint64_t total)
{
	report_state *s = ctx;
	if (!s->tty || total < PROGRESS_MIN_BYTES)
		return;
	int pct = total ? (int)(done * 100 / total) : 0;
	int w = pct / 4;
	fprintf(stderr, "\r[%-25.*s] %3d%%", w, "#########################", pct);
	s->bar_drawn = 1;
	fflush(stderr);
}

int cmd_import(int argc, char **argv)
{
	bc_import_options o = BC_IMPORT_OPTIONS_INIT;
	const char *dbpath = NULL;
	const char **files = calloc((size_t)argc, sizeof *files);
	int nfiles = 0;
	if (!files)
		return CLI_ENV;
	for (int i = 1; i < argc; i++) {
		const char *a = argv[i];
		if (strcmp(a, "--help") == 0 || strcmp(a, "-h") == 0) {
			fputs(help, stdout);
			free(files);
			return CLI_OK;
		}
		const char **val = strcmp(a, "--map") == 0 ? &o.map
			: strcmp(a, "--environments") == 0 ? &o.environments
			: strcmp(a, "--preservation") == 0 ? &o.preservation
			: strcmp(a, "--timescale") == 0 ? &o.timescale : NULL;
		if (val) {
			if (i + 1 >= argc) {
				free(files);
				return cli_usage("import", "%s needs a value", a);
			}
			*val = argv[++i];
		} else if (strcmp(a, "--dry-run") == 0) {
			o.dry_run = 1;
		} else if (strcmp(a, "--keep-guard-quotes") == 0) {
			o.keep_guard_quotes = 1;
		} else if (a[0] == '-' && a[1]) {
			free(files);
			return cli_usage("import", "unknown option '%s'", a);
		} else if (!dbpath) {
			dbpath = a;
		} else {
			files[nfiles++] = a;
		}
	}
	if (!dbpath || nfiles == 0) {
		free(files);
		return cli_usage("import", "expected a database and at least one file");
	}
	bc_err err = {0};
	bc_db *db = NULL;
	if (bc_db_open(&db, dbpath, &err) != BC_OK) {
		free(files);
		return cli_fail(&err);
	}
	int status = CLI_OK;
	report_state rs = {0, 0, isatty(2), 0};
	o.report = on_report;
	o.progress = on_progress;
	o.ctx = &rs;
	for (int f = 0; f < nfiles; f++) {
		bc_import_result r;
		memset(&err, 0, sizeof err);
		rs.printed = rs.suppressed = 0;
		int rc = bc_import_file(&r, db, files[f], &o, &err);
		if (rs.bar_drawn) {
			fputs("\r\033[K", stderr);
			rs.bar_drawn = 0;
		}
		if (rc != BC_OK) {
			cli_error("%s", err.msg[0] ? err.msg : bc_strerror(rc));
			int s = rc == BC_EINVALID || rc == BC_EEXISTS ? CLI_DATA : cli_exit_for(rc);
			if (s > status)
				status = s;
			continue;
		}
		if (rs.suppressed)
			cli_error("%s: ... and %lld more; see bathychron check %s --quarantine", files[f], rs.suppressed, dbpath);
		if (r.n_unguarded)
			cli_error("%s: removed the spreadsheet formula guard (a leading ') from %lld cells; --keep-guard-quotes keeps it",
				files[f], r.n_unguarded);
		if (r.n_age_conflicts)
			cli_error("%s: %lld rows stored with an age conflict (numbers and names disagree); see bathychron check %s",
				files[f], r.n_age_conflicts, dbpath);
		printf("%s: %lld rows read, %lld stored, %lld quarantined%s\n", files[f], r.n_read, r.n_stored, r.n_quarantined,
			o.dry_run ? " (dry run: nothing written)" : "");
		if (r.n_quarantined && status < CLI_DATA)
			status = CLI_DATA;
	}
	bc_db_close(db);
	free(files);
	return status;
}
