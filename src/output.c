/*
 * output.c - the generic table writer: typed columns and rows of cells,
 * a summary block and a methods stamp, in csv, tsv, md, latex and json.
 * One table model, five serialisations; see output.h for the layouts.
 */
#include "output.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

typedef struct col {
	char *name;
	bc_col_type type;
	int digits;
} col;

typedef struct cell {
	double v;  /* NaN: missing (numeric columns) */
	char *s;   /* NULL: missing (text columns) */
} cell;

typedef struct meta {
	bc_meta_section sec;
	char *key;
	char *text; /* NULL for numbers */
	double num;
	int p;
} meta;

struct bc_table {
	char *rows_name;
	char *caption;
	char *tests_title; /* md heading of the tests section; NULL: "Tests across bins" */
	col *cols;
	size_t ncols, capcols;
	cell *cells; /* row-major, nrows x ncols */
	size_t nrows, caprows;
	meta *meta;
	size_t nmeta, capmeta;
};

static int oom(bc_err *err) { return bc_err_set(err, BC_ENOMEM, "out of memory"); }

int bc_output__table_new(bc_table **out, const char *rows_name, bc_err *err)
{
	*out = NULL;
	bc_table *t = bc__calloc(1, sizeof *t);
	if (!t || !(t->rows_name = bc__strdup(rows_name ? rows_name : "rows"))) {
		free(t);
		return oom(err);
	}
	*out = t;
	return BC_OK;
}

void bc_output__table_free(bc_table *t)
{
	if (!t)
		return;
	for (size_t i = 0; i < t->nrows * t->ncols; i++)
		free(t->cells[i].s);
	for (size_t i = 0; i < t->ncols; i++)
		free(t->cols[i].name);
	for (size_t i = 0; i < t->nmeta; i++) {
		free(t->meta[i].key);
		free(t->meta[i].text);
	}
	free(t->cells);
	free(t->cols);
	free(t->meta);
	free(t->rows_name);
	free(t->caption);
	free(t->tests_title);
	free(t);
}

int bc_output__add_column(bc_table *t, const char *name, bc_col_type type, int digits, bc_err *err)
{
	if (t->nrows)
		return bc_err_set(err, BC_EUSAGE, "table: column %s added after the first row", name);
	col *cols = bc__grow(t->cols, t->ncols, &t->capcols, sizeof *cols, 16);
	if (!cols)
		return oom(err);
	t->cols = cols;
	col c = {bc__strdup(name), type, digits};
	if (!c.name)
		return oom(err);
	t->cols[t->ncols++] = c;
	return BC_OK;
}

size_t bc_output__column_count(const bc_table *t) { return t->ncols; }
const char *bc_output__column_name(const bc_table *t, size_t c) { return c < t->ncols ? t->cols[c].name : NULL; }
size_t bc_output__row_count(const bc_table *t) { return t->nrows; }

int bc_output__add_row(bc_table *t, bc_err *err)
{
	size_t need = (t->nrows + 1) * t->ncols;
	if (need > t->caprows) {
		size_t nc = t->caprows ? 2 * t->caprows : 16 * (t->ncols ? t->ncols : 1);
		while (nc < need)
			nc *= 2;
		cell *q = bc__realloc(t->cells, nc * sizeof *q);
		if (!q)
			return oom(err);
		t->cells = q;
		t->caprows = nc;
	}
	for (size_t c = 0; c < t->ncols; c++)
		t->cells[t->nrows * t->ncols + c] = (cell){NAN, NULL};
	t->nrows++;
	return BC_OK;
}

static cell *last_cell(bc_table *t, size_t c)
{
	if (!t->nrows || c >= t->ncols)
		return NULL;
	return &t->cells[(t->nrows - 1) * t->ncols + c];
}

int bc_output__set_text(bc_table *t, size_t c, const char *text, bc_err *err)
{
	cell *x = last_cell(t, c);
	if (!x)
		return bc_err_set(err, BC_EUSAGE, "table: no cell %zu in the last row", c);
	char *s = bc__strdup(text ? text : "");
	if (!s)
		return oom(err);
	free(x->s);
	x->s = s;
	return BC_OK;
}

void bc_output__set_num(bc_table *t, size_t c, double v)
{
	cell *x = last_cell(t, c);
	if (x)
		x->v = v;
}

int bc_output__set_tests_title(bc_table *t, const char *title, bc_err *err)
{
	char *s = bc__strdup(title ? title : "");
	if (!s)
		return oom(err);
	free(t->tests_title);
	t->tests_title = s;
	return BC_OK;
}

