/*
 * cmd_resolve.c - placeholder until the resolve command lands; replaced whole.
 */
#include "cli.h"

int cmd_resolve(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	cli_error("resolve: not available in this build yet");
	return CLI_ENV;
}
