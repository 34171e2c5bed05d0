/*
 * dwca.c - Darwin Core Archives: read a zip file or an unpacked folder
 * (hardened meta.xml, safe paths, size limits) as records keyed by the
 * design.md column names, extensions joined by coreid; and write one.
 */
#include "dwca_impl.h"
#include "xml.h"

#include <ctype.h>
#include <errno.h>
#include <iconv.h>
#include <limits.h>
#include <math.h>
#include <nettle/sha2.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <libxml/parser.h>
#include <libxml/parserInternals.h>
#include <libxml/SAX2.h>
#include <libxml/tree.h>
#include <libxml/xmlerror.h>
#include <zip.h>

#define NS_TEXT "http://rs.tdwg.org/dwc/text/"
#define NS_DWC "http://rs.tdwg.org/dwc/terms/"
#define NS_CHRONO "http://rs.tdwg.org/chrono/terms/"
#define NS_DCTERMS "http://purl.org/dc/terms/"
#define NS_OBIS "http://rs.iobis.org/obis/terms/"

/* The project's five extension terms (design.md marks them *). */
static const char *const own_terms[] = {
	"taxonGroup", "minimumPaleodepthInMeters", "maximumPaleodepthInMeters",
	"depositionalEnvironment", "preservationMode",
};

/* ------------------------------------------------------------------ */
/* Small helpers.                                                      */
/* ------------------------------------------------------------------ */

int bc_dwca__oom(bc_err *err) { return bc_err_set(err, BC_ENOMEM, "out of memory"); }

static int str_ieq(const char *a, const char *b)
{
	for (; *a && *b; a++, b++)
		if (tolower((unsigned char)*a) != tolower((unsigned char)*b))
			return 0;
	return *a == *b;
}

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

static const char *last_part(const char *iri)
{
	const char *s = iri + strlen(iri);
	while (s > iri && s[-1] != '/' && s[-1] != '#')
		s--;
	return s;
}

static int utf8_check(const unsigned char *s, size_t n, size_t *bad)
{
	size_t i = 0;
	while (i < n) {
		unsigned c = s[i];
		size_t k;
		unsigned min;
		if (c < 0x80) {
			i++;
			continue;
		} else if (c >= 0xC2 && c <= 0xDF) {
			k = 1, min = 0x80;
		} else if (c >= 0xE0 && c <= 0xEF) {
			k = 2, min = 0x800;
		} else if (c >= 0xF0 && c <= 0xF4) {
			k = 3, min = 0x10000;
		} else {
			*bad = i;
			return 0;
		}
		unsigned cp = c & (0x3F >> k);
		for (size_t j = 1; j <= k; j++) {
			if (i + j >= n || (s[i + j] & 0xC0) != 0x80) {
				*bad = i;
				return 0;
			}
			cp = (cp << 6) | (s[i + j] & 0x3F);
		}
		if (cp < min || cp > 0x10FFFF || (cp >= 0xD800 && cp <= 0xDFFF)) {
			*bad = i;
			return 0;
		}
		i += k + 1;
	}
	return 1;
}

static long line_at(const char *s, size_t off)
{
	long line = 1;
	for (size_t i = 0; i < off; i++)
		if (s[i] == '\n')
			line++;
	return line;
}

/* Percent-encodes a column name for the project's column namespace. */
static int pct_encode(bc_buf *b, const char *s)
{
	for (; *s; s++) {
		unsigned char c = (unsigned char)*s;
		if (isalnum(c) || c == '-' || c == '.' || c == '_' || c == '~') {
			if (bc__buf_append(b, (const char *)&c, 1))
				return BC_ENOMEM;
		} else if (bc__buf_printf(b, "%%%02X", c)) {
			return BC_ENOMEM;
		}
	}
	return BC_OK;
}

static char *pct_decode(const char *s)
{
	char *out = bc__malloc(strlen(s) + 1), *o = out;
	if (!out)
		return NULL;
	for (; *s; s++) {
		if (s[0] == '%' && isxdigit((unsigned char)s[1]) && isxdigit((unsigned char)s[2])) {
			char hex[3] = {s[1], s[2], 0};
			*o++ = (char)strtol(hex, NULL, 16);
			s += 2;
		} else {
			*o++ = *s;
		}
	}
	*o = '\0';
	return out;
}

