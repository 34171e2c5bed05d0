/*
 * dwca.c - Darwin Core Archives, the reader object: opening and validating
 * an archive (zip file or folder: meta.xml, eml.xml, every data file) before
 * the first record, the record columns, the extension rows indexed by
 * coreid, the accessors and freeing; and the small helpers the reader's
 * files share. Entries: dwca_entries.c; meta.xml: dwca_meta.c; data files:
 * dwca_text.c; records: dwca_join.c; export: dwca_write.c.
 */
#include "dwca_impl.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <nettle/sha2.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <libxml/tree.h>
#include <zip.h>

/* ------------------------------------------------------------------ */
/* Small helpers.                                                      */
/* ------------------------------------------------------------------ */

int bc_dwca__oom(bc_err *err) { return bc_err_set(err, BC_ENOMEM, "out of memory"); }

char *bc_dwca__trim_copy(const char *s)
{
	while (*s && isspace((unsigned char)*s))
		s++;
	size_t n = strlen(s);
	while (n && isspace((unsigned char)s[n - 1]))
		n--;
	return bc__strndup(s, n);
}

/* Lower case, '_' and '-' as spaces, runs of space collapsed, "palaeo" as
 * "paleo": the form measurementType and unit names are compared in. */
void bc_dwca__norm_key(const char *s, char *out, size_t cap)
{
	size_t n = 0;
	int space = 1;
	for (; *s && n + 1 < cap; s++) {
		unsigned char c = (unsigned char)*s;
		if (c == '_' || c == '-' || isspace(c)) {
			if (!space)
				out[n++] = ' ';
			space = 1;
			continue;
		}
		out[n++] = (char)tolower(c);
		space = 0;
	}
	while (n && out[n - 1] == ' ')
		n--;
	out[n] = '\0';
	char *p;
	while ((p = strstr(out, "palaeo")))
		memmove(p + 3, p + 4, strlen(p + 4) + 1);
}

/* Parses a whole string as a finite number (surrounding blanks allowed). */
int bc_dwca__parse_number(const char *s, double *out)
{
	char *end;
	while (isspace((unsigned char)*s))
		s++;
	if (!*s)
		return -1;
	errno = 0;
	double v = strtod(s, &end);
	while (isspace((unsigned char)*end))
		end++;
	if (*end || errno || !isfinite(v))
		return -1;
	*out = v;
	return 0;
}

void bc_dwca__format_number(double v, char *out, size_t cap)
{
	snprintf(out, cap, "%.15g", v);
	if (strcmp(out, "-0") == 0)
		snprintf(out, cap, "0");
}

const char *bc_dwca__last_part(const char *iri)
{
	const char *s = iri + strlen(iri);
	while (s > iri && s[-1] != '/' && s[-1] != '#')
		s--;
	return s;
}

/* ------------------------------------------------------------------ */
/* Opening.                                                            */
/* ------------------------------------------------------------------ */

static int col_add(bc_dwca *a, const char *name)
{
	for (size_t i = 0; i < a->ncols; i++)
		if (strcmp(a->cols[i], name) == 0)
			return (int)i;
	char **nc = bc__realloc(a->cols, (a->ncols + 1) * sizeof *nc);
	if (!nc)
		return BC_ENOMEM;
	a->cols = nc;
	if (!(a->cols[a->ncols] = bc__strdup(name)))
		return BC_ENOMEM;
	return (int)a->ncols++;
}

int bc_dwca__col_find(const bc_dwca *a, const char *name)
{
	for (size_t i = 0; i < a->ncols; i++)
		if (strcmp(a->cols[i], name) == 0)
			return (int)i;
	return -1;
}

/* A constant basisOfRecord "FossilSpecimen" says what every stored
 * occurrence is; it is not kept as an extra column (so export -> import
 * is lossless). Any other basisOfRecord is kept. */
static int is_implied(const dw_field *f)
{
	return f->index < 0 && strcmp(f->term, NS_DWC "basisOfRecord") == 0 && f->def && strcmp(f->def, "FossilSpecimen") == 0;
}

