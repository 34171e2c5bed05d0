/*
 * cmd_import.c - placeholder until the import command lands; replaced whole.
 */
#include "cli.h"

int cmd_import(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	cli_error("import: not available in this build yet");
	return CLI_ENV;
}
