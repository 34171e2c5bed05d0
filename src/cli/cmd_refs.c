/*
 * cmd_refs.c - bathychron refs DB FILE.bib: BibTeX references in.
 */
#include "cli.h"

#include <string.h>

static const char help[] =
	"usage: bathychron refs DB FILE.bib\n\n"
	"Loads the references of a BibTeX file (key, author, year, title, journal,\n"
	"volume, pages, doi; @string macros, # concatenation and TeX accents such\n"
	"as {\\\"u} \\'e \\c{c} \\ss are understood; @comment and @preamble are skipped).\n"
	"A key loaded before is updated with the new entry (the newest file wins) and\n"
	"counted as updated. Bad entries are reported as FILE:LINE: key: what, and\n"
	"skipped; the others are stored. A file with identical content is refused.\n"
	"Occurrences name a reference by its key in associatedReferences (matched\n"
	"exactly); 'bathychron check' lists keys with no reference.\n\n"
	"Exit status: 0 all entries stored, 1 bad entries reported or the file refused,\n"
	"2 usage error, 3 environment failure.\n";

static void on_bad(void *ctx, const char *msg)
{
	(void)ctx;
	cli_error("%s", msg);
}

int cmd_refs(int argc, char **argv)
{
	const char *pos[2] = {NULL, NULL};
	int npos = 0;
	for (int i = 1; i < argc; i++) {
		if (strcmp(argv[i], "--help") == 0 || strcmp(argv[i], "-h") == 0) {
			fputs(help, stdout);
			return CLI_OK;
		}
		if (argv[i][0] == '-' && argv[i][1])
			return cli_usage("refs", "unknown option '%s'", argv[i]);
		if (npos == 2)
			return cli_usage("refs", "expected a database and one BibTeX file");
		pos[npos++] = argv[i];
	}
	if (npos != 2)
		return cli_usage("refs", "expected a database and one BibTeX file");
	bc_err err = {0};
	bc_db *db = NULL;
	if (bc_db_open(&db, pos[0], &err) != BC_OK)
		return cli_fail(&err);
	bc_refs_result r;
	int rc = bc_refs_load(&r, db, pos[1], on_bad, NULL, &err);
	bc_db_close(db);
	if (rc != BC_OK) {
		cli_error("%s", err.msg[0] ? err.msg : bc_strerror(rc));
		return rc == BC_EINVALID || rc == BC_EEXISTS ? CLI_DATA : cli_exit_for(rc);
	}
	printf("%s: %lld references read, %lld new, %lld updated, %lld bad\n", pos[1], r.n_entries + r.n_bad, r.n_new, r.n_updated, r.n_bad);
	return r.n_bad ? CLI_DATA : CLI_OK;
}
