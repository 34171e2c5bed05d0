/*
 * cmd_shift.c - placeholder until the shift command lands; replaced whole.
 */
#include "cli.h"

int cmd_shift(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	cli_error("shift: not available in this build yet");
	return CLI_ENV;
}