static int build_columns(bc_dwca *a, bc_err *err)
{
	dw_part *core = &a->parts[0];
	size_t width = core->nheader;
	for (size_t i = 0; i < core->nf; i++) {
		dw_field *f = &core->f[i];
		if (f->index >= 0 && (size_t)f->index + 1 > width)
			width = (size_t)f->index + 1;
		if (is_implied(f))
			continue;
		if ((f->col_i = col_add(a, f->col)) < 0)
			return bc_dwca__oom(err);
	}
	if (core->key_index >= 0 && (size_t)core->key_index + 1 > width)
		width = (size_t)core->key_index + 1;
	a->core_width = width;
	a->id_col = -1;
	if (core->key_index >= 0 && bc_dwca__col_find(a, "occurrenceID") < 0) {
		if ((a->id_col = col_add(a, "occurrenceID")) < 0)
			return bc_dwca__oom(err);
	}
	for (size_t e = 1; e < a->nparts; e++) {
		dw_part *p = &a->parts[e];
		int rc = 0;
		if (p->kind == PART_MOF) {
			if (col_add(a, "minimumPaleodepthInMeters") < 0 || col_add(a, "maximumPaleodepthInMeters") < 0 ||
				col_add(a, "depositionalEnvironment") < 0 || col_add(a, "preservationMode") < 0 ||
				(rc = col_add(a, "measurementOrFact")) < 0)
				return bc_dwca__oom(err);
		} else if (p->kind == PART_CHRONO) {
			if (col_add(a, "earliestChronometricAge") < 0 || col_add(a, "latestChronometricAge") < 0 ||
				(rc = col_add(a, "chronometricAge")) < 0)
				return bc_dwca__oom(err);
		} else {
			bc_buf b = {0};
			if (bc__buf_printf(&b, "extension:%s", bc_dwca__last_part(p->row_type))) {
				bc__buf_free(&b);
				return bc_dwca__oom(err);
			}
			rc = col_add(a, b.data);
			bc__buf_free(&b);
			if (rc < 0)
				return bc_dwca__oom(err);
		}
		p->extra_col = rc;
	}
	/* core columns meta.xml does not describe, named by the header line */
	for (size_t i = 0; i < core->nheader; i++) {
		int mapped = (long)i == core->key_index;
		for (size_t k = 0; k < core->nf && !mapped; k++)
			if (core->f[k].index == (long)i)
				mapped = 1;
		if (mapped || !core->header[i][0])
			continue;
		if (bc_dwca__col_find(a, core->header[i]) >= 0)
			continue; /* would shadow a described column; its cells are reported if used */
		if (col_add(a, core->header[i]) < 0)
			return bc_dwca__oom(err);
	}
	a->vals = bc__calloc(a->ncols, sizeof *a->vals);
	return a->vals ? BC_OK : bc_dwca__oom(err);
}

uint64_t bc_dwca__hash(const char *s)
{
	uint64_t h = 1469598103934665603ULL;
	for (; *s; s++)
		h = (h ^ (unsigned char)*s) * 1099511628211ULL;
	return h;
}

static int load_extensions(bc_dwca *a, bc_err *err)
{
	dw_row r = {0};
	int rc = BC_OK;
	for (size_t e = 1; e < a->nparts; e++) {
		dw_part *p = &a->parts[e];
		while ((rc = bc_dwca__row_next(p, &r, err)) == 1) {
			ext_row *x = bc__calloc(1, sizeof *x);
			ext_row **nr = x ? bc__realloc(a->rows, (a->nrows + 1) * sizeof *nr) : NULL;
			if (!nr) {
				free(x);
				rc = bc_dwca__oom(err);
				goto done;
			}
			a->rows = nr;
			a->rows[a->nrows++] = x;
			x->part = e;
			x->line = r.line;
			x->n = r.n;
			x->text = bc__malloc(r.text.len);
			x->off = bc__malloc(r.n * sizeof *x->off);
			if (!x->text || !x->off) {
				rc = bc_dwca__oom(err);
				goto done;
			}
			memcpy(x->text, r.text.data, r.text.len);
			memcpy(x->off, r.off, r.n * sizeof *x->off);
		}
		if (rc < 0)
			goto done;
		rc = BC_OK;
	}
	a->nbucket = 64;
	while (a->nbucket < a->nrows * 2)
		a->nbucket *= 2;
	a->bucket = bc__calloc(a->nbucket, sizeof *a->bucket);
	if (!a->bucket) {
		rc = bc_dwca__oom(err);
		goto done;
	}
	for (size_t i = a->nrows; i-- > 0;) {
		ext_row *x = a->rows[i];
		dw_part *p = &a->parts[x->part];
		const char *id = (size_t)p->key_index < x->n ? x->text + x->off[p->key_index] : "";
		size_t b = bc_dwca__hash(id) & (a->nbucket - 1);
		x->chain = a->bucket[b];
		a->bucket[b] = x;
	}
done:
	bc_dwca__row_free(&r);
	return rc;
}

