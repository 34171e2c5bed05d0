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

/* ---- options shared by shift, plot and ranges (shift_options.c) ---- */

/* Option groups a command accepts (bit mask for cli_shift_arg). */
enum {
	CLI_SHIFT_SELECT = 1u,    /* --group --taxon --preservation --region */
	CLI_SHIFT_TIMESCALE = 2u, /* --timescale */
	CLI_SHIFT_BINNING = 4u,   /* --bins --span */
	CLI_SHIFT_ZONING = 8u,    /* --split --zones */
	CLI_SHIFT_LEVEL = 16u,    /* --level */
	CLI_SHIFT_DRAWS = 32u,    /* --draws --seed --threads --resample */
	CLI_SHIFT_BOOTSTRAP = 64u, /* --bootstrap */
	CLI_SHIFT_BIAS = 128u,    /* --weight-references --background --background-with-focal --quota --taphonomy */
	CLI_SHIFT_COVERAGE = 256u, /* --cell-km */
	CLI_SHIFT_ALL = 511u
};

/** What the shared options set. Start from CLI_SHIFT_ARGS_INIT. */
typedef struct cli_shift_args {
	bc_shift_options opts;
	const char *db_path;
	int have_split, have_zones;
} cli_shift_args;
#define CLI_SHIFT_ARGS_INIT {BC_SHIFT_OPTIONS_INIT, NULL, 0, 0}

/** Help text of each group, identical in every command that takes it. */
extern const char cli_shift_help_selection[];
extern const char cli_shift_help_binning[];
extern const char cli_shift_help_zoning[];
extern const char cli_shift_help_draws[];     /* --draws --seed --threads --resample --bootstrap */
extern const char cli_shift_help_bias[];

/**
 * Splits "--name=value", "--name" or "-n" into the name without dashes
 * (copied into `buf` when an '=' is present) and the inline value (NULL
 * when none). Returns the name.
 */
const char *cli_opt_name(const char *arg, char *buf, size_t cap, const char **value);
/** The option's value: `inline_value`, else the next argument (advancing *i);
 * NULL after printing a usage message when there is none. */
const char *cli_opt_value(const char *cmd, int argc, char **argv, int *i, const char *inline_value);
/**
 * Takes argv[*i] if it is the database argument or an option of `groups`
 * (a separate value advances *i). Returns 1 when taken, 0 when it is not
 * one of these (the caller handles it), -1 after printing a usage message.
 */
int cli_shift_arg(const char *cmd, unsigned groups, int argc, char **argv, int *i, cli_shift_args *a);
/** The CLI_SHIFT_* group of a shared option name (without dashes), or 0. */
unsigned cli_shift_option_group(const char *name);
/** After the loop: a database was given, --split and --zones not both. CLI_OK or CLI_USAGE. */
int cli_shift_args_done(const char *cmd, const cli_shift_args *a);

/* One entry point per command: argv[0] is the command name. */
int cmd_init(int argc, char **argv);
int cmd_timescale(int argc, char **argv);
int cmd_resolve(int argc, char **argv);
int cmd_import(int argc, char **argv);
int cmd_refs(int argc, char **argv);
int cmd_check(int argc, char **argv);
int cmd_shift(int argc, char **argv);
int cmd_plot(int argc, char **argv);
int cmd_ranges(int argc, char **argv);
int cmd_export(int argc, char **argv);
int cmd_injuries(int argc, char **argv);
int cmd_encounter(int argc, char **argv);

#endif