/* The record column a term IRI fills. Caller frees. */
static char *term_column(const char *iri)
{
	static const char *const plain[] = {NS_DWC, NS_CHRONO, BC_DWCA_NS, NS_OBIS};
	for (size_t i = 0; i < sizeof plain / sizeof plain[0]; i++) {
		size_t n = strlen(plain[i]);
		if (strncmp(iri, plain[i], n) == 0 && iri[n] && !strchr(iri + n, '/'))
			return bc__strdup(iri + n);
	}
	size_t n = strlen(BC_DWCA_COLUMN_NS);
	if (strncmp(iri, BC_DWCA_COLUMN_NS, n) == 0 && iri[n])
		return pct_decode(iri + n);
	n = strlen(NS_DCTERMS);
	if (strncmp(iri, NS_DCTERMS, n) == 0 && iri[n]) {
		bc_buf b = {0};
		if (bc__buf_printf(&b, "dcterms:%s", iri + n)) {
			bc__buf_free(&b);
			return NULL;
		}
		return b.data;
	}
	return bc__strdup(iri);
}

int bc_dwca__term_iri(bc_buf *b, const char *col)
{
	for (size_t i = 0; i < sizeof own_terms / sizeof own_terms[0]; i++)
		if (strcmp(col, own_terms[i]) == 0)
			return bc__buf_printf(b, "%s%s", BC_DWCA_NS, col);
	static const char *const dwc[] = {
		"occurrenceID", "scientificName", "order", "family", "genus", "locality", "country",
		"decimalLatitude", "decimalLongitude", "geodeticDatum", "coordinateUncertaintyInMeters",
		"verbatimCoordinates", "verbatimSRS", "earliestAgeOrLowestStage", "latestAgeOrHighestStage",
		"earliestEpochOrLowestSeries", "latestEpochOrHighestSeries", "earliestPeriodOrLowestSystem",
		"latestPeriodOrHighestSystem", "formation", "member", "bed", "individualCount",
		"associatedReferences", "basisOfRecord",
	};
	for (size_t i = 0; i < sizeof dwc / sizeof dwc[0]; i++)
		if (strcmp(col, dwc[i]) == 0)
			return bc__buf_printf(b, "%s%s", NS_DWC, col);
	if (strncmp(col, "dcterms:", 8) == 0 && col[8])
		return bc__buf_printf(b, "%s%s", NS_DCTERMS, col + 8);
	if (strncmp(col, "http://", 7) == 0 || strncmp(col, "https://", 8) == 0)
		return bc__buf_puts(b, col);
	if (bc__buf_puts(b, BC_DWCA_COLUMN_NS))
		return BC_ENOMEM;
	return pct_encode(b, col);
}

/* ------------------------------------------------------------------ */
/* Paths and entries.                                                  */
/* ------------------------------------------------------------------ */

/* NULL when `p` is a safe relative path inside the archive, else why not. */
static const char *path_problem(const char *p)
{
	if (!*p)
		return "empty path";
	if (strstr(p, "://") || strncmp(p, "file:", 5) == 0)
		return "a URL (locations on the network or elsewhere are never fetched)";
	if (p[0] == '/')
		return "an absolute path";
	if (strchr(p, '\\'))
		return "a backslash in the path";
	if (isalpha((unsigned char)p[0]) && p[1] == ':')
		return "a drive letter";
	const char *s = p;
	while (*s) {
		const char *e = strchr(s, '/');
		size_t n = e ? (size_t)(e - s) : strlen(s);
		if (n == 2 && s[0] == '.' && s[1] == '.')
			return "'..' leaves the archive folder";
		if (!e)
			break;
		s = e + 1;
	}
	return NULL;
}

static int limit_error(bc_dwca *a, const char *entry, const char *what, uint64_t size, uint64_t limit, bc_err *err)
{
	return bc_err_set(err, BC_EINVALID,
		"%s/%s: refused: %s %llu bytes is over the limit of %llu bytes (possible zip bomb); nothing was imported",
		a->name, entry, what, (unsigned long long)size, (unsigned long long)limit);
}

