/*
 * age_alias.c - alias tables: the shipped reference/age-aliases.tsv and
 * users' files (bc_resolver_load_aliases), read and checked against the
 * chart before any row is added (doc/age-resolution.md).
 */
#include "age.h"

#include <stdlib.h>
#include <string.h>

/* ------------------------------------------------------------------ */
/* Alias tables                                                        */
/* ------------------------------------------------------------------ */

static int alias_add(bc_resolver *r, const char *text, const char *note, span sp)
{
	char key[AGE_KEY_MAX];
	if (bc_age__make_key(text, key, sizeof key) <= 0)
		return BC_EINVALID;
	const int *old = bc_age__strmap_get(&r->aliases, key);
	alias a = {bc__strdup(text), bc__strdup(note ? note : ""), sp};
	if (!a.text || !a.note) {
		free(a.text);
		free(a.note);
		return BC_ENOMEM;
	}
	if (old) {
		free(r->alias_v[*old].text);
		free(r->alias_v[*old].note);
		r->alias_v[*old] = a;
		return BC_OK;
	}
	alias *p = bc__grow(r->alias_v, r->nalias, &r->capalias, sizeof *p, 256);
	if (!p) {
		free(a.text);
		free(a.note);
		return BC_ENOMEM;
	}
	r->alias_v = p;
	char stem[AGE_KEY_MAX];
	if (bc_age__strmap_set(&r->aliases, key, (int)r->nalias) != BC_OK) {
		free(a.text);
		free(a.note);
		return BC_ENOMEM;
	}
	r->alias_v[r->nalias++] = a;
	if (bc_age__stem(key, stem, sizeof stem) >= 4) {
		const int *s = bc_age__strmap_get(&r->alias_stems, stem);
		if (bc_age__strmap_set(&r->alias_stems, stem, s && *s != (int)r->nalias - 1 ? -2 : (int)r->nalias - 1))
			return BC_ENOMEM;
	}
	return BC_OK;
}

/* Splits a line at tabs in place; returns the field count (at most max). */
static int split_tabs(char *line, char **f, int max)
{
	int n = 0;
	f[n++] = line;
	for (char *p = line; *p && n < max; p++)
		if (*p == '\t') {
			*p = '\0';
			f[n++] = p + 1;
		}
	return n;
}

/* Parses an alias table. `shipped`: rows whose targets are missing are skipped, not errors. */
int bc_age__alias_parse(bc_resolver *r, const char *data, size_t len, const char *path, int shipped, bc_err *err)
{
	enum { MAXF = 32 };
	int col[5] = {-1, -1, -1, -1, -1}; /* alias older younger note source */
	static const char *const want[5] = {"alias", "older", "younger", "note", "source"};
	int header = 0, rc = BC_OK;
	size_t lineno = 0;
	char *copy = bc__strndup(data, len);
	if (!copy)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	/* Staged rows, so that a bad user file changes nothing. */
	struct row { char *alias, *note; span sp; } *rows = NULL;
	size_t nrows = 0, caprows = 0;
	char *save = copy;
	while (save && *save) {
		char *line = save, *nl = strchr(save, '\n');
		if (nl) {
			*nl = '\0';
			save = nl + 1;
		} else
			save = NULL;
		lineno++;
		size_t ll = strlen(line);
		if (ll && line[ll - 1] == '\r')
			line[--ll] = '\0';
		if (!ll || line[0] == '#')
			continue;
		char *f[MAXF];
		int nf = split_tabs(line, f, MAXF);
		if (!header) {
			for (int i = 0; i < nf; i++)
				for (int k = 0; k < 5; k++)
					if (strcmp(f[i], want[k]) == 0)
						col[k] = i;
			for (int k = 0; k < 5; k++)
				if (col[k] < 0 && k != 3) {
					rc = bc_err_set(err, BC_EINVALID, "%s:%zu: %s: header has no '%s' column", path, lineno, want[k], want[k]);
					goto done;
				}
			header = 1;
			continue;
		}
		const char *v[5];
		for (int k = 0; k < 5; k++)
			v[k] = col[k] >= 0 && col[k] < nf ? f[col[k]] : "";
		for (int k = 0; k < 5; k++)
			if (k != 3 && !*v[k]) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%zu: %s: empty%s", path, lineno, want[k],
					k == 4 ? " (every alias needs a source, e.g. 'common practice, no source')" : "");
				goto done;
			}
		span a, b;
		int oka = bc_age__alias_target(r, v[1], &a), okb = oka && bc_age__alias_target(r, v[2], &b);
		if (!oka || !okb) {
			if (shipped) {
				if (!r->skipped++ && !(r->first_skipped = bc__strdup(v[0]))) {
					rc = bc_err_set(err, BC_ENOMEM, "out of memory");
					goto done;
				}
				continue;
			}
			rc = bc_err_set(err, BC_EINVALID, "%s:%zu: %s: '%s' is not an interval of chart '%s'", path, lineno,
				!oka ? "older" : "younger", !oka ? v[1] : v[2], bc_chart_name(r->chart));
			goto done;
		}
		if (a.older + a.younger < b.older + b.younger) {
			rc = bc_err_set(err, BC_EINVALID, "%s:%zu: younger: '%s' is older than '%s'", path, lineno, v[2], v[1]);
			goto done;
		}
		struct row *p = bc__grow(rows, nrows, &caprows, sizeof *p, 128);
		if (!p) {
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			goto done;
		}
		rows = p;
		span s = {a.from, b.to, a.older > b.older ? a.older : b.older, a.younger < b.younger ? a.younger : b.younger};
		rows[nrows].alias = (char *)v[0];
		rows[nrows].note = (char *)v[3];
		rows[nrows].sp = s;
		nrows++;
	}
	if (!header) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%zu: alias: no header row", path, lineno);
		goto done;
	}
	for (size_t i = 0; i < nrows; i++) {
		int e = alias_add(r, rows[i].alias, rows[i].note, rows[i].sp);
		if (e == BC_EINVALID)
			continue; /* an alias that folds to nothing can never match */
		if (e) {
			rc = bc_err_set(err, e, "out of memory");
			goto done;
		}
	}
	bc_age__cache_clear(r);
done:
	free(rows);
	free(copy);
	return rc;
}

int bc_resolver_load_aliases(bc_resolver *r, const char *path, bc_err *err)
{
	char *data = NULL;
	size_t len = 0;
	int rc = bc__read_file(path, &data, &len, err);
	if (rc == BC_OK)
		rc = bc_age__alias_parse(r, data, len, path, 0, err);
	free(data);
	return rc;
}