int bc_output__set_caption(bc_table *t, const char *caption, bc_err *err)
{
	char *s = bc__strdup(caption ? caption : "");
	if (!s)
		return oom(err);
	free(t->caption);
	t->caption = s;
	return BC_OK;
}

static int add_meta(bc_table *t, meta m, bc_err *err)
{
	meta *q = bc__grow(t->meta, t->nmeta, &t->capmeta, sizeof *q, 16);
	if (!q) {
		free(m.key);
		free(m.text);
		return oom(err);
	}
	t->meta = q;
	t->meta[t->nmeta++] = m;
	return BC_OK;
}

int bc_output__meta_text(bc_table *t, bc_meta_section sec, const char *key, bc_err *err, const char *fmt, ...)
{
	bc_buf b = {0};
	va_list ap;
	va_start(ap, fmt);
	char tmp[1];
	va_list ap2;
	va_copy(ap2, ap);
	int n = vsnprintf(tmp, sizeof tmp, fmt, ap2);
	va_end(ap2);
	if (n >= 0 && (b.data = bc__malloc((size_t)n + 1)) != NULL)
		vsnprintf(b.data, (size_t)n + 1, fmt, ap);
	va_end(ap);
	meta m = {sec, bc__strdup(key), b.data, NAN, 0};
	if (!m.key || !m.text) {
		free(m.key);
		free(m.text);
		return oom(err);
	}
	return add_meta(t, m, err);
}

int bc_output__meta_num(bc_table *t, bc_meta_section sec, const char *key, double v, int p, bc_err *err)
{
	meta m = {sec, bc__strdup(key), NULL, v, p};
	if (!m.key)
		return oom(err);
	return add_meta(t, m, err);
}

/* ---- number formatting ---------------------------------------------- */

/* Machine-readable formats keep full precision. */
static void fmt_machine(char *out, size_t n, bc_col_type type, double v)
{
	if (type == BC_COL_P)
		snprintf(out, n, "%.6g", v);
	else
		snprintf(out, n, "%.10g", v);
}

/* md and latex: rounded for reading. */
static void fmt_human(char *out, size_t n, bc_col_type type, int digits, double v)
{
	switch (type) {
	case BC_COL_COUNT:
		if (v == floor(v) && fabs(v) < 1e15)
			snprintf(out, n, "%.0f", v);
		else
			snprintf(out, n, "%.2f", v);
		break;
	case BC_COL_P:
		snprintf(out, n, "%.3g", v);
		break;
	default:
		if (digits >= 0)
			snprintf(out, n, "%.*f", digits, v);
		else
			snprintf(out, n, "%g", v);
		break;
	}
}

/* ---- escaping ------------------------------------------------------- */

static int put_csv_field(bc_buf *b, const char *s)
{
	if (!strpbrk(s, ",\"\r\n") && !(s[0] == ' ') && !(s[0] && s[strlen(s) - 1] == ' '))
		return bc__buf_puts(b, s);
	int rc = bc__buf_puts(b, "\"");
	for (const char *p = s; !rc && *p; p++)
		rc = *p == '"' ? bc__buf_puts(b, "\"\"") : bc__buf_append(b, p, 1);
	return rc ? rc : bc__buf_puts(b, "\"");
}

/* TSV has no quoting: tabs and line breaks inside a value become spaces. */
static int put_flat(bc_buf *b, const char *s, const char *bad)
{
	int rc = 0;
	for (const char *p = s; !rc && *p; p++)
		rc = strchr(bad, *p) ? bc__buf_puts(b, " ") : bc__buf_append(b, p, 1);
	return rc;
}

static int put_md(bc_buf *b, const char *s)
{
	int rc = 0;
	for (const char *p = s; !rc && *p; p++) {
		if (*p == '|')
			rc = bc__buf_puts(b, "\\|");
		else if (*p == '\n' || *p == '\r')
			rc = bc__buf_puts(b, " ");
		else
			rc = bc__buf_append(b, p, 1);
	}
	return rc;
}

int bc_output__latex_escape(bc_buf *b, const char *s)
{
	int rc = 0;
	for (const char *p = s; !rc && *p; p++) {
		switch (*p) {
		case '\\': rc = bc__buf_puts(b, "\\textbackslash{}"); break;
		case '&': case '%': case '$': case '#': case '_': case '{': case '}':
			rc = bc__buf_printf(b, "\\%c", *p);
			break;
		case '~': rc = bc__buf_puts(b, "\\textasciitilde{}"); break;
		case '^': rc = bc__buf_puts(b, "\\textasciicircum{}"); break;
		case '<': rc = bc__buf_puts(b, "\\textless{}"); break;
		case '>': rc = bc__buf_puts(b, "\\textgreater{}"); break;
		case '\n': case '\r': rc = bc__buf_puts(b, " "); break;
		default: rc = bc__buf_append(b, p, 1); break;
		}
	}
	return rc;
}