/* Reads one file of the archive (whole) into memory, enforcing limits. */
static int read_entry(bc_dwca *a, const char *loc, uint64_t limit, char **out, size_t *len, bc_err *err)
{
	*out = NULL;
	*len = 0;
	const char *why = path_problem(loc);
	if (why)
		return bc_err_set(err, BC_EINVALID, "%s/meta.xml: location '%s': refused: %s", a->name, loc, why);
	bc_buf b = {0};
	int rc = BC_OK;
	if (a->zip) {
		bc_buf full = {0};
		if (bc__buf_printf(&full, "%s%s", a->prefix, loc))
			return bc_dwca__oom(err);
		zip_int64_t idx = zip_name_locate(a->zip, full.data, 0);
		bc__buf_free(&full);
		if (idx < 0)
			return bc_err_set(err, BC_EINVALID, "%s: file '%s' named in meta.xml is not in the archive", a->name, loc);
		zip_stat_t st;
		zip_stat_init(&st);
		if (zip_stat_index(a->zip, (zip_uint64_t)idx, 0, &st) != 0)
			return bc_err_set(err, BC_EIO, "%s/%s: %s", a->name, loc, zip_strerror(a->zip));
		zip_file_t *zf = zip_fopen_index(a->zip, (zip_uint64_t)idx, 0);
		if (!zf)
			return bc_err_set(err, BC_EINVALID, "%s/%s: cannot read: %s", a->name, loc, zip_strerror(a->zip));
		char block[65536];
		zip_int64_t n;
		while ((n = zip_fread(zf, block, sizeof block)) > 0) {
			uint64_t got = (uint64_t)b.len + (uint64_t)n;
			if (got > limit) {
				rc = limit_error(a, loc, "actual uncompressed size (read so far)", got, limit, err);
				break;
			}
			if (a->total + got > a->lim.max_total) {
				rc = limit_error(a, loc, "uncompressed size of the archive so far", a->total + got, a->lim.max_total, err);
				break;
			}
			if ((st.valid & ZIP_STAT_COMP_SIZE) && got > a->lim.ratio_floor &&
				(double)got > a->lim.max_ratio * (double)(st.comp_size ? st.comp_size : 1)) {
				rc = bc_err_set(err, BC_EINVALID,
					"%s/%s: refused: compression ratio over %.0f:1 (possible zip bomb); nothing was imported",
					a->name, loc, a->lim.max_ratio);
				break;
			}
			if (bc__buf_append(&b, block, (size_t)n)) {
				rc = bc_dwca__oom(err);
				break;
			}
		}
		if (!rc && n < 0)
			rc = bc_err_set(err, BC_EINVALID, "%s/%s: cannot read: %s", a->name, loc, zip_file_strerror(zf));
		zip_fclose(zf);
	} else {
		bc_buf full = {0};
		if (bc__buf_printf(&full, "%s/%s", a->root, loc))
			return bc_dwca__oom(err);
		char *real = realpath(full.data, NULL);
		bc__buf_free(&full);
		if (!real)
			return bc_err_set(err, errno == ENOENT ? BC_EINVALID : BC_EIO, "%s/%s: %s", a->name, loc,
				errno == ENOENT ? "file named in meta.xml is missing" : strerror(errno));
		size_t rl = strlen(a->root);
		if (strncmp(real, a->root, rl) != 0 || real[rl] != '/') {
			free(real);
			return bc_err_set(err, BC_EINVALID, "%s/%s: refused: a symbolic link leads out of the archive folder", a->name, loc);
		}
		struct stat sb;
		FILE *fp = fopen(real, "rb");
		free(real);
		if (!fp)
			return bc_err_set(err, BC_EIO, "%s/%s: %s", a->name, loc, strerror(errno));
		if (fstat(fileno(fp), &sb) != 0 || !S_ISREG(sb.st_mode)) {
			fclose(fp);
			return bc_err_set(err, BC_EINVALID, "%s/%s: not a regular file", a->name, loc);
		}
		if ((uint64_t)sb.st_size > limit) {
			fclose(fp);
			return limit_error(a, loc, "size", (uint64_t)sb.st_size, limit, err);
		}
		if (a->total + (uint64_t)sb.st_size > a->lim.max_total) {
			fclose(fp);
			return limit_error(a, loc, "size of the archive so far", a->total + (uint64_t)sb.st_size, a->lim.max_total, err);
		}
		char block[65536];
		size_t n;
		while ((n = fread(block, 1, sizeof block, fp)) > 0) {
			if ((uint64_t)b.len + n > limit) {
				rc = limit_error(a, loc, "size", (uint64_t)b.len + n, limit, err);
				break;
			}
			if (bc__buf_append(&b, block, n)) {
				rc = bc_dwca__oom(err);
				break;
			}
		}
		if (!rc && ferror(fp))
			rc = bc_err_set(err, BC_EIO, "%s/%s: read error", a->name, loc);
		fclose(fp);
	}
	if (!rc && !b.data && bc__buf_append(&b, "", 0))
		rc = bc_dwca__oom(err);
	if (rc) {
		bc__buf_free(&b);
		return rc;
	}
	a->total += b.len;
	sha256_update(&a->sha, strlen(loc) + 1, (const uint8_t *)loc);
	sha256_update(&a->sha, b.len, (const uint8_t *)b.data);
	*out = b.data;
	*len = b.len;
	return BC_OK;
}

