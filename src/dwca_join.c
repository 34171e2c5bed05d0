/*
 * dwca_join.c - Darwin Core Archive records: each core row with its
 * extension rows joined by coreid; MeasurementOrFact palaeodepth and
 * preservation and Chronometric Age values mapped onto the design.md
 * columns (doc/dwca.md); orphan extension rows kept as problem records.
 */
#include "dwca_impl.h"

#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

static void problem(bc_dwca *a, const char *where, long line, const char *field, const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 5, 6)))
#endif
	;
static void problem(bc_dwca *a, const char *where, long line, const char *field, const char *fmt, ...)
{
	if (a->has_problem)
		return;
	a->has_problem = 1;
	snprintf(a->problem_field, sizeof a->problem_field, "%s", field);
	va_list ap;
	va_start(ap, fmt);
	int n = vsnprintf(a->problem, sizeof a->problem, fmt, ap);
	va_end(ap);
	/* a problem found in an extension row names that row */
	if (n >= 0 && (size_t)n < sizeof a->problem && (line != a->line || strcmp(where, bc_dwca__where(a)) != 0))
		snprintf(a->problem + n, sizeof a->problem - (size_t)n, " (%s:%ld)", where, line);
}

static int set_val(bc_dwca *a, int col, const char *v)
{
	char *c = bc__strdup(v);
	if (!c)
		return BC_ENOMEM;
	free(a->vals[col]);
	a->vals[col] = c;
	return BC_OK;
}

/* Value of the extension field whose column is `col` in row x ("" if none). */
static const char *ext_value(const bc_dwca *a, const ext_row *x, const char *col)
{
	const dw_part *p = &a->parts[x->part];
	for (size_t i = 0; i < p->nf; i++) {
		if (strcmp(p->f[i].col, col) != 0)
			continue;
		const char *v = p->f[i].index >= 0 && (size_t)p->f[i].index < x->n ? x->text + x->off[p->f[i].index] : "";
		return *v ? v : p->f[i].def ? p->f[i].def : "";
	}
	return "";
}

/* Puts an extension-derived value into a column; a different value already
 * there is a problem, not an overwrite. */
static int merge_val(bc_dwca *a, const ext_row *x, const char *col, const char *v)
{
	int i = bc_dwca__col_find(a, col);
	if (i < 0 || !*v)
		return BC_OK;
	const char *have = a->vals[i];
	if (!have || !*have)
		return set_val(a, i, v);
	double h, n;
	if (strcmp(have, v) == 0 || (bc_dwca__parse_number(have, &h) == 0 && bc_dwca__parse_number(v, &n) == 0 && fabs(h - n) <= 1e-9 * fmax(1.0, fabs(h))))
		return BC_OK;
	problem(a, a->parts[x->part].where, x->line, col, "'%s' here disagrees with '%s' given for the same occurrence", v, have);
	return BC_OK;
}

/* Appends row x as a JSON object to the text in `b` (an array being built). */
static int ext_json(const bc_dwca *a, const ext_row *x, bc_buf *b)
{
	const dw_part *p = &a->parts[x->part];
	int rc = bc__buf_puts(b, b->len ? "," : "[");
	rc |= bc__buf_puts(b, "{");
	int first = 1;
	for (size_t i = 0; i < p->nf; i++) {
		const char *v = ext_value(a, x, p->f[i].col);
		if (!*v)
			continue;
		rc |= bc__buf_puts(b, first ? "" : ",");
		rc |= bc__buf_json_string(b, p->f[i].col);
		rc |= bc__buf_puts(b, ":");
		rc |= bc__buf_json_string(b, v);
		first = 0;
	}
	for (size_t c = 0; c < x->n; c++) {
		int mapped = (long)c == p->key_index;
		for (size_t i = 0; i < p->nf && !mapped; i++)
			mapped = p->f[i].index == (long)c;
		const char *v = x->text + x->off[c];
		if (mapped || !*v)
			continue;
		char key[64];
		if (c < p->nheader && p->header[c][0])
			rc |= bc__buf_puts(b, first ? "" : ","), rc |= bc__buf_json_string(b, p->header[c]);
		else
			snprintf(key, sizeof key, "column_%zu", c + 1), rc |= bc__buf_puts(b, first ? "" : ","), rc |= bc__buf_json_string(b, key);
		rc |= bc__buf_puts(b, ":");
		rc |= bc__buf_json_string(b, v);
		first = 0;
	}
	rc |= bc__buf_puts(b, "}");
	return rc ? BC_ENOMEM : BC_OK;
}

