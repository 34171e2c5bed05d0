/*
 * cmd_timescale.c - placeholder until the timescale command lands; replaced whole.
 */
#include "cli.h"

int cmd_timescale(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	cli_error("timescale: not available in this build yet");
	return CLI_ENV;
}