/* 1 when the archive has the file `loc`, 0 when not, BC_ENOMEM. */
static int has_entry(bc_dwca *a, const char *loc)
{
	bc_buf full = {0};
	int r;
	if (a->zip) {
		if (bc__buf_printf(&full, "%s%s", a->prefix, loc))
			return BC_ENOMEM;
		r = zip_name_locate(a->zip, full.data, 0) >= 0;
	} else {
		struct stat sb;
		if (bc__buf_printf(&full, "%s/%s", a->root, loc))
			return BC_ENOMEM;
		r = stat(full.data, &sb) == 0 && S_ISREG(sb.st_mode);
	}
	bc__buf_free(&full);
	return r;
}

/* Checks every entry of a zip before anything is read from it. */
static int check_zip(bc_dwca *a, bc_err *err)
{
	zip_int64_t n = zip_get_num_entries(a->zip, 0);
	if (n < 0)
		return bc_err_set(err, BC_EINVALID, "%s: not a readable zip file", a->name);
	if ((uint64_t)n > a->lim.max_entries)
		return bc_err_set(err, BC_EINVALID, "%s: refused: %lld entries, over the limit of %llu", a->name,
			(long long)n, (unsigned long long)a->lim.max_entries);
	uint64_t total = 0;
	int meta_root = 0, workbook = 0;
	const char *meta_sub = NULL;
	int n_sub = 0;
	for (zip_uint64_t i = 0; i < (zip_uint64_t)n; i++) {
		zip_stat_t st;
		zip_stat_init(&st);
		if (zip_stat_index(a->zip, i, 0, &st) != 0 || !(st.valid & ZIP_STAT_NAME))
			return bc_err_set(err, BC_EINVALID, "%s: entry %llu: unreadable directory record", a->name, (unsigned long long)i);
		const char *why = path_problem(st.name);
		if (why)
			return bc_err_set(err, BC_EINVALID, "%s: entry '%s': refused: %s; nothing was imported", a->name, st.name, why);
		zip_uint8_t os;
		zip_uint32_t attr;
		if (zip_file_get_external_attributes(a->zip, i, 0, &os, &attr) == 0 && os == ZIP_OPSYS_UNIX &&
			((attr >> 16) & S_IFMT) == S_IFLNK)
			return bc_err_set(err, BC_EINVALID, "%s: entry '%s': refused: a symbolic link; nothing was imported", a->name, st.name);
		if (st.valid & ZIP_STAT_SIZE) {
			if (st.size > a->lim.max_entry)
				return limit_error(a, st.name, "declared uncompressed size", st.size, a->lim.max_entry, err);
			total += st.size;
			if ((st.valid & ZIP_STAT_COMP_SIZE) && st.size > a->lim.ratio_floor &&
				(double)st.size > a->lim.max_ratio * (double)(st.comp_size ? st.comp_size : 1))
				return bc_err_set(err, BC_EINVALID,
					"%s/%s: refused: declared compression ratio %.0f:1 is over %.0f:1 (possible zip bomb); nothing was imported",
					a->name, st.name, (double)st.size / (double)(st.comp_size ? st.comp_size : 1), a->lim.max_ratio);
		}
		if (strcmp(st.name, "[Content_Types].xml") == 0 || strcmp(st.name, "mimetype") == 0)
			workbook = 1; /* Office Open XML (.xlsx) or OpenDocument (.ods) container */
		if (strcmp(st.name, "meta.xml") == 0)
			meta_root = 1;
		else {
			const char *sl = strchr(st.name, '/');
			if (sl && strcmp(sl + 1, "meta.xml") == 0) {
				meta_sub = st.name;
				n_sub++;
			}
		}
	}
	if (total > a->lim.max_total)
		return limit_error(a, "*", "declared uncompressed size of all entries", total, a->lim.max_total, err);
	if (meta_root)
		a->prefix = bc__strdup("");
	else if (n_sub == 1)
		a->prefix = bc__strndup(meta_sub, strlen(meta_sub) - strlen("meta.xml"));
	else if (workbook)
		return bc_err_set(err, BC_EINVALID, "%s: a spreadsheet workbook (.xlsx or .ods), not CSV or a Darwin Core Archive; save the sheet as CSV (UTF-8) and import that", a->name);
	else
		return bc_err_set(err, BC_EINVALID, "%s: not a Darwin Core Archive: no meta.xml at the top of the zip", a->name);
	return a->prefix ? BC_OK : bc_dwca__oom(err);
}

/* ------------------------------------------------------------------ */
/* Hardened XML.                                                       */
/* ------------------------------------------------------------------ */

/* SAX hook for <!DOCTYPE ...>: refused outright. A Darwin Core metafile or
 * an EML document needs no DTD, and refusing it before any declaration is
 * read rules out entity expansion and external entities alike. */