/* measurementType values that fill the project's columns (docs/dwca.md). */
enum { MOF_NONE, MOF_MIN, MOF_MAX, MOF_BOTH, MOF_ENV, MOF_PRES };
static const struct { const char *type; int what; } mof_types[] = {
	{"minimum paleodepth", MOF_MIN}, {"min paleodepth", MOF_MIN}, {"minimumpaleodepthinmeters", MOF_MIN},
	{"minimum paleodepth in meters", MOF_MIN}, {"minimum paleodepth in metres", MOF_MIN},
	{"maximum paleodepth", MOF_MAX}, {"max paleodepth", MOF_MAX}, {"maximumpaleodepthinmeters", MOF_MAX},
	{"maximum paleodepth in meters", MOF_MAX}, {"maximum paleodepth in metres", MOF_MAX},
	{"paleodepth", MOF_BOTH}, {"paleo depth", MOF_BOTH}, {"paleowater depth", MOF_BOTH},
	{"paleobathymetry", MOF_BOTH},
	{"depositional environment", MOF_ENV}, {"depositionalenvironment", MOF_ENV},
	{"preservation mode", MOF_PRES}, {"preservationmode", MOF_PRES}, {"preservation", MOF_PRES},
};

/* Length units for palaeodepths, in metres. Foot: international foot,
 * exactly 0.3048 m; fathom: 6 ft = 1.8288 m (NIST Handbook 44, App. C). */
static const struct { const char *unit; double m; } depth_units[] = {
	{"", 1.0}, {"m", 1.0}, {"metre", 1.0}, {"metres", 1.0}, {"meter", 1.0}, {"meters", 1.0},
	{"ft", 0.3048}, {"foot", 0.3048}, {"feet", 0.3048},
	{"fathom", 1.8288}, {"fathoms", 1.8288}, {"fm", 1.8288}, {"ftm", 1.8288},
};

/* Reference systems of chronometric ages, in Ma. "BP" counts from 1950;
 * the 76 years to the present are far below any geological resolution. */
static const struct { const char *rs; double ma; } age_units[] = {
	{"ma", 1.0}, {"mya", 1.0}, {"myr", 1.0}, {"my", 1.0}, {"ma bp", 1.0}, {"million years", 1.0},
	{"ka", 1e-3}, {"kya", 1e-3}, {"kyr", 1e-3}, {"ka bp", 1e-3}, {"thousand years", 1e-3},
	{"bp", 1e-6}, {"years bp", 1e-6}, {"yr bp", 1e-6}, {"ybp", 1e-6}, {"cal bp", 1e-6},
	{"years", 1e-6}, {"yr", 1e-6}, {"a", 1e-6}, {"a bp", 1e-6},
};

static int depth_value(bc_dwca *a, const ext_row *x, const char *v, const char *unit, double *lo, double *hi)
{
	const char *where = a->parts[x->part].where;
	char u[64];
	bc_dwca__norm_key(unit, u, sizeof u);
	double f = -1;
	for (size_t i = 0; i < sizeof depth_units / sizeof depth_units[0]; i++)
		if (strcmp(u, depth_units[i].unit) == 0)
			f = depth_units[i].m;
	if (f < 0) {
		problem(a, where, x->line, "measurementUnit", "unit '%s' of a palaeodepth is not known (m, ft or fathom)", unit);
		return -1;
	}
	if (bc_dwca__parse_number(v, lo) == 0) {
		*hi = *lo;
	} else {
		/* a range "A-B" or "A–B" */
		char *t = bc_dwca__trim_copy(v);
		char *dash = NULL;
		if (t)
			for (char *s = t + 1; *s && !dash; s++)
				if (*s == '-' || (strncmp(s, "\xE2\x80\x93", 3) == 0))
					dash = s;
		int ok = 0;
		if (dash) {
			size_t dl = *dash == '-' ? 1 : 3;
			char *second = dash + dl;
			*dash = '\0';
			ok = bc_dwca__parse_number(t, lo) == 0 && bc_dwca__parse_number(second, hi) == 0;
		}
		free(t);
		if (!ok) {
			problem(a, where, x->line, "measurementValue", "palaeodepth '%s' is not a number or a range A-B", v);
			return -1;
		}
	}
	*lo *= f;
	*hi *= f;
	return 0;
}

