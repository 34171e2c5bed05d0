/*
 * bib.c - BibTeX references: a reader for entries, @string macros, '#'
 * concatenation and TeX accents (converted to UTF-8 via utf8proc's NFC),
 * and `refs` loading into the references table (a key seen again is
 * updated in place).
 */
#include "bib.h"

#include "csvio.h"
#include "db.h"

#include <ctype.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <utf8proc.h>

/* ---- TeX to UTF-8 ---------------------------------------------------- */

static const struct { const char *cmd; unsigned cp; } tex_accents[] = {
	{"\"", 0x308}, {"'", 0x301}, {"`", 0x300}, {"^", 0x302}, {"~", 0x303}, {"=", 0x304},
	{".", 0x307}, {"c", 0x327}, {"v", 0x30C}, {"u", 0x306}, {"H", 0x30B}, {"k", 0x328}, {"r", 0x30A},
	{"d", 0x323}, {"b", 0x331},
};

static const struct { const char *cmd; const char *utf8; } tex_symbols[] = {
	{"ss", "\xc3\x9f"}, {"o", "\xc3\xb8"}, {"O", "\xc3\x98"}, {"aa", "\xc3\xa5"}, {"AA", "\xc3\x85"},
	{"ae", "\xc3\xa6"}, {"AE", "\xc3\x86"}, {"oe", "\xc5\x93"}, {"OE", "\xc5\x92"}, {"l", "\xc5\x82"},
	{"L", "\xc5\x81"}, {"i", "\xc4\xb1"}, {"j", "\xc8\xb7"}, {"&", "&"}, {"%", "%"}, {"$", "$"},
	{"_", "_"}, {"#", "#"}, {"{", "{"}, {"}", "}"}, {" ", " "},
};

static void put_cp(bc_buf *b, unsigned cp)
{
	utf8proc_uint8_t u[4];
	utf8proc_ssize_t n = utf8proc_encode_char((utf8proc_int32_t)cp, u);
	bc__buf_append(b, (const char *)u, (size_t)n);
}

/* Reads the argument of an accent command at *pp: "{x}", "{\i}", "x". */
static void accent_arg(const char **pp, bc_buf *b)
{
	const char *p = *pp;
	while (*p == ' ')
		p++;
	int braced = *p == '{';
	if (braced)
		p++;
	if (p[0] == '\\' && (p[1] == 'i' || p[1] == 'j') && !isalpha((unsigned char)p[2])) {
		bc__buf_append(b, p + 1, 1); /* dotless i/j under an accent is a plain i/j */
		p += 2;
	} else if (*p && *p != '}') {
		size_t n = 1;
		while ((p[n] & 0xC0) == 0x80)
			n++;
		bc__buf_append(b, p, n);
		p += n;
	}
	if (braced) {
		while (*p && *p != '}')
			p++;
		if (*p)
			p++;
	}
	*pp = p;
}

