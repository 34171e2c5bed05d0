/*
 * cmd_plot.c - placeholder until the plot command lands; replaced whole.
 */
#include "cli.h"

int cmd_plot(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	cli_error("plot: not available in this build yet");
	return CLI_ENV;
}
