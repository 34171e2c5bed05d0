/*
 * cmd_export.c - placeholder until the export command lands; replaced whole.
 */
#include "cli.h"

int cmd_export(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	cli_error("export: not available in this build yet");
	return CLI_ENV;
}
