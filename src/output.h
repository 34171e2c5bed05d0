/*
 * output.h - the generic table writer every result table uses (shift,
 * and later commands): typed columns, rows of cells, a summary block
 * ("tests") and the methods stamp, written as csv, tsv, md, latex or json.
 *
 * Layout per format (documented for users in doc/output.md):
 *  - csv/tsv: the header and one line per row, then every summary and
 *    stamp entry as a comment line "# section.key: value" at the end, so
 *    R's read.csv(comment.char = "#") and pandas' read_csv(comment="#")
 *    read the table directly. Missing values are "NA".
 *  - md: a pipe table, then "Tests" and "Methods stamp" bullet lists.
 *  - latex: a booktabs table with caption; summary as a footnote block
 *    below the tabular; the stamp as '%' comment lines. Missing: "--".
 *  - json: {"stamp": {...}, "<rows>": [{column: value}, ...], "tests": {...}};
 *    missing values are null.
 */
#ifndef BC_OUTPUT_H
#define BC_OUTPUT_H

#include "internal.h"

typedef enum bc_col_type {
	BC_COL_TEXT = 0, /* a string */
	BC_COL_COUNT,    /* a count: integral values print without decimals */
	BC_COL_REAL,     /* a number; `digits` decimals in md/latex (-1: %g) */
	BC_COL_P         /* a p-value: 3 significant digits in md/latex */
} bc_col_type;

/** Where a metadata entry goes. */
typedef enum bc_meta_section {
	BC_META_TESTS = 0, /* results below the table (across-bin tests) */
	BC_META_STAMP      /* the methods stamp */
} bc_meta_section;

typedef struct bc_table bc_table;

/** A new empty table; `rows_name` names the row array in JSON ("bins"). Free with bc_output__table_free. */
int bc_output__table_new(bc_table **out, const char *rows_name, bc_err *err);
void bc_output__table_free(bc_table *t);

/** Appends a column (before the first row). `name` is copied. */
int bc_output__add_column(bc_table *t, const char *name, bc_col_type type, int digits, bc_err *err);
size_t bc_output__column_count(const bc_table *t);
const char *bc_output__column_name(const bc_table *t, size_t col);

/** Appends a row whose cells are all missing; later set_* calls fill it. */
int bc_output__add_row(bc_table *t, bc_err *err);
size_t bc_output__row_count(const bc_table *t);
/** Sets a cell of the last row. Text is copied; NaN numbers are missing. */
int bc_output__set_text(bc_table *t, size_t col, const char *text, bc_err *err);
void bc_output__set_num(bc_table *t, size_t col, double v);

/** The md heading of the tests section (default "Tests across bins"). Copied. */
int bc_output__set_tests_title(bc_table *t, const char *title, bc_err *err);

/** The LaTeX caption (plain text; escaped on output). Copied. */
int bc_output__set_caption(bc_table *t, const char *caption, bc_err *err);

/** Appends a text entry to a metadata section. Keys are plain identifiers. */
int bc_output__meta_text(bc_table *t, bc_meta_section sec, const char *key, bc_err *err, const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 5, 6)))
#endif
	;
/** Appends a numeric entry (NaN = missing; `p` non-zero formats it as a p-value). */
int bc_output__meta_num(bc_table *t, bc_meta_section sec, const char *key, double v, int p, bc_err *err);

/** Writes the whole table in `format`. BC_EIO when the stream fails. */
int bc_output__write(const bc_table *t, FILE *f, bc_format format, bc_err *err);

/** Appends `s` to `b` with LaTeX special characters escaped. */
int bc_output__latex_escape(bc_buf *b, const char *s);

#endif