int bc_dwca__detect(const char *path)
{
	struct stat sb;
	if (stat(path, &sb) != 0)
		return 0;
	if (S_ISDIR(sb.st_mode)) {
		bc_buf b = {0};
		if (bc__buf_printf(&b, "%s/meta.xml", path))
			return 0;
		int r = stat(b.data, &sb) == 0;
		bc__buf_free(&b);
		return r;
	}
	FILE *fp = fopen(path, "rb");
	if (!fp)
		return 0;
	unsigned char sig[4] = {0};
	size_t n = fread(sig, 1, 4, fp);
	fclose(fp);
	return n == 4 && sig[0] == 'P' && sig[1] == 'K' && sig[2] == 3 && sig[3] == 4;
}

static int add_layout(bc_dwca *a)
{
	bc_buf *b = &a->layout;
	int rc = bc__buf_puts(b, "{\"format\":\"dwca\",\"files\":[");
	for (size_t i = 0; i < a->nparts && !rc; i++) {
		dw_part *p = &a->parts[i];
		char d[2] = {p->delim, 0}, q[2] = {p->quote, 0};
		rc |= bc__buf_puts(b, i ? ",{\"rowType\":" : "{\"rowType\":");
		rc |= bc__buf_json_string(b, p->row_type);
		rc |= bc__buf_puts(b, ",\"location\":");
		rc |= bc__buf_json_string(b, p->location);
		rc |= bc__buf_puts(b, ",\"fieldsTerminatedBy\":");
		rc |= bc__buf_json_string(b, d);
		rc |= bc__buf_puts(b, ",\"fieldsEnclosedBy\":");
		rc |= bc__buf_json_string(b, q);
		rc |= bc__buf_puts(b, ",\"encoding\":");
		rc |= bc__buf_json_string(b, p->encoding);
		rc |= bc__buf_printf(b, ",\"ignoreHeaderLines\":%ld}", p->skip);
	}
	rc |= bc__buf_puts(b, "]}");
	return rc ? BC_ENOMEM : BC_OK;
}