static int apply_mof(bc_dwca *a, ext_row *x, bc_buf *json)
{
	char t[128];
	bc_dwca__norm_key(ext_value(a, x, "measurementType"), t, sizeof t);
	int what = MOF_NONE;
	for (size_t i = 0; i < sizeof mof_types / sizeof mof_types[0]; i++)
		if (strcmp(t, mof_types[i].type) == 0)
			what = mof_types[i].what;
	const char *v = ext_value(a, x, "measurementValue");
	/* rows we do not map, and mapped rows carrying more than type, value
	 * and unit (remarks, method, who), are kept whole as JSON */
	int more = 0;
	const dw_part *p = &a->parts[x->part];
	for (size_t i = 0; i < p->nf; i++) {
		const char *c = p->f[i].col;
		if (strcmp(c, "measurementType") && strcmp(c, "measurementValue") && strcmp(c, "measurementUnit") &&
			*ext_value(a, x, c))
			more = 1;
	}
	if (what == MOF_NONE || more)
		if (ext_json(a, x, json))
			return BC_ENOMEM;
	if (what == MOF_NONE || !*v)
		return BC_OK;
	if (what == MOF_ENV)
		return merge_val(a, x, "depositionalEnvironment", v);
	if (what == MOF_PRES)
		return merge_val(a, x, "preservationMode", v);
	double lo, hi;
	if (depth_value(a, x, v, ext_value(a, x, "measurementUnit"), &lo, &hi) != 0)
		return BC_OK;
	char n1[64], n2[64];
	bc_dwca__format_number(lo, n1, sizeof n1);
	bc_dwca__format_number(hi, n2, sizeof n2);
	int rc = BC_OK;
	if (what == MOF_MIN || what == MOF_BOTH)
		rc = merge_val(a, x, "minimumPaleodepthInMeters", n1);
	if (!rc && (what == MOF_MAX || what == MOF_BOTH))
		rc = merge_val(a, x, "maximumPaleodepthInMeters", what == MOF_MAX ? n1 : n2);
	return rc;
}

static int chrono_end(bc_dwca *a, ext_row *x, const char *col, const char *rs_col)
{
	const char *v = ext_value(a, x, col);
	if (!*v)
		return BC_OK;
	const char *where = a->parts[x->part].where;
	double num;
	if (bc_dwca__parse_number(v, &num) != 0) {
		problem(a, where, x->line, col, "'%s' is not a number", v);
		return BC_OK;
	}
	const char *rs = ext_value(a, x, rs_col);
	char k[64];
	bc_dwca__norm_key(rs, k, sizeof k);
	double f = -1;
	for (size_t i = 0; i < sizeof age_units / sizeof age_units[0]; i++)
		if (strcmp(k, age_units[i].rs) == 0)
			f = age_units[i].ma;
	if (f < 0) {
		if (!*k)
			problem(a, where, x->line, rs_col, "missing: say in which units the age is given (Ma, ka or years BP)");
		else
			problem(a, where, x->line, rs_col, "'%s' is not a reference system this tool converts (Ma, ka, years BP)", rs);
		return BC_OK;
	}
	char out[64];
	if (f == 1.0) {
		char *t = bc_dwca__trim_copy(v);
		if (!t)
			return BC_ENOMEM;
		int rc = merge_val(a, x, col, t);
		free(t);
		return rc;
	}
	bc_dwca__format_number(num * f, out, sizeof out);
	return merge_val(a, x, col, out);
}

