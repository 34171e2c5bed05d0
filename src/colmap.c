/*
 * colmap.c - canonical columns and column-map profiles: a small line
 * format (documented in import/maps/example.map) that maps a lab's own
 * headers onto design.md's terms, with depth units and defaults.
 */
#include "colmap.h"

#include "csvio.h"

#include <ctype.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

static const char *const term_names[BC_TERM_COUNT + 1] = {
	"occurrenceID", "scientificName", "taxonGroup", "order", "family", "genus",
	"locality", "country", "decimalLatitude", "decimalLongitude", "geodeticDatum",
	"coordinateUncertaintyInMeters", "verbatimCoordinates", "verbatimSRS",
	"earliestAgeOrLowestStage", "latestAgeOrHighestStage", "earliestEpochOrLowestSeries",
	"latestEpochOrHighestSeries", "earliestPeriodOrLowestSystem", "latestPeriodOrHighestSystem",
	"earliestChronometricAge", "latestChronometricAge", "formation", "member", "bed",
	"minimumPaleodepthInMeters", "maximumPaleodepthInMeters", "depositionalEnvironment",
	"preservationMode", "individualCount", "associatedReferences",
	"depth",
};

const char *bc_colmap__term_name(int term)
{
	return term >= 0 && term <= BC_T_DEPTH ? term_names[term] : "";
}

int bc_colmap__term_find(const char *name)
{
	if (strncasecmp(name, "dwc:", 4) == 0)
		name += 4;
	for (int i = 0; i < BC_TERM_COUNT; i++)
		if (strcasecmp(name, term_names[i]) == 0)
			return i;
	return -1;
}

typedef struct colmap_rule {
	char *header;
	int term;
	double factor;
	long line;
} colmap_rule;

struct bc_colmap {
	char *name;
	char sha[65];
	colmap_rule *r;
	size_t n, cap;
	char *defaults[BC_TERM_COUNT];
};

void bc_colmap__free(bc_colmap *m)
{
	if (!m)
		return;
	for (size_t i = 0; i < m->n; i++)
		free(m->r[i].header);
	free(m->r);
	for (int t = 0; t < BC_TERM_COUNT; t++)
		free(m->defaults[t]);
	free(m->name);
	free(m);
}

const char *bc_colmap__name(const bc_colmap *m) { return m->name; }
const char *bc_colmap__sha256(const bc_colmap *m) { return m->sha; }

static int is_depth_term(int t)
{
	return t == BC_T_MIN_DEPTH || t == BC_T_MAX_DEPTH || t == BC_T_DEPTH;
}

/* One token: a "quoted string" ("" is a quote inside) or a bare word.
 * Returns 1 with the token in tok, 0 at end of line, -1 on a bad quote. */
static int next_token(const char **pp, char *tok, size_t cap, int *quoted)
{
	const char *p = *pp;
	while (*p == ' ' || *p == '\t')
		p++;
	if (!*p || *p == '#')
		return 0;
	size_t k = 0;
	*quoted = *p == '"';
	if (*quoted) {
		p++;
		for (;;) {
			if (!*p)
				return -1;
			if (*p == '"') {
				if (p[1] != '"')
					break;
				p++;
			}
			if (k + 1 < cap)
				tok[k++] = *p;
			p++;
		}
		p++;
	} else {
		while (*p && *p != ' ' && *p != '\t')
			if (k + 1 < cap)
				tok[k++] = *p++;
			else
				p++;
	}
	tok[k] = '\0';
	*pp = p;
	return 1;
}

static int term_or_suggest(const char *word, const char *file, long line, bc_err *err)
{
	int t = bc_colmap__term_find(word);
	if (t < 0 && strcmp(word, "depth") == 0)
		t = BC_T_DEPTH;
	if (t >= 0)
		return t;
	/* suggest a term sharing the longest case-insensitive prefix */
	size_t best = 0;
	int bt = -1;
	for (int i = 0; i <= BC_T_DEPTH; i++) {
		size_t k = 0;
		while (word[k] && term_names[i][k] && tolower((unsigned char)word[k]) == tolower((unsigned char)term_names[i][k]))
			k++;
		if (k > best) {
			best = k;
			bt = i;
		}
	}
	if (bt >= 0 && best >= 3)
		bc_err_set(err, BC_EINVALID, "%s:%ld: term: '%s' is not an input column (did you mean %s?)", file, line, word, term_names[bt]);
	else
		bc_err_set(err, BC_EINVALID, "%s:%ld: term: '%s' is not an input column (see the list in import/maps/example.map)", file, line, word);
	return -1;
}