/* The text of a cell (or a meta entry) for a given format; "" when missing
 * and the caller prints its own missing marker. Returns 1 when missing. */
static int cell_text(char *out, size_t n, const col *c, const cell *x, int human)
{
	if (c->type == BC_COL_TEXT) {
		if (!x->s)
			return 1;
		snprintf(out, n, "%s", x->s);
		return 0;
	}
	if (isnan(x->v))
		return 1;
	if (human)
		fmt_human(out, n, c->type, c->digits, x->v);
	else
		fmt_machine(out, n, c->type, x->v);
	return 0;
}

static int meta_value(bc_buf *b, const meta *m, int human)
{
	if (m->text)
		return bc__buf_puts(b, m->text);
	if (isnan(m->num))
		return bc__buf_puts(b, "NA");
	char tmp[64];
	col c = {NULL, m->p ? BC_COL_P : BC_COL_REAL, -1};
	if (human)
		fmt_human(tmp, sizeof tmp, c.type, -1, m->num);
	else
		fmt_machine(tmp, sizeof tmp, c.type, m->num);
	return bc__buf_puts(b, tmp);
}

static const char *section_name(bc_meta_section s) { return s == BC_META_TESTS ? "tests" : "stamp"; }

/* ---- writers -------------------------------------------------------- */

static int write_delimited(const bc_table *t, bc_buf *b, char sep)
{
	int rc = 0;
	char tmp[4096];
	const char sepstr[2] = {sep, 0};
	for (size_t c = 0; !rc && c < t->ncols; c++) {
		if (c)
			rc = bc__buf_puts(b, sepstr);
		if (!rc)
			rc = sep == ',' ? put_csv_field(b, t->cols[c].name) : put_flat(b, t->cols[c].name, "\t\r\n");
	}
	if (!rc)
		rc = bc__buf_puts(b, "\n");
	for (size_t r = 0; !rc && r < t->nrows; r++) {
		for (size_t c = 0; !rc && c < t->ncols; c++) {
			if (c)
				rc = bc__buf_puts(b, sepstr);
			const cell *x = &t->cells[r * t->ncols + c];
			if (rc)
				break;
			if (cell_text(tmp, sizeof tmp, &t->cols[c], x, 0))
				rc = bc__buf_puts(b, "NA");
			else if (t->cols[c].type == BC_COL_TEXT) {
				/* = + - @ tab CR first: a leading ' so a spreadsheet shows
				 * text instead of running a formula (OWASP "CSV Injection"),
				 * as export does; a bin name can come from a user's file. */
				const char *s = x->s;
				char *g = NULL;
				if (s[0] && strchr("=+-@\t\r", s[0])) {
					if (!(g = bc__malloc(strlen(s) + 2))) {
						rc = BC_ENOMEM;
						break;
					}
					g[0] = '\'';
					strcpy(g + 1, s);
					s = g;
				}
				rc = sep == ',' ? put_csv_field(b, s) : put_flat(b, s, "\t\r\n");
				free(g);
			}
			else
				rc = bc__buf_puts(b, tmp);
		}
		if (!rc)
			rc = bc__buf_puts(b, "\n");
	}
	/* Comment lines last: the header stays the first line. */
	for (int s = BC_META_TESTS; s <= BC_META_STAMP; s++)
		for (size_t i = 0; !rc && i < t->nmeta; i++) {
			const meta *m = &t->meta[i];
			if ((int)m->sec != s)
				continue;
			bc_buf v = {0};
			rc = meta_value(&v, m, 0);
			if (!rc)
				rc = bc__buf_printf(b, "# %s.%s: ", section_name(m->sec), m->key);
			if (!rc)
				rc = put_flat(b, v.data ? v.data : "", "\r\n");
			if (!rc)
				rc = bc__buf_puts(b, "\n");
			bc__buf_free(&v);
		}
	return rc;
}