char *bc_bib__tex_to_utf8(const char *tex)
{
	bc_buf b = {0};
	const char *p = tex;
	while (*p) {
		if (*p == '\\') {
			p++;
			int done = 0;
			for (size_t i = 0; i < sizeof tex_accents / sizeof tex_accents[0] && !done; i++) {
				size_t n = strlen(tex_accents[i].cmd);
				if (strncmp(p, tex_accents[i].cmd, n) == 0 && (!isalpha((unsigned char)p[0]) || !isalpha((unsigned char)p[n]))) {
					p += n;
					accent_arg(&p, &b);
					put_cp(&b, tex_accents[i].cp);
					done = 1;
				}
			}
			for (size_t i = 0; i < sizeof tex_symbols / sizeof tex_symbols[0] && !done; i++) {
				size_t n = strlen(tex_symbols[i].cmd);
				if (strncmp(p, tex_symbols[i].cmd, n) == 0 && (!isalpha((unsigned char)p[0]) || !isalpha((unsigned char)p[n]))) {
					p += n;
					bc__buf_puts(&b, tex_symbols[i].utf8);
					if (isalpha((unsigned char)tex_symbols[i].cmd[0]) && *p == ' ')
						p++; /* "\ss k" -> "ßk": the space ends the command */
					if (isalpha((unsigned char)tex_symbols[i].cmd[0]) && p[0] == '{' && p[1] == '}')
						p += 2;
					done = 1;
				}
			}
			if (!done) {
				/* an unknown command: keep its name without the backslash */
				while (isalpha((unsigned char)*p))
					bc__buf_append(&b, p++, 1);
			}
		} else if (*p == '{' || *p == '}') {
			p++;
		} else if (*p == '~') {
			bc__buf_append(&b, " ", 1);
			p++;
		} else if (p[0] == '-' && p[1] == '-' && p[2] == '-') {
			bc__buf_puts(&b, "\xe2\x80\x94");
			p += 3;
		} else if (p[0] == '-' && p[1] == '-') {
			bc__buf_puts(&b, "\xe2\x80\x93");
			p += 2;
		} else if (isspace((unsigned char)*p)) {
			if (b.len && b.data[b.len - 1] != ' ')
				bc__buf_append(&b, " ", 1);
			p++;
		} else {
			bc__buf_append(&b, p++, 1);
		}
	}
	if (!b.data && bc__buf_puts(&b, ""))
		return NULL;
	while (b.len && b.data[b.len - 1] == ' ')
		b.data[--b.len] = '\0';
	char *nfc = (char *)utf8proc_NFC((const utf8proc_uint8_t *)b.data);
	char *out = nfc ? bc__strdup(nfc) : NULL;
	free(nfc);
	bc__buf_free(&b);
	return out;
}

/* ---- the reader -------------------------------------------------------- */

typedef struct macro {
	char *name, *value;
} macro;

typedef struct bibp {
	const char *name;
	const char *s;
	size_t n, i;
	long line;
	macro *m;
	size_t nm, capm;
	char err[512];
} bibp;

static int bp_peek(bibp *p) { return p->i < p->n ? (unsigned char)p->s[p->i] : -1; }

static int bp_get(bibp *p)
{
	if (p->i >= p->n)
		return -1;
	int c = (unsigned char)p->s[p->i++];
	if (c == '\n')
		p->line++;
	return c;
}

static void bp_space(bibp *p)
{
	for (;;) {
		int c = bp_peek(p);
		if (c == '%') { /* a comment to the end of the line */
			while (bp_peek(p) != -1 && bp_peek(p) != '\n')
				bp_get(p);
		} else if (c != -1 && isspace(c)) {
			bp_get(p);
		} else {
			return;
		}
	}
}

static int bp_ident(bibp *p, char *out, size_t cap)
{
	size_t k = 0;
	int c;
	while ((c = bp_peek(p)) != -1 && (isalnum(c) || strchr("_-:./+'!?*&$<>;[]|", c) || c >= 0x80)) {
		if (k + 1 < cap)
			out[k++] = (char)c;
		bp_get(p);
	}
	out[k] = '\0';
	return (int)k;
}

/* Skips a balanced group whose opener was just read. */
static int bp_skip_group(bibp *p, int close)
{
	int depth = 1, open = close == '}' ? '{' : '(';
	int c;
	while ((c = bp_get(p)) != -1) {
		if (c == open)
			depth++;
		else if (c == close && --depth == 0)
			return 0;
	}
	return -1;
}

static const char *macro_find(bibp *p, const char *name)
{
	for (size_t i = 0; i < p->nm; i++)
		if (strcasecmp(p->m[i].name, name) == 0)
			return p->m[i].value;
	static const char *const months[] = {"jan", "feb", "mar", "apr", "may", "jun", "jul", "aug", "sep", "oct", "nov", "dec"};
	static const char *const full[] = {"January", "February", "March", "April", "May", "June", "July", "August",
		"September", "October", "November", "December"};
	for (int i = 0; i < 12; i++)
		if (strcasecmp(months[i], name) == 0)
			return full[i];
	return NULL;
}

