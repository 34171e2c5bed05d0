/*
 * cli.h - shared pieces of the command-line front end: exit codes, error
 * printing, and the command table. Commands use only bathychron.h.
 */
#ifndef BC_CLI_H
#define BC_CLI_H

#include "bathychron.h"

enum {
	CLI_OK = 0,       /* success */
	CLI_DATA = 1,     /* data problems were reported */
	CLI_USAGE = 2,    /* the command line is wrong */
	CLI_ENV = 3       /* missing file, database locked, library error */
};

/** Exit status for a library error code. */
int cli_exit_for(int code);
/** Prints "bathychron: MESSAGE" to stderr. */
void cli_error(const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 1, 2)))
#endif
	;
/** Prints the error and returns its exit status. */
int cli_fail(const bc_err *err);
/** Prints "bathychron: CMD: MESSAGE" plus a hint to use --help; returns CLI_USAGE. */
int cli_usage(const char *cmd, const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 2, 3)))
#endif
	;
/** Flushes and closes stdout, reporting a write error; returns the exit status to use. */
int cli_finish(int status);
/** Parses a finite double; returns 0 or -1. */
int cli_parse_double(const char *s, double *out);
/** Parses a non-negative integer; returns 0 or -1. */
int cli_parse_long(const char *s, long *out);

/* One entry point per command: argv[0] is the command name. */
int cmd_init(int argc, char **argv);
int cmd_timescale(int argc, char **argv);
int cmd_resolve(int argc, char **argv);
int cmd_import(int argc, char **argv);
int cmd_refs(int argc, char **argv);
int cmd_check(int argc, char **argv);
int cmd_shift(int argc, char **argv);
int cmd_plot(int argc, char **argv);
int cmd_export(int argc, char **argv);
int cmd_injuries(int argc, char **argv);
int cmd_encounter(int argc, char **argv);

#endif