int bc_colmap__parse(bc_colmap **out, const char *name, const char *text, size_t len, const bc_vocab *units, bc_err *err)
{
	*out = NULL;
	bc_colmap *m = bc__calloc(1, sizeof *m);
	char *copy = bc__strndup(text, len);
	int rc = BC_OK;
	if (!m || !copy || !(m->name = bc__strdup(name))) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	bc__sha256_hex(text, len, m->sha);
	if (memchr(text, '\0', len) || !bc_csv__utf8_valid((const unsigned char *)text, len, NULL)) {
		rc = bc_err_set(err, BC_EINVALID, "%s: encoding: not UTF-8 text; save the map as UTF-8", name);
		goto done;
	}
	long line = 0;
	for (char *s = copy, *next; s; s = next) {
		line++;
		next = strchr(s, '\n');
		if (next)
			*next++ = '\0';
		size_t sl = strlen(s);
		if (sl && s[sl - 1] == '\r')
			s[sl - 1] = '\0';
		const char *p = s;
		char kw[64], a[1024], b[1024], c[64], d[64];
		int qa = 0, qb = 0, qx = 0;
		int n = next_token(&p, kw, sizeof kw, &qx);
		if (n == 0)
			continue;
		if (n < 0 || qx) {
			rc = bc_err_set(err, BC_EINVALID, "%s:%ld: expected 'column' or 'default' at the start of the line", name, line);
			goto done;
		}
		if (strcmp(kw, "column") == 0) {
			/* column "HEADER" -> TERM [unit UNIT] */
			if (next_token(&p, a, sizeof a, &qa) != 1 || !qa || !a[0]) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: column: expected the header in double quotes: column \"Depth (m)\" -> depth", name, line);
				goto done;
			}
			if (next_token(&p, b, sizeof b, &qb) != 1 || qb || strcmp(b, "->") != 0) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: column: expected '->' after the header", name, line);
				goto done;
			}
			if (next_token(&p, b, sizeof b, &qb) != 1 || qb) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: column: expected a term after '->'", name, line);
				goto done;
			}
			int t = term_or_suggest(b, name, line, err);
			if (t < 0) {
				rc = BC_EINVALID;
				goto done;
			}
			double factor = 1;
			int k = next_token(&p, c, sizeof c, &qx);
			if (k == 1) {
				if (qx || strcmp(c, "unit") != 0 || next_token(&p, d, sizeof d, &qx) != 1 || qx) {
					rc = bc_err_set(err, BC_EINVALID, "%s:%ld: column: expected 'unit UNIT' or the end of the line after the term", name, line);
					goto done;
				}
				if (!is_depth_term(t)) {
					rc = bc_err_set(err, BC_EINVALID, "%s:%ld: unit: only depth columns take a unit, not %s", name, line, term_names[t]);
					goto done;
				}
				const bc_vocab_term *u = units ? bc_vocab__find(units, d) : NULL;
				if (!u) {
					rc = bc_err_set(err, BC_EINVALID, "%s:%ld: unit: '%s' is not a known depth unit (known: %s)", name, line, d,
						units ? bc_vocab__list(units) : "m");
					goto done;
				}
				factor = u->min_m;
				if (next_token(&p, c, sizeof c, &qx) != 0) {
					rc = bc_err_set(err, BC_EINVALID, "%s:%ld: column: unexpected '%s' at the end of the line", name, line, c);
					goto done;
				}
			} else if (k < 0) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: column: unclosed double quote", name, line);
				goto done;
			}
			for (size_t i = 0; i < m->n; i++)
				if (strcmp(m->r[i].header, a) == 0) {
					rc = bc_err_set(err, BC_EINVALID, "%s:%ld: column: \"%s\" is already mapped on line %ld", name, line, a, m->r[i].line);
					goto done;
				}
			colmap_rule *nr = bc__grow(m->r, m->n, &m->cap, sizeof *nr, 16);
			if (!nr) {
				rc = bc_err_set(err, BC_ENOMEM, "out of memory");
				goto done;
			}
			m->r = nr;
			colmap_rule *r = &m->r[m->n];
			if (!(r->header = bc__strdup(a))) {
				rc = bc_err_set(err, BC_ENOMEM, "out of memory");
				goto done;
			}
			r->term = t;
			r->factor = factor;
			r->line = line;
			m->n++;
		} else if (strcmp(kw, "default") == 0) {
			/* default TERM "VALUE" */
			if (next_token(&p, a, sizeof a, &qa) != 1 || qa) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: default: expected a term: default taxonGroup \"Crinoidea\"", name, line);
				goto done;
			}
			int t = term_or_suggest(a, name, line, err);
			if (t < 0) {
				rc = BC_EINVALID;
				goto done;
			}
			if (t == BC_T_DEPTH) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: default: 'depth' takes no default; give minimumPaleodepthInMeters and maximumPaleodepthInMeters", name, line);
				goto done;
			}
			int k = next_token(&p, b, sizeof b, &qb);
			if (k != 1 || !qb) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: default: expected the value in double quotes after %s", name, line, a);
				goto done;
			}
			if (next_token(&p, c, sizeof c, &qx) != 0) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: default: unexpected text after the value", name, line);
				goto done;
			}
			if (m->defaults[t]) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: default: %s has a default already", name, line, term_names[t]);
				goto done;
			}
			if (!(m->defaults[t] = bc__strdup(b))) {
				rc = bc_err_set(err, BC_ENOMEM, "out of memory");
				goto done;
			}
		} else {
			rc = bc_err_set(err, BC_EINVALID, "%s:%ld: '%s' is not a map statement (use 'column' or 'default')", name, line, kw);
			goto done;
		}
	}
