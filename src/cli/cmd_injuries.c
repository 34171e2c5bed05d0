/*
 * cmd_injuries.c - bathychron injuries import DB FILE: samples examined
 * for regenerating arms, validated and stored (bad rows quarantined).
 */
#include "cli.h"

#include <string.h>

static const char help[] =
	"usage: bathychron injuries import DB FILE [--timescale NAME] [--dry-run]\n\n"
	"Imports a CSV/TSV (UTF-8, header row) of samples examined for regenerating\n"
	"arms, for 'bathychron encounter'. One row is a sample or one individual:\n\n"
	"  locality (or site)         site name (required)\n"
	"  minimumDepthInMeters, maximumDepthInMeters (or the Paleodepth forms),\n"
	"    or depth ('350' or '200-500')  water depth or palaeodepth, metres (required)\n"
	"  age                        'Recent', a chart name, or numbers in Ma (required)\n"
	"  scientificName (or taxon)  (required)\n"
	"  individualsExamined, individualsRegenerating   a sample: individuals, and those\n"
	"                             with at least one regenerating arm\n"
	"  armsExamined, armsRegenerating   arm totals of a sample; or, with no\n"
	"                             individualsExamined, the arms of one individual\n"
	"  regenerationDays           mean duration of the recognisable regenerating\n"
	"                             state, days: '90' or '60-120'; or instead\n"
	"  regenerateLengthMm, regenerationRateMmPerDay   duration = length / rate\n"
	"                             (each a value or a range)\n"
	"  sampleID, recordedBy, associatedReferences     optional; other columns kept\n\n"
	"Every row that cannot be used is kept in the quarantine with file, line,\n"
	"field and reason ('bathychron check DB --quarantine'), and printed here.\n"
	"The import is one transaction; a file whose content was already imported\n"
	"is refused. Exclude animals damaged by collecting gear before importing.\n\n"
	"  --timescale NAME  chart for resolving ages (default: the database's)\n"
	"  --dry-run         validate and report, store nothing\n\n"
	"Exit status: 0 all rows stored, 1 rows quarantined or file already imported,\n"
	"2 usage, 3 environment.\n";

static void print_problem(void *ctx, const char *message)
{
	(void)ctx;
	cli_error("%s", message);
}

int cmd_injuries(int argc, char **argv)
{
	if (argc >= 2 && (strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0)) {
		fputs(help, stdout);
		return CLI_OK;
	}
	if (argc < 2 || strcmp(argv[1], "import") != 0)
		return cli_usage("injuries", "expected the subcommand 'import'");
	bc_injuries_import_options opts = BC_INJURIES_IMPORT_OPTIONS_INIT;
	const char *pos[2] = {NULL, NULL};
	int npos = 0;
	for (int i = 2; i < argc; i++) {
		if (strcmp(argv[i], "--help") == 0 || strcmp(argv[i], "-h") == 0) {
			fputs(help, stdout);
			return CLI_OK;
		} else if (strcmp(argv[i], "--dry-run") == 0) {
			opts.dry_run = 1;
		} else if (strcmp(argv[i], "--timescale") == 0) {
			if (++i >= argc)
				return cli_usage("injuries import", "--timescale needs a chart name");
			opts.timescale = argv[i];
		} else if (argv[i][0] == '-' && argv[i][1]) {
			return cli_usage("injuries import", "unknown option '%s'", argv[i]);
		} else if (npos < 2) {
			pos[npos++] = argv[i];
		} else {
			return cli_usage("injuries import", "expected DB and one FILE");
		}
	}
	if (npos != 2)
		return cli_usage("injuries import", "expected DB and one FILE");
	opts.on_problem = print_problem;
	bc_err err = {0};
	bc_db *db = NULL;
	if (bc_db_open(&db, pos[0], &err) != BC_OK)
		return cli_fail(&err);
	bc_injuries_import_result res;
	int rc = bc_injuries_import(&res, db, pos[1], &opts, &err);
	bc_db_close(db);
	if (rc == BC_EEXISTS) {
		cli_error("%s", err.msg);
		return CLI_DATA;
	}
	if (rc != BC_OK)
		return cli_fail(&err);
	printf("%s: %ld rows read, %ld stored (%ld individuals, %ld regenerating), %ld quarantined%s",
	       pos[1], res.n_read, res.n_stored, res.n_individuals, res.n_regenerating, res.n_quarantined,
	       opts.dry_run ? "; dry run, nothing stored\n" : "");
	if (!opts.dry_run)
		printf("; batch %lld\n", (long long)res.batch_id);
	return res.n_quarantined ? CLI_DATA : CLI_OK;
}