/* A value: parts joined by '#'; each {braced}, "quoted", a number or a macro. */
static int bp_value(bibp *p, bc_buf *out)
{
	out->len = 0;
	bc__buf_puts(out, "");
	for (;;) {
		bp_space(p);
		int c = bp_peek(p);
		if (c == '{' || c == '"') {
			long start = p->line;
			bp_get(p);
			int depth = 0;
			for (;;) {
				int d = bp_get(p);
				if (d == -1) {
					snprintf(p->err, sizeof p->err, "value opened on line %ld is never closed", start);
					return -1;
				}
				if (d == '{')
					depth++;
				else if (d == '}') {
					if (depth == 0 && c == '{')
						break;
					if (depth == 0) {
						snprintf(p->err, sizeof p->err, "unbalanced '}' in a quoted value");
						return -1;
					}
					depth--;
				} else if (d == '"' && c == '"' && depth == 0)
					break;
				char ch = (char)d;
				bc__buf_append(out, &ch, 1);
			}
		} else if (c != -1 && isdigit(c)) {
			while ((c = bp_peek(p)) != -1 && isdigit(c)) {
				char ch = (char)bp_get(p);
				bc__buf_append(out, &ch, 1);
			}
		} else if (c != -1 && (isalpha(c) || c == '_')) {
			char name[128];
			bp_ident(p, name, sizeof name);
			const char *v = macro_find(p, name);
			if (!v) {
				snprintf(p->err, sizeof p->err, "undefined @string macro '%s'", name);
				return -1;
			}
			bc__buf_puts(out, v);
		} else {
			snprintf(p->err, sizeof p->err, "expected a value ({...}, \"...\", a number or a macro name)");
			return -1;
		}
		bp_space(p);
		if (bp_peek(p) != '#')
			return 0;
		bp_get(p);
	}
}

static void field_set(char **slot, const char *v)
{
	free(*slot);
	*slot = bc_bib__tex_to_utf8(v);
}

static void entry_clear(bc_bib_entry *e)
{
	free(e->type);
	free(e->key);
	free(e->authors);
	free(e->year);
	free(e->title);
	free(e->journal);
	free(e->volume);
	free(e->pages);
	free(e->doi);
	memset(e, 0, sizeof *e);
}

/* Moves to the next '@' that starts an entry after an error. */
static void bp_resync(bibp *p)
{
	int c;
	while ((c = bp_peek(p)) != -1 && c != '@')
		bp_get(p);
}

