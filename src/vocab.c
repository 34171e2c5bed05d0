/*
 * vocab.c - vocabularies as data with sources: environment terms with a
 * depth range, preservation terms with an articulation class, depth units.
 * Read with the project's CSV reader; seeded into new databases.
 */
#include "vocab.h"

#include "csvio.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

struct bc_vocab {
	bc_vocab_kind kind;
	bc_vocab_term *t;
	size_t n, cap;
	bc_buf content;   /* every file's text, for the hash */
	bc_buf list;
	char name[1024];
	char sha[65];
};

static const char *const kind_names[] = {"environments", "preservation", "units"};
static const char *const kind_files[] = {"reference/environments.tsv", "reference/preservation.tsv", "reference/units.tsv"};

const char *bc_vocab__kind_name(bc_vocab_kind kind) { return kind_names[kind]; }

void bc_vocab__normalise(const char *in, char *out, size_t cap)
{
	size_t k = 0;
	int space = 0;
	for (const unsigned char *p = (const unsigned char *)in; *p && k + 1 < cap; p++) {
		unsigned char ch = *p;
		if (ch == '-' || ch == '_' || isspace(ch)) {
			space = 1;
			continue;
		}
		if (space && k > 0 && k + 2 < cap)
			out[k++] = ' ';
		space = 0;
		out[k++] = (char)tolower(ch);
	}
	out[k] = '\0';
}

static void term_free(bc_vocab_term *t)
{
	free(t->term);
	free(t->key);
	free(t->cls);
	free(t->note);
	free(t->source);
}

void bc_vocab__free(bc_vocab *v)
{
	if (!v)
		return;
	for (size_t i = 0; i < v->n; i++)
		term_free(&v->t[i]);
	free(v->t);
	bc__buf_free(&v->content);
	bc__buf_free(&v->list);
	free(v);
}

const bc_vocab_term *bc_vocab__find(const bc_vocab *v, const char *text)
{
	char key[256];
	bc_vocab__normalise(text, key, sizeof key);
	for (size_t i = 0; i < v->n; i++)
		if (strcmp(v->t[i].key, key) == 0)
			return &v->t[i];
	return NULL;
}

size_t bc_vocab__count(const bc_vocab *v) { return v->n; }
const bc_vocab_term *bc_vocab__term(const bc_vocab *v, size_t i) { return i < v->n ? &v->t[i] : NULL; }
const char *bc_vocab__list(const bc_vocab *v) { return v->list.data ? v->list.data : ""; }
const char *bc_vocab__name(const bc_vocab *v) { return v->name; }
const char *bc_vocab__sha256(const bc_vocab *v) { return v->sha; }

static int parse_number(const char *s, double *out)
{
	char *end;
	errno = 0;
	double d = strtod(s, &end);
	while (*end == ' ')
		end++;
	if (end == s || *end || errno || !isfinite(d))
		return -1;
	*out = d;
	return 0;
}

static int vocab_refresh(bc_vocab *v)
{
	v->list.len = 0;
	if (v->list.data)
		v->list.data[0] = '\0';
	for (size_t i = 0; i < v->n; i++)
		if ((i && bc__buf_puts(&v->list, ", ")) || bc__buf_puts(&v->list, v->t[i].term))
			return BC_ENOMEM;
	bc__sha256_hex(v->content.data ? v->content.data : "", v->content.len, v->sha);
	return BC_OK;
}