static void xml_doctype(void *ctx, const xmlChar *name, const xmlChar *public_id, const xmlChar *system_id)
{
	(void)public_id;
	xmlParserCtxtPtr ctxt = ctx;
	bc_xml_state *st = ctxt->_private;
	if (st && !st->rc)
		st->rc = bc_err_set(st->err, BC_EINVALID,
			"%s:%d: DOCTYPE: refused: a document type declaration ('%s'%s%s) is not allowed here "
			"(no DTD is loaded and no entity is expanded); nothing was imported",
			st->file, xmlSAX2GetLineNumber(ctx), name ? (const char *)name : "",
			system_id ? ", " : "", system_id ? (const char *)system_id : "");
	xmlStopParser(ctxt);
}

static void xml_entity(void *ctx, const xmlChar *name, int type, const xmlChar *public_id,
	const xmlChar *system_id, xmlChar *content)
{
	(void)type;
	(void)public_id;
	(void)system_id;
	(void)content;
	xmlParserCtxtPtr ctxt = ctx;
	bc_xml_state *st = ctxt->_private;
	if (st && !st->rc)
		st->rc = bc_err_set(st->err, BC_EINVALID, "%s:%d: DOCTYPE: refused: entity '%s' declared",
			st->file, xmlSAX2GetLineNumber(ctx), name ? (const char *)name : "");
	xmlStopParser(ctxt);
}

static int xml_parse(xmlDoc **out, const char *file, const char *buf, size_t len, bc_err *err)
{
	*out = NULL;
	if (len > INT_MAX)
		return bc_err_set(err, BC_EINVALID, "%s: refused: too large for the XML reader", file);
	if (len == 0)
		return bc_err_set(err, BC_EINVALID, "%s:1: XML: empty file", file);
	bc_xml_state st = {file, err, BC_OK};
	xmlDoc *doc = bc_xml__parse(&st, buf, (int)len, xml_doctype, xml_entity);
	if (!doc)
		return st.rc;
	if (!st.rc && (doc->intSubset || doc->extSubset))
		st.rc = bc_err_set(err, BC_EINVALID, "%s: DOCTYPE: refused: a document type declaration is not allowed here", file);
	if (st.rc) {
		xmlFreeDoc(doc);
		return st.rc;
	}
	*out = doc;
	return BC_OK;
}

/* ------------------------------------------------------------------ */
/* meta.xml                                                            */
/* ------------------------------------------------------------------ */

static int is_text_el(xmlNode *n, const char *name)
{
	if (n->type != XML_ELEMENT_NODE || strcmp((const char *)n->name, name) != 0)
		return 0;
	return !n->ns || !n->ns->href || strcmp((const char *)n->ns->href, NS_TEXT) == 0;
}

/* An attribute's value (caller frees with xmlFree), or NULL. */
static char *attr(xmlNode *n, const char *name)
{
	return (char *)xmlGetProp(n, (const xmlChar *)name);
}

/* Decodes "\t", "\n", "\r", "\\" as the text guide writes them. */
static void unescape(const char *s, char *out, size_t cap)
{
	size_t n = 0;
	for (; *s && n + 1 < cap; s++) {
		if (s[0] == '\\' && s[1]) {
			s++;
			out[n++] = *s == 't' ? '\t' : *s == 'n' ? '\n' : *s == 'r' ? '\r' : *s;
		} else {
			out[n++] = *s;
		}
	}
	out[n] = '\0';
}

static int parse_index(const char *s, long *out)
{
	char *end;
	errno = 0;
	long v = strtol(s, &end, 10);
	if (end == s || *end || errno || v < 0 || v > 100000)
		return -1;
	*out = v;
	return 0;
}

static int part_kind(const char *row_type)
{
	const char *local = last_part(row_type);
	if (strcmp(local, "MeasurementOrFact") == 0 || strcmp(local, "ExtendedMeasurementOrFact") == 0)
		return PART_MOF;
	if (strcmp(local, "ChronometricAge") == 0)
		return PART_CHRONO;
	return PART_OTHER;
}