done:
	free(copy);
	if (rc) {
		bc_colmap__free(m);
		return rc;
	}
	*out = m;
	return BC_OK;
}

int bc_colmap__load(bc_colmap **out, const char *spec, const bc_vocab *units, bc_err *err)
{
	*out = NULL;
	size_t sl = strlen(spec);
	if (!strchr(spec, '/') && !(sl > 4 && strcmp(spec + sl - 4, ".map") == 0)) {
		char res[512];
		snprintf(res, sizeof res, "import/maps/%s.map", spec);
		const bc_resource *r = bc__resource(res);
		if (!r) {
			const bc_resource *all[64];
			size_t n = bc__resources("import/maps/", all, 64);
			bc_buf names = {0};
			for (size_t i = 0; i < n && i < 64; i++) {
				const char *b = all[i]->name + strlen("import/maps/");
				size_t bl = strlen(b);
				if (bl > 4 && strcmp(b + bl - 4, ".map") == 0)
					bc__buf_printf(&names, "%s%.*s", names.len ? ", " : "", (int)(bl - 4), b);
			}
			int rc = bc_err_set(err, BC_ENOTFOUND, "%s: no such column map (shipped maps: %s; or give a file path)", spec,
				names.data ? names.data : "none");
			bc__buf_free(&names);
			return rc;
		}
		return bc_colmap__parse(out, res, r->data, r->len, units, err);
	}
	char *data = NULL;
	size_t len = 0;
	int rc = bc__read_file(spec, &data, &len, err);
	if (rc)
		return rc;
	rc = bc_colmap__parse(out, spec, data, len, units, err);
	free(data);
	return rc;
}

void bc_colplan__free(bc_colplan *plan)
{
	free(plan->col_term);
	free(plan->col_factor);
	plan->col_term = NULL;
	plan->col_factor = NULL;
}

static void trim_copy(const char *s, char *out, size_t cap)
{
	while (*s == ' ' || *s == '\t')
		s++;
	size_t n = strlen(s);
	while (n && (s[n - 1] == ' ' || s[n - 1] == '\t'))
		n--;
	if (n >= cap)
		n = cap - 1;
	memcpy(out, s, n);
	out[n] = '\0';
}

int bc_colmap__bind(bc_colplan *plan, const bc_colmap *m, const char *const *headers, size_t n,
	const char *file, long line, bc_err *err)
{
	memset(plan, 0, sizeof *plan);
	plan->depth_col = -1;
	plan->depth_factor = 1;
	for (int t = 0; t < BC_TERM_COUNT; t++) {
		plan->term_col[t] = -1;
		plan->defaults[t] = m ? m->defaults[t] : NULL;
	}
	plan->ncols = n;
	plan->col_term = bc__calloc(n ? n : 1, sizeof *plan->col_term);
	plan->col_factor = bc__calloc(n ? n : 1, sizeof *plan->col_factor);
	if (!plan->col_term || !plan->col_factor) {
		bc_colplan__free(plan);
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	}
	int rc = BC_OK;
	for (size_t i = 0; i < n && rc == BC_OK; i++) {
		char h[1024];
		trim_copy(headers[i], h, sizeof h);
		plan->col_factor[i] = 1;
		plan->col_term[i] = -1;
		if (!h[0]) {
			rc = bc_err_set(err, BC_EINVALID, "%s:%ld: header: column %zu has no name; give every column a header", file, line, i + 1);
			break;
		}
		for (size_t j = 0; j < i; j++) {
			char o[1024];
			trim_copy(headers[j], o, sizeof o);
			if (strcmp(o, h) == 0) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: header: '%s' appears twice (columns %zu and %zu)", file, line, h, j + 1, i + 1);
				break;
			}
		}
		if (rc)
			break;
		int t = -1;
		double f = 1;
		if (m)
			for (size_t k = 0; k < m->n; k++)
				if (strcmp(m->r[k].header, h) == 0) {
					t = m->r[k].term;
					f = m->r[k].factor;
				}
		if (t < 0)
			t = bc_colmap__term_find(h);
		if (t < 0)
			continue;
		plan->col_term[i] = t;
		plan->col_factor[i] = f;
		if (t == BC_T_DEPTH) {
			if (plan->depth_col >= 0 || plan->term_col[BC_T_MIN_DEPTH] >= 0 || plan->term_col[BC_T_MAX_DEPTH] >= 0) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: header: '%s' gives the depth, but another column already does", file, line, h);
				break;
			}
			plan->depth_col = (int)i;
			plan->depth_factor = f;
			continue;
		}
		if (plan->term_col[t] >= 0 || (is_depth_term(t) && plan->depth_col >= 0)) {
			int o = plan->term_col[t] >= 0 ? plan->term_col[t] : plan->depth_col;
			char oh[1024];
			trim_copy(headers[o], oh, sizeof oh);
			rc = bc_err_set(err, BC_EINVALID, "%s:%ld: header: columns '%s' and '%s' both give %s", file, line, oh, h, term_names[t]);
			break;
		}
		plan->term_col[t] = (int)i;
	}
	if (rc)
		bc_colplan__free(plan);
	return rc;
}