/* Reads one TSV (from memory) into v; terms already present are replaced. */
static int vocab_read(bc_vocab *v, const char *name, const char *data, size_t len, bc_err *err)
{
	static const char *const cols[][5] = {
		{"term", "min_m", "max_m", "note", "source"},
		{"term", "class", "note", "source", NULL},
		{"unit", "metres", "note", "source", NULL},
	};
	bc_csv_options o = {'\t'};
	bc_csv *c = NULL;
	int rc = bc_csv__open_mem(&c, name, data, len, &o, err);
	int idx[5] = {-1, -1, -1, -1, -1};
	bc_vocab_term t;
	memset(&t, 0, sizeof t);
	if (rc)
		return rc;
	rc = bc_csv__next(c, err);
	if (rc == 0)
		rc = bc_err_set(err, BC_EINVALID, "%s:1: header: empty file; expected a header row", name);
	if (rc < 0)
		goto done;
	rc = BC_OK;
	for (int k = 0; k < 5 && cols[v->kind][k]; k++) {
		for (size_t i = 0; i < bc_csv__nfields(c); i++)
			if (strcmp(bc_csv__field(c, i), cols[v->kind][k]) == 0)
				idx[k] = (int)i;
		if (idx[k] < 0 && strcmp(cols[v->kind][k], "note") != 0) {
			rc = bc_err_set(err, BC_EINVALID, "%s:%ld: header: no column '%s' (a %s table needs %s, %s, ... and source)", name,
				bc_csv__line(c), cols[v->kind][k], kind_names[v->kind], cols[v->kind][0], cols[v->kind][1]);
			goto done;
		}
	}
	int src = v->kind == BC_VOCAB_ENVIRONMENTS ? 4 : 3, note = src - 1;
	while ((rc = bc_csv__next(c, err)) == 1) {
		long line = bc_csv__line(c);
		const char *term = bc_csv__field(c, (size_t)idx[0]);
		memset(&t, 0, sizeof t);
		t.min_m = t.max_m = NAN;
		char key[256];
		bc_vocab__normalise(term, key, sizeof key);
		if (!key[0]) {
			rc = bc_err_set(err, BC_EINVALID, "%s:%ld: %s: empty", name, line, cols[v->kind][0]);
			goto done;
		}
		const char *source = bc_csv__field(c, (size_t)idx[src]);
		if (!source[0]) {
			rc = bc_err_set(err, BC_EINVALID, "%s:%ld: source: empty; every row needs a source (write \"common practice, no source\" or \"from memory\" if that is the truth)", name, line);
			goto done;
		}
		if (v->kind == BC_VOCAB_ENVIRONMENTS) {
			if (parse_number(bc_csv__field(c, (size_t)idx[1]), &t.min_m) || t.min_m < 0) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: min_m: '%s' is not a depth in metres (a number >= 0)", name, line, bc_csv__field(c, (size_t)idx[1]));
				goto done;
			}
			if (parse_number(bc_csv__field(c, (size_t)idx[2]), &t.max_m) || t.max_m < t.min_m) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: max_m: '%s' is not a depth in metres >= min_m", name, line, bc_csv__field(c, (size_t)idx[2]));
				goto done;
			}
		} else if (v->kind == BC_VOCAB_UNITS) {
			if (parse_number(bc_csv__field(c, (size_t)idx[1]), &t.min_m) || !(t.min_m > 0)) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: metres: '%s' is not a positive number", name, line, bc_csv__field(c, (size_t)idx[1]));
				goto done;
			}
			t.max_m = t.min_m;
		} else {
			static const char *const classes[] = {"articulated", "partly articulated", "disarticulated", "unknown"};
			const char *cls = bc_csv__field(c, (size_t)idx[1]);
			int ok = 0;
			for (size_t i = 0; i < 4; i++)
				ok |= strcmp(cls, classes[i]) == 0;
			if (!ok) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: class: '%s' is not one of articulated, partly articulated, disarticulated, unknown", name, line, cls);
				goto done;
			}
			if (!(t.cls = bc__strdup(cls)))
				goto nomem;
		}
		if (!(t.term = bc__strdup(term)) || !(t.key = bc__strdup(key)) || !(t.source = bc__strdup(source)) ||
			!(t.note = bc__strdup(idx[note] >= 0 ? bc_csv__field(c, (size_t)idx[note]) : "")))
			goto nomem;
		size_t at = v->n;
		for (size_t i = 0; i < v->n; i++)
			if (strcmp(v->t[i].key, key) == 0)
				at = i;
		if (at == v->n) {
			if (v->n == v->cap) {
				size_t nc = v->cap ? v->cap * 2 : 32;
				bc_vocab_term *nt = bc__realloc(v->t, nc * sizeof *nt);
				if (!nt)
					goto nomem;
				v->t = nt;
				v->cap = nc;
			}
			v->n++;
		} else {
			term_free(&v->t[at]);
		}
		v->t[at] = t;
		memset(&t, 0, sizeof t);
	}
	if (rc < 0)
		goto done;
	rc = BC_OK;
	if (bc__buf_append(&v->content, data, len) || vocab_refresh(v))
		goto nomem;
	goto done;
nomem:
	rc = bc_err_set(err, BC_ENOMEM, "out of memory");
done:
	term_free(&t);
	bc_csv__free(c);
	return rc;
}