static int write_md(const bc_table *t, bc_buf *b)
{
	int rc = 0;
	char tmp[4096];
	rc = bc__buf_puts(b, "|");
	for (size_t c = 0; !rc && c < t->ncols; c++) {
		rc = bc__buf_puts(b, " ");
		if (!rc)
			rc = put_md(b, t->cols[c].name);
		if (!rc)
			rc = bc__buf_puts(b, " |");
	}
	if (!rc)
		rc = bc__buf_puts(b, "\n|");
	for (size_t c = 0; !rc && c < t->ncols; c++)
		rc = bc__buf_puts(b, t->cols[c].type == BC_COL_TEXT ? " --- |" : " ---: |");
	if (!rc)
		rc = bc__buf_puts(b, "\n");
	for (size_t r = 0; !rc && r < t->nrows; r++) {
		rc = bc__buf_puts(b, "|");
		for (size_t c = 0; !rc && c < t->ncols; c++) {
			const cell *x = &t->cells[r * t->ncols + c];
			rc = bc__buf_puts(b, " ");
			if (!rc)
				rc = cell_text(tmp, sizeof tmp, &t->cols[c], x, 1) ? bc__buf_puts(b, "--") : put_md(b, tmp);
			if (!rc)
				rc = bc__buf_puts(b, " |");
		}
		if (!rc)
			rc = bc__buf_puts(b, "\n");
	}
	static const char *const titles[] = {"Tests across bins", "Methods stamp"};
	for (int s = BC_META_TESTS; !rc && s <= BC_META_STAMP; s++) {
		int first = 1;
		for (size_t i = 0; !rc && i < t->nmeta; i++) {
			const meta *m = &t->meta[i];
			if ((int)m->sec != s)
				continue;
			if (first) {
				rc = bc__buf_printf(b, "\n**%s**\n\n", s == BC_META_TESTS && t->tests_title ? t->tests_title : titles[s]);
				first = 0;
			}
			bc_buf v = {0};
			if (!rc)
				rc = meta_value(&v, m, 1);
			if (!rc)
				rc = bc__buf_printf(b, "- %s: ", m->key);
			if (!rc)
				rc = put_md(b, v.data ? v.data : "");
			if (!rc)
				rc = bc__buf_puts(b, "\n");
			bc__buf_free(&v);
		}
	}
	return rc;
}

static int write_latex(const bc_table *t, bc_buf *b)
{
	int rc = bc__buf_puts(b, "% bathychron table; needs \\usepackage{booktabs}\n");
	char tmp[4096];
	for (size_t i = 0; !rc && i < t->nmeta; i++) {
		const meta *m = &t->meta[i];
		if (m->sec != BC_META_STAMP)
			continue;
		bc_buf v = {0};
		rc = meta_value(&v, m, 0);
		if (!rc)
			rc = bc__buf_printf(b, "%% stamp.%s: ", m->key);
		if (!rc)
			rc = put_flat(b, v.data ? v.data : "", "\r\n");
		if (!rc)
			rc = bc__buf_puts(b, "\n");
		bc__buf_free(&v);
	}
	if (!rc)
		rc = bc__buf_puts(b, "\\begin{table}[htbp]\n\\centering\n");
	if (!rc && t->caption) {
		rc = bc__buf_puts(b, "\\caption{");
		if (!rc)
			rc = bc_output__latex_escape(b, t->caption);
		if (!rc)
			rc = bc__buf_puts(b, "}\n");
	}
	if (!rc)
		rc = bc__buf_printf(b, "\\label{tab:bathychron-%s}\n\\begin{tabular}{", t->rows_name);
	for (size_t c = 0; !rc && c < t->ncols; c++)
		rc = bc__buf_puts(b, t->cols[c].type == BC_COL_TEXT ? "l" : "r");
	if (!rc)
		rc = bc__buf_puts(b, "}\n\\toprule\n");
	for (size_t c = 0; !rc && c < t->ncols; c++) {
		if (c)
			rc = bc__buf_puts(b, " & ");
		if (!rc)
			rc = bc_output__latex_escape(b, t->cols[c].name);
	}
	if (!rc)
		rc = bc__buf_puts(b, " \\\\\n\\midrule\n");
	for (size_t r = 0; !rc && r < t->nrows; r++) {
		for (size_t c = 0; !rc && c < t->ncols; c++) {
			const cell *x = &t->cells[r * t->ncols + c];
			if (c)
				rc = bc__buf_puts(b, " & ");
			if (!rc)
				rc = cell_text(tmp, sizeof tmp, &t->cols[c], x, 1) ? bc__buf_puts(b, "--") : bc_output__latex_escape(b, tmp);
		}
		if (!rc)
			rc = bc__buf_puts(b, " \\\\\n");
	}
	if (!rc)
		rc = bc__buf_puts(b, "\\bottomrule\n\\end{tabular}\n");
	int any = 0;
	for (size_t i = 0; !rc && i < t->nmeta; i++) {
		const meta *m = &t->meta[i];
		if (m->sec != BC_META_TESTS)
			continue;
		if (!any) {
			rc = bc__buf_puts(b, "\\par\\smallskip\n\\begin{minipage}{\\linewidth}\\footnotesize\n");
			any = 1;
		} else {
			rc = bc__buf_puts(b, "\\\\\n");
		}
		bc_buf v = {0};
		if (!rc)
			rc = meta_value(&v, m, 1);
		if (!rc)
			rc = bc_output__latex_escape(b, m->key);
		if (!rc)
			rc = bc__buf_puts(b, ": ");
		if (!rc)
			rc = bc_output__latex_escape(b, v.data ? v.data : "");
		bc__buf_free(&v);
	}
	if (!rc && any)
		rc = bc__buf_puts(b, "\n\\end{minipage}\n");
	if (!rc)
		rc = bc__buf_puts(b, "\\end{table}\n");
	return rc;
}

