/*
 * cmd_check.c - placeholder until the check command lands; replaced whole.
 */
#include "cli.h"

int cmd_check(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	cli_error("check: not available in this build yet");
	return CLI_ENV;
}
