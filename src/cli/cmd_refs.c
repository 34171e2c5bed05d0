/*
 * cmd_refs.c - placeholder until the refs command lands; replaced whole.
 */
#include "cli.h"

int cmd_refs(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	cli_error("refs: not available in this build yet");
	return CLI_ENV;
}