static int json_number(bc_buf *b, bc_col_type type, double v)
{
	if (!isfinite(v))
		return bc__buf_puts(b, "null");
	char tmp[64];
	fmt_machine(tmp, sizeof tmp, type, v);
	return bc__buf_puts(b, tmp);
}

static int json_meta(const bc_table *t, bc_buf *b, bc_meta_section sec)
{
	int rc = bc__buf_puts(b, "{");
	int first = 1;
	for (size_t i = 0; !rc && i < t->nmeta; i++) {
		const meta *m = &t->meta[i];
		if (m->sec != sec)
			continue;
		rc = bc__buf_puts(b, first ? "\n    " : ",\n    ");
		first = 0;
		if (!rc)
			rc = bc__buf_json_string(b, m->key);
		if (!rc)
			rc = bc__buf_puts(b, ": ");
		if (!rc)
			rc = m->text ? bc__buf_json_string(b, m->text) : json_number(b, m->p ? BC_COL_P : BC_COL_REAL, m->num);
	}
	if (!rc)
		rc = bc__buf_puts(b, first ? "}" : "\n  }");
	return rc;
}

static int write_json(const bc_table *t, bc_buf *b)
{
	int rc = bc__buf_puts(b, "{\n  \"stamp\": ");
	if (!rc)
		rc = json_meta(t, b, BC_META_STAMP);
	if (!rc)
		rc = bc__buf_puts(b, ",\n  ");
	if (!rc)
		rc = bc__buf_json_string(b, t->rows_name);
	if (!rc)
		rc = bc__buf_puts(b, ": [");
	for (size_t r = 0; !rc && r < t->nrows; r++) {
		rc = bc__buf_puts(b, r ? ",\n    {" : "\n    {");
		for (size_t c = 0; !rc && c < t->ncols; c++) {
			const cell *x = &t->cells[r * t->ncols + c];
			if (c)
				rc = bc__buf_puts(b, ", ");
			if (!rc)
				rc = bc__buf_json_string(b, t->cols[c].name);
			if (!rc)
				rc = bc__buf_puts(b, ": ");
			if (rc)
				break;
			if (t->cols[c].type == BC_COL_TEXT)
				rc = x->s ? bc__buf_json_string(b, x->s) : bc__buf_puts(b, "null");
			else
				rc = json_number(b, t->cols[c].type, x->v);
		}
		if (!rc)
			rc = bc__buf_puts(b, "}");
	}
	if (!rc)
		rc = bc__buf_puts(b, t->nrows ? "\n  ],\n  \"tests\": " : "],\n  \"tests\": ");
	if (!rc)
		rc = json_meta(t, b, BC_META_TESTS);
	if (!rc)
		rc = bc__buf_puts(b, "\n}\n");
	return rc;
}

int bc_output__write(const bc_table *t, FILE *f, bc_format format, bc_err *err)
{
	bc_buf b = {0};
	int rc;
	switch (format) {
	case BC_FORMAT_CSV: rc = write_delimited(t, &b, ','); break;
	case BC_FORMAT_TSV: rc = write_delimited(t, &b, '\t'); break;
	case BC_FORMAT_MD: rc = write_md(t, &b); break;
	case BC_FORMAT_LATEX: rc = write_latex(t, &b); break;
	case BC_FORMAT_JSON: rc = write_json(t, &b); break;
	default:
		return bc_err_set(err, BC_EUSAGE, "unknown output format %d", (int)format);
	}
	if (rc) {
		bc__buf_free(&b);
		return oom(err);
	}
	if (b.len && fwrite(b.data, 1, b.len, f) != b.len)
		rc = bc_err_set(err, BC_EIO, "writing the table failed");
	bc__buf_free(&b);
	return rc;
}