static int read_part(bc_dwca *a, xmlNode *el, dw_part *p, int core, const char *mname, bc_err *err)
{
	int rc = BC_OK;
	char *v = NULL;
	long line = xmlGetLineNo(el);
	const char *tag = core ? "core" : "extension";
	p->meta_line = line;
	p->key_index = -1;
	p->extra_col = -1;
	p->row_type = attr(el, "rowType");
	if (!p->row_type || !*p->row_type)
		return bc_err_set(err, BC_EINVALID, "%s:%ld: %s: attribute rowType is required", mname, line, tag);
	if (core) {
		p->kind = PART_CORE;
		if (strcmp(p->row_type, NS_DWC "Occurrence") != 0)
			return bc_err_set(err, BC_EINVALID,
				"%s:%ld: core: rowType '%s': only an Occurrence core (" NS_DWC "Occurrence) can be imported",
				mname, line, p->row_type);
	} else {
		p->kind = part_kind(p->row_type);
	}
	char buf[64];
	/* fieldsTerminatedBy, default "," */
	v = attr(el, "fieldsTerminatedBy");
	unescape(v ? v : ",", buf, sizeof buf);
	if (strlen(buf) != 1 || buf[0] == '\n' || buf[0] == '\r') {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: fieldsTerminatedBy: '%s' not supported (one character, e.g. \\t or ,)", mname, line, v ? v : "");
		goto done;
	}
	p->delim = buf[0];
	xmlFree(v);
	/* fieldsEnclosedBy, default '"', "" = none */
	v = attr(el, "fieldsEnclosedBy");
	unescape(v ? v : "\"", buf, sizeof buf);
	if (strlen(buf) > 1 || buf[0] == p->delim) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: fieldsEnclosedBy: '%s' not supported (one character or empty)", mname, line, v ? v : "");
		goto done;
	}
	p->quote = buf[0];
	xmlFree(v);
	/* linesTerminatedBy, default "\n" (CRLF accepted too) */
	v = attr(el, "linesTerminatedBy");
	unescape(v ? v : "\\n", buf, sizeof buf);
	if (strcmp(buf, "\n") == 0 || strcmp(buf, "\r\n") == 0)
		p->eol = '\n';
	else if (strcmp(buf, "\r") == 0)
		p->eol = '\r';
	else {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: linesTerminatedBy: '%s' not supported (\\n, \\r\\n or \\r)", mname, line, v ? v : "");
		goto done;
	}
	xmlFree(v);
	v = attr(el, "ignoreHeaderLines");
	if (v && (parse_index(v, &p->skip) != 0)) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: ignoreHeaderLines: '%s' is not a whole number", mname, line, v);
		goto done;
	}
	xmlFree(v);
	v = attr(el, "encoding");
	p->encoding = bc__strdup(v ? v : "UTF-8");
	xmlFree(v);
	v = NULL;
	if (!p->encoding)
		return bc_dwca__oom(err);
	for (xmlNode *c = el->children; c; c = c->next) {
		long cl = xmlGetLineNo(c);
		if (is_text_el(c, "files")) {
			for (xmlNode *l = c->children; l; l = l->next) {
				if (!is_text_el(l, "location"))
					continue;
				if (p->location)
					return bc_err_set(err, BC_EINVALID, "%s:%ld: location: several data files for one %s are not supported", mname, xmlGetLineNo(l), tag);
				xmlChar *t = xmlNodeGetContent(l);
				p->location = t ? bc_dwca__trim_copy((const char *)t) : NULL;
				xmlFree(t);
				if (!p->location)
					return bc_dwca__oom(err);
			}
		} else if (is_text_el(c, core ? "id" : "coreid")) {
			v = attr(c, "index");
			if (!v || parse_index(v, &p->key_index) != 0) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: %s: index '%s' is not a column number", mname, cl, core ? "id" : "coreid", v ? v : "");
				goto done;
			}
			xmlFree(v);
			v = NULL;
		} else if (is_text_el(c, "field")) {
			dw_field f = {-1, NULL, NULL, NULL, -1};
			v = attr(c, "index");
			if (v && parse_index(v, &f.index) != 0) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: field: index '%s' is not a column number", mname, cl, v);
				goto done;
			}
			xmlFree(v);
			v = attr(c, "term");
			if (!v || !*v) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: field: attribute term is required", mname, cl);
				goto done;
			}
			f.term = bc__strdup(v);
			xmlFree(v);
			v = attr(c, "default");
			f.def = v ? bc__strdup(v) : NULL;
			int def_oom = v && !f.def;
			xmlFree(v);
			v = NULL;
			f.col = f.term ? term_column(f.term) : NULL;
			if (!f.term || !f.col || def_oom) {
				free(f.term);
				free(f.col);
				free(f.def);
				return bc_dwca__oom(err);
			}
			if (f.index < 0 && !f.def) {
				free(f.term);
				free(f.col);
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: field: needs an index or a default", mname, cl);
				goto done;
			}
			dw_field *nf = bc__realloc(p->f, (p->nf + 1) * sizeof *nf);
			if (!nf) {
				free(f.term);
				free(f.col);
				free(f.def);
				return bc_dwca__oom(err);
			}
			p->f = nf;
			for (size_t i = 0; i < p->nf; i++)
				if (strcmp(p->f[i].col, f.col) == 0) {
					rc = bc_err_set(err, BC_EINVALID, "%s:%ld: field: term '%s' appears twice in the %s", mname, cl, f.term, tag);
					free(f.term);
					free(f.col);
					free(f.def);
					goto done;
				}
			p->f[p->nf++] = f;
		}
	}
	if (!p->location)
		return bc_err_set(err, BC_EINVALID, "%s:%ld: %s: <files><location> is required", mname, line, tag);
	if (!core && p->key_index < 0)
		return bc_err_set(err, BC_EINVALID, "%s:%ld: extension: <coreid index=\"...\"/> is required", mname, line);
	bc_buf w = {0};
	if (bc__buf_printf(&w, "%s/%s", a->name, p->location))
		return bc_dwca__oom(err);
	p->where = w.data;