int bc_dwca__open(bc_dwca **out, const char *path, const char *name, const bc_dwca_limits *limits, bc_err *err)
{
	*out = NULL;
	bc_dwca *a = bc__calloc(1, sizeof *a);
	char *meta = NULL, *eml = NULL;
	size_t meta_len = 0, eml_len = 0;
	xmlDoc *doc = NULL;
	bc_buf mname = {0};
	int rc = BC_OK;
	if (!a)
		return bc_dwca__oom(err);
	bc_dwca_limits def = BC_DWCA_LIMITS_INIT;
	a->lim = limits ? *limits : def;
	sha256_init(&a->sha);
	if (!(a->name = bc__strdup(name ? name : path))) {
		rc = bc_dwca__oom(err);
		goto done;
	}
	struct stat sb;
	if (stat(path, &sb) != 0) {
		rc = bc_err_set(err, errno == ENOENT ? BC_ENOTFOUND : BC_EIO, "%s: %s", a->name, strerror(errno));
		goto done;
	}
	if (S_ISDIR(sb.st_mode)) {
		if (!(a->root = realpath(path, NULL))) {
			rc = bc_err_set(err, BC_EIO, "%s: %s", a->name, strerror(errno));
			goto done;
		}
		int has = bc_dwca__has_entry(a, "meta.xml");
		if (has <= 0) {
			rc = has < 0 ? bc_dwca__oom(err) : bc_err_set(err, BC_EINVALID, "%s: not a Darwin Core Archive: the folder has no meta.xml", a->name);
			goto done;
		}
	} else {
		int zerr = 0;
		a->zip = zip_open(path, ZIP_RDONLY | ZIP_CHECKCONS, &zerr);
		if (!a->zip) {
			zip_error_t ze;
			zip_error_init_with_code(&ze, zerr);
			rc = bc_err_set(err, BC_EINVALID, "%s: not a readable zip file: %s", a->name, zip_error_strerror(&ze));
			zip_error_fini(&ze);
			goto done;
		}
		if ((rc = bc_dwca__check_zip(a, err)))
			goto done;
	}
	if ((rc = bc_dwca__read_entry(a, "meta.xml", a->lim.max_xml, &meta, &meta_len, err)))
		goto done;
	if (bc__buf_printf(&mname, "%s/meta.xml", a->name)) {
		rc = bc_dwca__oom(err);
		goto done;
	}
	if ((rc = bc_dwca__xml_parse(&doc, mname.data, meta, meta_len, err)))
		goto done;
	xmlNode *root = xmlDocGetRootElement(doc);
	if (!root || !bc_dwca__is_text_el(root, "archive")) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: archive: the root element must be <archive> (" NS_TEXT ")",
			mname.data, root ? xmlGetLineNo(root) : 1L);
		goto done;
	}
	size_t ncore = 0, next = 0;
	for (xmlNode *c = root->children; c; c = c->next) {
		if (bc_dwca__is_text_el(c, "core"))
			ncore++;
		else if (bc_dwca__is_text_el(c, "extension"))
			next++;
	}
	if (ncore != 1) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: core: exactly one <core> is required (found %zu)", mname.data, xmlGetLineNo(root), ncore);
		goto done;
	}
	a->parts = bc__calloc(1 + next, sizeof *a->parts);
	if (!a->parts) {
		rc = bc_dwca__oom(err);
		goto done;
	}
	a->nparts = 1 + next;
	size_t k = 1;
	for (xmlNode *c = root->children; c; c = c->next) {
		if (bc_dwca__is_text_el(c, "core"))
			rc = bc_dwca__read_part(a, c, &a->parts[0], 1, mname.data, err);
		else if (bc_dwca__is_text_el(c, "extension"))
			rc = bc_dwca__read_part(a, c, &a->parts[k++], 0, mname.data, err);
		if (rc)
			goto done;
	}
	if (next && a->parts[0].key_index < 0) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: core: <id index=\"...\"/> is required when there are extensions",
			mname.data, a->parts[0].meta_line);
		goto done;
	}
	/* metadata: the archive's metadata attribute, else eml.xml if present */
	char *mattr = bc_dwca__attr(root, "metadata");
	int has_eml = mattr && *mattr ? 0 : bc_dwca__has_entry(a, "eml.xml");
	const char *mloc = mattr && *mattr ? mattr : has_eml > 0 ? "eml.xml" : NULL;
	int has_loc = mloc && !bc_dwca__path_problem(mloc) ? bc_dwca__has_entry(a, mloc) : 0;
	if (has_eml < 0 || has_loc < 0) {
		rc = bc_dwca__oom(err);
	} else if (has_loc) {
		rc = bc_dwca__read_entry(a, mloc, a->lim.max_xml, &eml, &eml_len, err);
		if (!rc) {
			bc_buf en = {0};
			xmlDoc *ed = NULL;
			if (bc__buf_printf(&en, "%s/%s", a->name, mloc))
				rc = bc_dwca__oom(err);
			else
				rc = bc_dwca__xml_parse(&ed, en.data, eml, eml_len, err);
			xmlFreeDoc(ed);
			bc__buf_free(&en);
		}
	} else if (mloc && bc_dwca__path_problem(mloc) && !strstr(mloc, "://")) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: metadata: '%s': refused: %s", mname.data, xmlGetLineNo(root), mloc, bc_dwca__path_problem(mloc));
	}
	xmlFree(mattr);
	if (rc)
		goto done;
	a->metadata = eml ? eml : bc__strdup("");
	eml = NULL;
	if (!a->metadata) {
		rc = bc_dwca__oom(err);
		goto done;
	}
	sha256_update(&a->sha, meta_len, (const uint8_t *)meta);
	for (size_t i = 0; i < a->nparts; i++) {
		dw_part *p = &a->parts[i];
		if ((rc = bc_dwca__read_entry(a, p->location, a->lim.max_entry, &p->data, &p->len, err)) ||
			(rc = bc_dwca__part_decode(a, p, err)))
			goto done;
	}
	if ((rc = build_columns(a, err)) || (rc = load_extensions(a, err)))
		goto done;
	if (add_layout(a)) {
		rc = bc_dwca__oom(err);
		goto done;
	}
	uint8_t d[SHA256_DIGEST_SIZE];
	sha256_digest(&a->sha, sizeof d, d);
	for (size_t i = 0; i < sizeof d; i++)
		snprintf(a->sha_hex + 2 * i, 3, "%02x", d[i]);