int bc_vocab__builtin(bc_vocab **out, bc_vocab_kind kind, bc_err *err)
{
	*out = NULL;
	const bc_resource *r = bc__resource(kind_files[kind]);
	if (!r)
		return bc_err_set(err, BC_ENOTFOUND, "%s: not built into this program", kind_files[kind]);
	bc_vocab *v = bc__calloc(1, sizeof *v);
	if (!v)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	v->kind = kind;
	snprintf(v->name, sizeof v->name, "built-in");
	int rc = vocab_read(v, r->name, r->data, r->len, err);
	if (rc) {
		bc_vocab__free(v);
		return rc;
	}
	*out = v;
	return BC_OK;
}

int bc_vocab__merge_file(bc_vocab *v, const char *path, bc_err *err)
{
	char *data = NULL;
	size_t len = 0;
	int rc = bc__read_file(path, &data, &len, err);
	if (rc)
		return rc;
	rc = vocab_read(v, path, data, len, err);
	free(data);
	if (rc == BC_OK) {
		size_t k = strlen(v->name);
		snprintf(v->name + k, sizeof v->name - k, " + %s", path);
	}
	return rc;
}

int bc_vocab__store(bc_db *db, const bc_vocab *v, int64_t *id, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(db, &st, "SELECT vocabulary_id FROM vocabularies WHERE kind = :kind AND sha256 = :sha", err);
	if (rc)
		return rc;
	bc_db__bind_text(st, ":kind", kind_names[v->kind]);
	bc_db__bind_text(st, ":sha", v->sha);
	int step = sqlite3_step(st);
	if (step == SQLITE_ROW) {
		*id = sqlite3_column_int64(st, 0);
		goto done;
	}
	if (step != SQLITE_DONE) {
		rc = bc_db__error(db, err, "reading vocabularies");
		goto done;
	}
	sqlite3_finalize(st);
	st = NULL;
	if ((rc = bc_db__prepare(db, &st, "INSERT INTO vocabularies(kind, name, sha256, n_terms) VALUES (:kind, :name, :sha, :n)", err)))
		goto done;
	bc_db__bind_text(st, ":kind", kind_names[v->kind]);
	bc_db__bind_text(st, ":name", v->name);
	bc_db__bind_text(st, ":sha", v->sha);
	bc_db__bind_int64(st, ":n", (int64_t)v->n);
	if (sqlite3_step(st) != SQLITE_DONE) {
		rc = bc_db__error(db, err, "recording a vocabulary");
		goto done;
	}
	*id = sqlite3_last_insert_rowid(bc_db__sqlite(db));
	sqlite3_finalize(st);
	st = NULL;
	if ((rc = bc_db__prepare(db, &st,
		     "INSERT INTO vocabulary_terms(vocabulary_id, term, min_m, max_m, class, note, source) "
		     "VALUES (:id, :term, :min, :max, :class, :note, :source)", err)))
		goto done;
	for (size_t i = 0; i < v->n; i++) {
		const bc_vocab_term *t = &v->t[i];
		sqlite3_reset(st);
		bc_db__bind_int64(st, ":id", *id);
		bc_db__bind_text(st, ":term", t->term);
		bc_db__bind_double(st, ":min", v->kind == BC_VOCAB_PRESERVATION ? NAN : t->min_m);
		bc_db__bind_double(st, ":max", v->kind == BC_VOCAB_ENVIRONMENTS ? t->max_m : NAN);
		bc_db__bind_text(st, ":class", t->cls);
		bc_db__bind_text(st, ":note", t->note);
		bc_db__bind_text(st, ":source", t->source);
		if (sqlite3_step(st) != SQLITE_DONE) {
			rc = bc_db__error(db, err, "recording a vocabulary term");
			goto done;
		}
	}
done:
	sqlite3_finalize(st);
	return rc;
}

int bc_vocab__seed(bc_db *db, bc_err *err)
{
	for (int k = BC_VOCAB_ENVIRONMENTS; k <= BC_VOCAB_UNITS; k++) {
		bc_vocab *v = NULL;
		int64_t id = 0;
		int rc = bc_vocab__builtin(&v, (bc_vocab_kind)k, err);
		if (rc == BC_OK)
			rc = bc_vocab__store(db, v, &id, err);
		bc_vocab__free(v);
		if (rc)
			return rc;
	}
	return BC_OK;
}