done:
	xmlFree(v);
	return rc;
}

/* ------------------------------------------------------------------ */
/* Delimited text.                                                     */
/* ------------------------------------------------------------------ */

static void row_reset(dw_row *r)
{
	r->text.len = 0;
	r->n = 0;
}

static void row_free(dw_row *r)
{
	bc__buf_free(&r->text);
	free(r->off);
	memset(r, 0, sizeof *r);
}

static int row_new_cell(dw_row *r)
{
	size_t *no = bc__grow(r->off, r->n, &r->cap, sizeof *no, 32);
	if (!no)
		return BC_ENOMEM;
	r->off = no;
	r->off[r->n++] = r->text.len;
	return BC_OK;
}

const char *bc_dwca__row_cell(const dw_row *r, size_t i)
{
	return i < r->n ? r->text.data + r->off[i] : "";
}

/* Reads the next record of part p from p->pos. 1 = record, 0 = end. */
int bc_dwca__row_next(dw_part *p, dw_row *r, bc_err *err)
{
	for (;;) {
		row_reset(r);
		if (p->pos >= p->len)
			return 0;
		r->line = p->line;
		const char *d = p->data;
		size_t n = p->len, i = p->pos;
		int end = 0;
		while (!end) {
			if (row_new_cell(r))
				return bc_dwca__oom(err);
			if (p->quote && i < n && d[i] == p->quote) {
				i++;
				for (;;) {
					if (i >= n)
						return bc_err_set(err, BC_EINVALID, "%s:%ld: quoted field not closed before the end of the file", p->where, r->line);
					if (d[i] == p->quote) {
						if (i + 1 < n && d[i + 1] == p->quote) {
							if (bc__buf_append(&r->text, &d[i], 1))
								return bc_dwca__oom(err);
							i += 2;
							continue;
						}
						i++;
						break;
					}
					if (d[i] == p->eol)
						p->line++;
					if (bc__buf_append(&r->text, &d[i], 1))
						return bc_dwca__oom(err);
					i++;
				}
			}
			size_t s = i;
			while (i < n && d[i] != p->delim && d[i] != p->eol)
				i++;
			size_t len = i - s;
			if (i >= n || d[i] == p->eol) {
				if (p->eol == '\n' && len && d[i - 1] == '\r')
					len--;
				end = 1;
			}
			if (bc__buf_append(&r->text, d + s, len) || bc__buf_append(&r->text, "", 1))
				return bc_dwca__oom(err);
			if (i < n) {
				if (d[i] == p->eol) {
					p->line++;
					if (p->eol == '\r' && i + 1 < n && d[i + 1] == '\n')
						i++;
				}
				i++;
			}
		}
		p->pos = i;
		int blank = 1;
		for (size_t k = 0; k < r->n && blank; k++)
			if (bc_dwca__row_cell(r, k)[0])
				blank = 0;
		if (!blank)
			return 1;
	}
}