done:
	xmlFreeDoc(doc);
	free(meta);
	free(eml);
	bc__buf_free(&mname);
	if (rc) {
		bc_dwca__free(a);
		return rc;
	}
	*out = a;
	return BC_OK;
}

void bc_dwca__clear_vals(bc_dwca *a)
{
	for (size_t i = 0; i < a->ncols; i++) {
		free(a->vals[i]);
		a->vals[i] = NULL;
	}
}

void bc_dwca__free(bc_dwca *a)
{
	if (!a)
		return;
	if (a->vals)
		bc_dwca__clear_vals(a);
	free(a->vals);
	for (size_t i = 0; i < a->nparts; i++) {
		dw_part *p = &a->parts[i];
		xmlFree(p->row_type);
		free(p->location);
		free(p->where);
		free(p->encoding);
		for (size_t k = 0; k < p->nf; k++) {
			free(p->f[k].term);
			free(p->f[k].col);
			free(p->f[k].def);
		}
		free(p->f);
		free(p->data);
		for (size_t k = 0; k < p->nheader; k++)
			free(p->header[k]);
		free(p->header);
	}
	free(a->parts);
	for (size_t i = 0; i < a->nrows; i++) {
		free(a->rows[i]->text);
		free(a->rows[i]->off);
		free(a->rows[i]);
	}
	free(a->rows);
	free(a->bucket);
	for (size_t i = 0; i < a->capseen; i++)
		free(a->seen[i].id);
	free(a->seen);
	for (size_t i = 0; i < a->ncols; i++)
		free(a->cols[i]);
	free(a->cols);
	bc_dwca__row_free(&a->cur);
	if (a->zip)
		zip_discard(a->zip);
	free(a->prefix);
	free(a->root);
	free(a->name);
	free(a->metadata);
	bc__buf_free(&a->layout);
	free(a);
}

const char *bc_dwca__sha256(const bc_dwca *a) { return a->sha_hex; }
const char *bc_dwca__metadata(const bc_dwca *a) { return a->metadata; }
const char *bc_dwca__layout_json(const bc_dwca *a) { return a->layout.data ? a->layout.data : "{}"; }
size_t bc_dwca__ncolumns(const bc_dwca *a) { return a->ncols; }
const char *bc_dwca__column(const bc_dwca *a, size_t i) { return i < a->ncols ? a->cols[i] : NULL; }
const char *bc_dwca__value(const bc_dwca *a, size_t i) { return i < a->ncols && a->vals[i] ? a->vals[i] : ""; }
const char *bc_dwca__where(const bc_dwca *a) { return a->where ? a->where : a->name; }
long bc_dwca__line(const bc_dwca *a) { return a->line; }

const char *bc_dwca__problem(const bc_dwca *a, const char **field)
{
	if (!a->has_problem)
		return NULL;
	if (field)
		*field = a->problem_field;
	return a->problem;
}
