/*
 * cmd_init.c - bathychron init DB: a new database, never over a file.
 */
#include "cli.h"

#include <string.h>

static const char help[] =
	"usage: bathychron init DB\n\n"
	"Creates a new database file DB: an OGC GeoPackage 1.3 whose 'localities'\n"
	"layer a GIS opens directly, with the project's tables, the shipped charts\n"
	"(default: ICS chart 2024-12) and the shipped vocabularies. An existing\n"
	"file is never overwritten.\n";

int cmd_init(int argc, char **argv)
{
	if (argc == 2 && (strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0)) {
		fputs(help, stdout);
		return CLI_OK;
	}
	if (argc != 2 || argv[1][0] == '-')
		return cli_usage("init", "expected exactly one argument, the database file");
	bc_err err = {0};
	bc_db *db = NULL;
	if (bc_db_create(&db, argv[1], &err) != BC_OK)
		return cli_fail(&err);
	bc_db_close(db);
	printf("created %s (schema %d, GeoPackage 1.3)\n", argv[1], bc_db_schema_version());
	return CLI_OK;
}