/* Converts p->data to UTF-8 (from its declared encoding) and checks it. */
static int part_decode(bc_dwca *a, dw_part *p, bc_err *err)
{
	int utf8 = str_ieq(p->encoding, "UTF-8") || str_ieq(p->encoding, "UTF8");
	if (!utf8) {
		iconv_t cd = iconv_open("UTF-8", p->encoding);
		if (cd == (iconv_t)-1)
			return bc_err_set(err, BC_EINVALID, "%s/meta.xml:%ld: encoding: '%s' is not an encoding this system knows",
				a->name, p->meta_line, p->encoding);
		size_t cap = p->len * 4 + 16;
		char *out = bc__malloc(cap);
		if (!out) {
			iconv_close(cd);
			return bc_dwca__oom(err);
		}
		char *in = p->data, *o = out;
		size_t inl = p->len, outl = cap - 1;
		size_t r = iconv(cd, &in, &inl, &o, &outl);
		iconv_close(cd);
		if (r == (size_t)-1) {
			long line = line_at(p->data, (size_t)(in - p->data));
			free(out);
			return bc_err_set(err, BC_EINVALID, "%s:%ld: encoding: bytes that are not valid %s", p->where, line, p->encoding);
		}
		*o = '\0';
		free(p->data);
		p->data = out;
		p->len = (size_t)(o - out);
	}
	if (p->len >= 3 && memcmp(p->data, "\xEF\xBB\xBF", 3) == 0)
		p->pos = 3;
	size_t bad;
	if (!utf8_check((const unsigned char *)p->data, p->len, &bad))
		return bc_err_set(err, BC_EINVALID, "%s:%ld: encoding: not valid UTF-8 (meta.xml declares %s)",
			p->where, line_at(p->data, bad), p->encoding);
	if (memchr(p->data, '\0', p->len))
		return bc_err_set(err, BC_EINVALID, "%s:%ld: encoding: NUL byte in a text file", p->where,
			line_at(p->data, (size_t)((const char *)memchr(p->data, '\0', p->len) - p->data)));
	p->line = 1;
	/* header lines */
	dw_row r = {0};
	for (long k = 0; k < p->skip; k++) {
		int rc = bc_dwca__row_next(p, &r, err);
		if (rc < 0) {
			row_free(&r);
			return rc;
		}
		if (rc == 0)
			break;
		if (k == 0) {
			p->header = bc__calloc(r.n, sizeof *p->header);
			if (!p->header) {
				row_free(&r);
				return bc_dwca__oom(err);
			}
			p->nheader = r.n;
			for (size_t i = 0; i < r.n; i++)
				if (!(p->header[i] = bc_dwca__trim_copy(bc_dwca__row_cell(&r, i)))) {
					row_free(&r);
					return bc_dwca__oom(err);
				}
		}
	}
	row_free(&r);
	return BC_OK;
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
			if (bc__buf_printf(&b, "extension:%s", last_part(p->row_type))) {
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
	row_free(&r);
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
		int has = has_entry(a, "meta.xml");
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
		if ((rc = check_zip(a, err)))
			goto done;
	}
	if ((rc = read_entry(a, "meta.xml", a->lim.max_xml, &meta, &meta_len, err)))
		goto done;
	if (bc__buf_printf(&mname, "%s/meta.xml", a->name)) {
		rc = bc_dwca__oom(err);
		goto done;
	}
	if ((rc = xml_parse(&doc, mname.data, meta, meta_len, err)))
		goto done;
	xmlNode *root = xmlDocGetRootElement(doc);
	if (!root || !is_text_el(root, "archive")) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: archive: the root element must be <archive> (" NS_TEXT ")",
			mname.data, root ? xmlGetLineNo(root) : 1L);
		goto done;
	}
	size_t ncore = 0, next = 0;
	for (xmlNode *c = root->children; c; c = c->next) {
		if (is_text_el(c, "core"))
			ncore++;
		else if (is_text_el(c, "extension"))
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
		if (is_text_el(c, "core"))
			rc = read_part(a, c, &a->parts[0], 1, mname.data, err);
		else if (is_text_el(c, "extension"))
			rc = read_part(a, c, &a->parts[k++], 0, mname.data, err);
		if (rc)
			goto done;
	}
	if (next && a->parts[0].key_index < 0) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: core: <id index=\"...\"/> is required when there are extensions",
			mname.data, a->parts[0].meta_line);
		goto done;
	}
	/* metadata: the archive's metadata attribute, else eml.xml if present */
	char *mattr = attr(root, "metadata");
	int has_eml = mattr && *mattr ? 0 : has_entry(a, "eml.xml");
	const char *mloc = mattr && *mattr ? mattr : has_eml > 0 ? "eml.xml" : NULL;
	int has_loc = mloc && !path_problem(mloc) ? has_entry(a, mloc) : 0;
	if (has_eml < 0 || has_loc < 0) {
		rc = bc_dwca__oom(err);
	} else if (has_loc) {
		rc = read_entry(a, mloc, a->lim.max_xml, &eml, &eml_len, err);
		if (!rc) {
			bc_buf en = {0};
			xmlDoc *ed = NULL;
			if (bc__buf_printf(&en, "%s/%s", a->name, mloc))
				rc = bc_dwca__oom(err);
			else
				rc = xml_parse(&ed, en.data, eml, eml_len, err);
			xmlFreeDoc(ed);
			bc__buf_free(&en);
		}
	} else if (mloc && path_problem(mloc) && !strstr(mloc, "://")) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: metadata: '%s': refused: %s", mname.data, xmlGetLineNo(root), mloc, path_problem(mloc));
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
		if ((rc = read_entry(a, p->location, a->lim.max_entry, &p->data, &p->len, err)) ||
			(rc = part_decode(a, p, err)))
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
	row_free(&a->cur);
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