int bc_bib__parse(const char *name, const char *text, size_t len, bc_bib_entry_fn on_entry, bc_bib_bad_fn bad, void *ctx, bc_err *err)
{
	bibp p;
	memset(&p, 0, sizeof p);
	p.name = name;
	p.s = text;
	p.n = len;
	p.line = 1;
	bc_buf val = {0};
	bc_bib_entry e;
	memset(&e, 0, sizeof e);
	int rc = BC_OK;
	size_t bad_at = 0;
	if (!bc_csv__utf8_valid((const unsigned char *)text, len, &bad_at)) {
		long line = 1;
		for (size_t i = 0; i < bad_at; i++)
			line += text[i] == '\n';
		return bc_err_set(err, BC_EINVALID, "%s:%ld: encoding: not UTF-8 (looks like Latin-1/Windows-1252); save the file as UTF-8", name, line);
	}
	for (;;) {
		int c;
		while ((c = bp_peek(&p)) != -1 && c != '@')
			bp_get(&p); /* text between entries is a comment in BibTeX */
		if (c == -1)
			break;
		bp_get(&p);
		long line = p.line;
		char type[64], key[512] = "";
		bp_space(&p);
		bp_ident(&p, type, sizeof type);
		bp_space(&p);
		int open = bp_get(&p);
		if (!type[0] || (open != '{' && open != '(')) {
			snprintf(p.err, sizeof p.err, "expected @TYPE{ or @TYPE(");
			goto bad_entry;
		}
		int close = open == '{' ? '}' : ')';
		if (strcasecmp(type, "comment") == 0 || strcasecmp(type, "preamble") == 0) {
			if (bp_skip_group(&p, close) != 0) {
				snprintf(p.err, sizeof p.err, "@%s opened here is never closed", type);
				goto bad_entry;
			}
			continue;
		}
		if (strcasecmp(type, "string") == 0) {
			char mname[128];
			bp_space(&p);
			if (!bp_ident(&p, mname, sizeof mname)) {
				snprintf(p.err, sizeof p.err, "@string: expected a macro name");
				goto bad_entry;
			}
			bp_space(&p);
			if (bp_get(&p) != '=') {
				snprintf(p.err, sizeof p.err, "@string %s: expected '='", mname);
				goto bad_entry;
			}
			if (bp_value(&p, &val) != 0)
				goto bad_entry;
			bp_space(&p);
			if (bp_get(&p) != close) {
				snprintf(p.err, sizeof p.err, "@string %s: expected '%c'", mname, close);
				goto bad_entry;
			}
			if (p.nm == p.capm) {
				size_t nc = p.capm ? p.capm * 2 : 16;
				macro *nmac = bc__realloc(p.m, nc * sizeof *nmac);
				if (!nmac) {
					rc = bc_err_set(err, BC_ENOMEM, "out of memory");
					goto done;
				}
				p.m = nmac;
				p.capm = nc;
			}
			p.m[p.nm].name = bc__strdup(mname);
			p.m[p.nm].value = bc__strdup(val.data);
			if (!p.m[p.nm].name || !p.m[p.nm].value) {
				free(p.m[p.nm].name);
				free(p.m[p.nm].value);
				rc = bc_err_set(err, BC_ENOMEM, "out of memory");
				goto done;
			}
			p.nm++;
			continue;
		}
		/* a real entry: key, then fields */
		bp_space(&p);
		size_t k = 0;
		while ((c = bp_peek(&p)) != -1 && c != ',' && c != close && !isspace(c)) {
			if (k + 1 < sizeof key)
				key[k++] = (char)c;
			bp_get(&p);
		}
		key[k] = '\0';
		bp_space(&p);
		if (!key[0] || bp_peek(&p) != ',') {
			snprintf(p.err, sizeof p.err, key[0] ? "expected ',' after the key" : "entry has no citation key");
			goto bad_entry;
		}
		bp_get(&p);
		entry_clear(&e);
		e.line = line;
		e.type = bc__strdup(type);
		e.key = bc__strdup(key);
		for (char *t = e.type; t && *t; t++)
			*t = (char)tolower((unsigned char)*t);
		for (;;) {
			bp_space(&p);
			c = bp_peek(&p);
			if (c == close) {
				bp_get(&p);
				break;
			}
			if (c == -1) {
				snprintf(p.err, sizeof p.err, "entry is never closed (missing '%c')", close);
				goto bad_entry;
			}
			char fname[64];
			if (!bp_ident(&p, fname, sizeof fname)) {
				snprintf(p.err, sizeof p.err, "expected a field name, found '%c'", c);
				goto bad_entry;
			}
			bp_space(&p);
			if (bp_get(&p) != '=') {
				snprintf(p.err, sizeof p.err, "field %s: expected '='", fname);
				goto bad_entry;
			}
			if (bp_value(&p, &val) != 0)
				goto bad_entry;
			const char *v = val.data;
			if (strcasecmp(fname, "author") == 0 || (strcasecmp(fname, "editor") == 0 && !e.authors))
				field_set(&e.authors, v);
			else if (strcasecmp(fname, "year") == 0)
				field_set(&e.year, v);
			else if (strcasecmp(fname, "title") == 0)
				field_set(&e.title, v);
			else if (strcasecmp(fname, "journal") == 0 || (strcasecmp(fname, "booktitle") == 0 && !e.journal))
				field_set(&e.journal, v);
			else if (strcasecmp(fname, "volume") == 0)
				field_set(&e.volume, v);
			else if (strcasecmp(fname, "pages") == 0)
				field_set(&e.pages, v);
			else if (strcasecmp(fname, "doi") == 0)
				field_set(&e.doi, v);
			bp_space(&p);
			c = bp_peek(&p);
			if (c == ',') {
				bp_get(&p);
			} else if (c != close) {
				snprintf(p.err, sizeof p.err, "field %s: expected ',' or '%c' after the value", fname, close);
				goto bad_entry;
			}
		}
		if (!e.type || !e.key) {
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			goto done;
		}
		if ((rc = on_entry(ctx, &e, err)))
			goto done;
		continue;
	bad_entry:
		if (bad) {
			char msg[1200];
			snprintf(msg, sizeof msg, "%s:%ld: %s: %s", name, line, key[0] ? key : "entry", p.err);
			bad(ctx, msg);
		}
		bp_resync(&p);
	}
done:
	entry_clear(&e);
	for (size_t i = 0; i < p.nm; i++) {
		free(p.m[i].name);
		free(p.m[i].value);
	}
	free(p.m);
	bc__buf_free(&val);
	return rc;
}