static int apply_chrono(bc_dwca *a, ext_row *x, bc_buf *json)
{
	static const char *const used[] = {"earliestChronometricAge", "earliestChronometricAgeReferenceSystem",
		"latestChronometricAge", "latestChronometricAgeReferenceSystem"};
	const dw_part *p = &a->parts[x->part];
	int more = !*ext_value(a, x, used[0]) && !*ext_value(a, x, used[2]);
	for (size_t i = 0; i < p->nf; i++) {
		int u = 0;
		for (size_t k = 0; k < 4; k++)
			u |= strcmp(p->f[i].col, used[k]) == 0;
		if (!u && *ext_value(a, x, p->f[i].col))
			more = 1;
	}
	if (more && ext_json(a, x, json))
		return BC_ENOMEM;
	int rc = chrono_end(a, x, used[0], used[1]);
	if (!rc)
		rc = chrono_end(a, x, used[2], used[3]);
	return rc;
}

/* Adds a core id; `*first` gets the line of an earlier row with the same
 * id (0 when new). */
static int seen_add(bc_dwca *a, const char *id, long line, long *first)
{
	*first = 0;
	if (a->nseen * 2 >= a->capseen) {
		size_t nc = a->capseen ? a->capseen * 2 : 1024;
		struct seen_id *ns = bc__calloc(nc, sizeof *ns);
		if (!ns)
			return BC_ENOMEM;
		for (size_t i = 0; i < a->capseen; i++) {
			if (!a->seen[i].id)
				continue;
			size_t k = bc_dwca__hash(a->seen[i].id) & (nc - 1);
			while (ns[k].id)
				k = (k + 1) & (nc - 1);
			ns[k] = a->seen[i];
		}
		free(a->seen);
		a->seen = ns;
		a->capseen = nc;
	}
	size_t k = bc_dwca__hash(id) & (a->capseen - 1);
	for (; a->seen[k].id; k = (k + 1) & (a->capseen - 1))
		if (strcmp(a->seen[k].id, id) == 0) {
			*first = a->seen[k].line;
			return BC_OK;
		}
	if (!(a->seen[k].id = bc__strdup(id)))
		return BC_ENOMEM;
	a->seen[k].line = line;
	a->nseen++;
	return BC_OK;
}