/* ---- refs: into the database -------------------------------------------- */

typedef struct refs_state {
	bc_db *db;
	sqlite3_stmt *find, *upsert;
	int64_t batch;
	bc_refs_result *r;
	bc_import_report_fn report;
	void *ctx;
	const char *name;
	char **seen;      /* keys of this file with their line, for duplicates */
	long *seen_line;
	size_t nseen, capseen;
} refs_state;

static void refs_bad(void *ctx, const char *msg)
{
	refs_state *s = ctx;
	s->r->n_bad++;
	if (s->report)
		s->report(s->ctx, msg);
}

static int refs_entry(void *ctx, const bc_bib_entry *e, bc_err *err)
{
	refs_state *s = ctx;
	for (size_t i = 0; i < s->nseen; i++)
		if (strcmp(s->seen[i], e->key) == 0) {
			char msg[1200];
			snprintf(msg, sizeof msg, "%s:%ld: %s: the key appears again (first on line %ld); this entry is skipped",
				s->name, e->line, e->key, s->seen_line[i]);
			refs_bad(s, msg);
			return BC_OK;
		}
	if (s->nseen == s->capseen) {
		size_t nc = s->capseen ? s->capseen * 2 : 64;
		char **ns = bc__realloc(s->seen, nc * sizeof *ns);
		if (!ns)
			return bc_err_set(err, BC_ENOMEM, "out of memory");
		s->seen = ns;
		long *nl = bc__realloc(s->seen_line, nc * sizeof *nl);
		if (!nl)
			return bc_err_set(err, BC_ENOMEM, "out of memory");
		s->seen_line = nl;
		s->capseen = nc;
	}
	if (!(s->seen[s->nseen] = bc__strdup(e->key)))
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	s->seen_line[s->nseen++] = e->line;
	s->r->n_entries++;
	sqlite3_reset(s->find);
	bc_db__bind_text(s->find, ":key", e->key);
	int step = sqlite3_step(s->find);
	if (step != SQLITE_ROW && step != SQLITE_DONE)
		return bc_db__error(s->db, err, "reading references");
	if (step == SQLITE_ROW)
		s->r->n_updated++;
	else
		s->r->n_new++;
	sqlite3_stmt *st = s->upsert;
	sqlite3_reset(st);
	bc_db__bind_text(st, ":key", e->key);
	bc_db__bind_text(st, ":type", e->type);
	bc_db__bind_text(st, ":authors", e->authors ? e->authors : "");
	bc_db__bind_text(st, ":year", e->year ? e->year : "");
	bc_db__bind_text(st, ":title", e->title ? e->title : "");
	bc_db__bind_text(st, ":journal", e->journal ? e->journal : "");
	bc_db__bind_text(st, ":volume", e->volume ? e->volume : "");
	bc_db__bind_text(st, ":pages", e->pages ? e->pages : "");
	bc_db__bind_text(st, ":doi", e->doi ? e->doi : "");
	bc_db__bind_int64(st, ":batch", s->batch);
	if (sqlite3_step(st) != SQLITE_DONE)
		return bc_db__error(s->db, err, "storing a reference");
	return BC_OK;
}