/* Fills the record from the core row in a->cur and its extension rows. */
static int join_record(bc_dwca *a, bc_err *err)
{
	dw_part *core = &a->parts[0];
	dw_row *r = &a->cur;
	int rc = BC_OK;
	for (size_t i = 0; i < core->nf; i++) {
		dw_field *f = &core->f[i];
		if (f->col_i < 0)
			continue;
		const char *v = f->index >= 0 ? bc_dwca__row_cell(r, (size_t)f->index) : "";
		if (!*v && f->def)
			v = f->def;
		if (*v && set_val(a, f->col_i, v))
			return bc_dwca__oom(err);
	}
	for (size_t i = 0; i < core->nheader && i < r->n; i++) {
		int mapped = (long)i == core->key_index;
		for (size_t k = 0; k < core->nf && !mapped; k++)
			mapped = core->f[k].index == (long)i;
		if (mapped || !*bc_dwca__row_cell(r, i))
			continue;
		int c = core->header[i][0] ? bc_dwca__col_find(a, core->header[i]) : -1;
		int described = 0;
		for (size_t k = 0; k < core->nf && c >= 0; k++)
			described |= core->f[k].col_i == c;
		if (c < 0 || described) {
			problem(a, core->where, r->line, core->header[i][0] ? core->header[i] : "row",
				"column %zu has a value but meta.xml does not describe it", i + 1);
			continue;
		}
		if (set_val(a, c, bc_dwca__row_cell(r, i)))
			return bc_dwca__oom(err);
	}
	if (r->n > a->core_width)
		problem(a, core->where, r->line, "row", "%zu fields, but meta.xml and the header describe %zu", r->n, a->core_width);
	const char *id = core->key_index >= 0 ? bc_dwca__row_cell(r, (size_t)core->key_index) : "";
	if (a->id_col >= 0 && *id && set_val(a, a->id_col, id))
		return bc_dwca__oom(err);
	if (!*id || a->nparts < 2)
		return BC_OK;
	/* with extensions, a core id must be unique: extension rows could not
	 * be told apart otherwise */
	long first = 0;
	if (seen_add(a, id, r->line, &first))
		return bc_dwca__oom(err);
	if (first)
		problem(a, core->where, r->line, "id", "'%s' is also the id of the row on line %ld; extension rows cannot be told apart", id, first);
	bc_buf *json = bc__calloc(a->nparts, sizeof *json);
	if (!json)
		return bc_dwca__oom(err);
	/* chain order is file order (built back to front) */
	for (ext_row *x = a->bucket[bc_dwca__hash(id) & (a->nbucket - 1)]; x && !rc; x = x->chain) {
		dw_part *p = &a->parts[x->part];
		const char *xid = (size_t)p->key_index < x->n ? x->text + x->off[p->key_index] : "";
		if (strcmp(xid, id) != 0)
			continue;
		x->used = 1;
		if (p->kind == PART_MOF)
			rc = apply_mof(a, x, &json[x->part]);
		else if (p->kind == PART_CHRONO)
			rc = apply_chrono(a, x, &json[x->part]);
		else
			rc = ext_json(a, x, &json[x->part]);
	}
	for (size_t e = 1; e < a->nparts && !rc; e++) {
		if (!json[e].len)
			continue;
		if (bc__buf_puts(&json[e], "]")) {
			rc = BC_ENOMEM;
			break;
		}
		int c = a->parts[e].extra_col;
		const char *have = a->vals[c];
		if (have && *have) {
			/* several extensions of one kind: concatenate the arrays */
			bc_buf m = {0};
			rc = bc__buf_append(&m, have, strlen(have) - 1) || bc__buf_puts(&m, ",") ||
				bc__buf_puts(&m, json[e].data + 1) ? BC_ENOMEM : BC_OK;
			if (!rc) {
				free(a->vals[c]);
				a->vals[c] = m.data;
			} else
				bc__buf_free(&m);
		} else {
			rc = set_val(a, c, json[e].data);
		}
	}
	for (size_t e = 0; e < a->nparts; e++)
		bc__buf_free(&json[e]);
	free(json);
	return rc ? bc_dwca__oom(err) : BC_OK;
}

int bc_dwca__next(bc_dwca *a, bc_err *err)
{
	bc_dwca__clear_vals(a);
	a->has_problem = 0;
	a->problem[0] = a->problem_field[0] = '\0';
	if (!a->core_done) {
		dw_part *core = &a->parts[0];
		int rc = bc_dwca__row_next(core, &a->cur, err);
		if (rc < 0)
			return rc;
		if (rc == 1) {
			a->where = core->where;
			a->line = a->cur.line;
			rc = join_record(a, err);
			return rc ? rc : 1;
		}
		a->core_done = 1;
	}
	/* extension rows that joined nothing: never dropped, each a record
	 * with its row as JSON and a problem */
	while (a->orphan < a->nrows) {
		ext_row *x = a->rows[a->orphan++];
		if (x->used)
			continue;
		dw_part *p = &a->parts[x->part];
		bc_buf json = {0};
		if (ext_json(a, x, &json) || bc__buf_puts(&json, "]")) {
			bc__buf_free(&json);
			return bc_dwca__oom(err);
		}
		free(a->vals[p->extra_col]);
		a->vals[p->extra_col] = json.data;
		a->where = p->where;
		a->line = x->line;
		const char *xid = (size_t)p->key_index < x->n ? x->text + x->off[p->key_index] : "";
		if (*xid)
			problem(a, p->where, x->line, "coreid", "'%s' matches no row of %s", xid, a->parts[0].location);
		else
			problem(a, p->where, x->line, "coreid", "empty: this row belongs to no occurrence");
		return 1;
	}
	return 0;
}