int bc_refs_load(bc_refs_result *out, bc_db *db, const char *path, bc_import_report_fn report, void *ctx, bc_err *err)
{
	memset(out, 0, sizeof *out);
	char *data = NULL;
	size_t len = 0;
	char sha[65];
	sqlite3_stmt *st = NULL;
	refs_state s;
	memset(&s, 0, sizeof s);
	int in_tx = 0;
	int rc = bc__read_file(path, &data, &len, err);
	if (rc)
		goto done;
	bc__sha256_hex(data, len, sha);
	if ((rc = bc_db__prepare(db, &st, "SELECT batch_id, started_at FROM import_batches WHERE kind = 'references' AND sha256 = :sha", err)))
		goto done;
	bc_db__bind_text(st, ":sha", sha);
	if (sqlite3_step(st) == SQLITE_ROW) {
		rc = bc_err_set(err, BC_EEXISTS, "%s: identical content was loaded already as batch %lld on %s; nothing loaded",
			path, (long long)sqlite3_column_int64(st, 0), sqlite3_column_text(st, 1));
		goto done;
	}
	sqlite3_finalize(st);
	st = NULL;
	if ((rc = bc_db__begin(db, err)))
		goto done;
	in_tx = 1;
	if ((rc = bc_db__prepare(db, &st,
		     "INSERT INTO import_batches (kind, file, sha256, tool_version) VALUES ('references', :file, :sha, :version)", err)))
		goto done;
	bc_db__bind_text(st, ":file", path);
	bc_db__bind_text(st, ":sha", sha);
	bc_db__bind_text(st, ":version", BC_VERSION);
	if (sqlite3_step(st) != SQLITE_DONE) {
		rc = bc_db__error(db, err, "recording the references batch");
		goto done;
	}
	s.batch = sqlite3_last_insert_rowid(bc_db__sqlite(db));
	sqlite3_finalize(st);
	st = NULL;
	s.db = db;
	s.r = out;
	s.report = report;
	s.ctx = ctx;
	s.name = path;
	if ((rc = bc_db__prepare(db, &s.find, "SELECT 1 FROM \"references\" WHERE citation_key = :key", err)) ||
		(rc = bc_db__prepare(db, &s.upsert,
			 "INSERT INTO \"references\" (citation_key, entry_type, authors, year, title, journal, volume, pages, doi, batch_id) "
			 "VALUES (:key, :type, :authors, :year, :title, :journal, :volume, :pages, :doi, :batch) "
			 "ON CONFLICT(citation_key) DO UPDATE SET entry_type = excluded.entry_type, authors = excluded.authors, "
			 "year = excluded.year, title = excluded.title, journal = excluded.journal, volume = excluded.volume, "
			 "pages = excluded.pages, doi = excluded.doi, batch_id = excluded.batch_id", err)))
		goto done;
	if ((rc = bc_bib__parse(path, data, len, refs_entry, refs_bad, &s, err)))
		goto done;
	if ((rc = bc_db__prepare(db, &st,
		     "UPDATE import_batches SET n_read = :r, n_stored = :s, n_quarantined = :q WHERE batch_id = :b", err)))
		goto done;
	bc_db__bind_int64(st, ":r", out->n_entries + out->n_bad);
	bc_db__bind_int64(st, ":s", out->n_entries);
	bc_db__bind_int64(st, ":q", out->n_bad);
	bc_db__bind_int64(st, ":b", s.batch);
	if (sqlite3_step(st) != SQLITE_DONE) {
		rc = bc_db__error(db, err, "recording the reference counts");
		goto done;
	}
	sqlite3_finalize(st);
	st = NULL;
	sqlite3_finalize(s.find);
	sqlite3_finalize(s.upsert);
	s.find = s.upsert = NULL;
	if ((rc = bc_db__commit(db, err)))
		goto done;
	in_tx = 0;
	out->batch_id = s.batch;
done:
	sqlite3_finalize(st);
	sqlite3_finalize(s.find);
	sqlite3_finalize(s.upsert);
	for (size_t i = 0; i < s.nseen; i++)
		free(s.seen[i]);
	free(s.seen);
	free(s.seen_line);
	if (in_tx)
		bc_db__rollback(db);
	free(data);
	return rc;
}
