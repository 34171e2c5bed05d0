/*
 * dwca_meta.c - meta.xml, the archive's descriptor: parsed hardened (no
 * network, no DTD, no entity; a DOCTYPE is refused; eml.xml is parsed the
 * same way), each <core> or <extension> read into a part (data file,
 * delimiter, quote, line end, encoding, header lines, key column, fields);
 * and the mapping between Darwin Core term IRIs and record columns, both
 * ways (export writes terms with bc_dwca__term_iri).
 */
#include "dwca_impl.h"
#include "xml.h"

#include <ctype.h>
#include <errno.h>
#include <limits.h>
#include <stdlib.h>
#include <string.h>

#include <libxml/parser.h>
#include <libxml/parserInternals.h>
#include <libxml/SAX2.h>
#include <libxml/tree.h>
#include <libxml/xmlerror.h>

/* The project's five extension terms (design.md marks them *). */
static const char *const own_terms[] = {
	"taxonGroup", "minimumPaleodepthInMeters", "maximumPaleodepthInMeters",
	"depositionalEnvironment", "preservationMode",
};

/* ------------------------------------------------------------------ */
/* Terms and columns.                                                  */
/* ------------------------------------------------------------------ */

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

int bc_dwca__xml_parse(xmlDoc **out, const char *file, const char *buf, size_t len, bc_err *err)
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

int bc_dwca__is_text_el(xmlNode *n, const char *name)
{
	if (n->type != XML_ELEMENT_NODE || strcmp((const char *)n->name, name) != 0)
		return 0;
	return !n->ns || !n->ns->href || strcmp((const char *)n->ns->href, NS_TEXT) == 0;
}

/* An attribute's value (caller frees with xmlFree), or NULL. */
char *bc_dwca__attr(xmlNode *n, const char *name)
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
	const char *local = bc_dwca__last_part(row_type);
	if (strcmp(local, "MeasurementOrFact") == 0 || strcmp(local, "ExtendedMeasurementOrFact") == 0)
		return PART_MOF;
	if (strcmp(local, "ChronometricAge") == 0)
		return PART_CHRONO;
	return PART_OTHER;
}

int bc_dwca__read_part(bc_dwca *a, xmlNode *el, dw_part *p, int core, const char *mname, bc_err *err)
{
	int rc = BC_OK;
	char *v = NULL;
	long line = xmlGetLineNo(el);
	const char *tag = core ? "core" : "extension";
	p->meta_line = line;
	p->key_index = -1;
	p->extra_col = -1;
	p->row_type = bc_dwca__attr(el, "rowType");
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
	v = bc_dwca__attr(el, "fieldsTerminatedBy");
	unescape(v ? v : ",", buf, sizeof buf);
	if (strlen(buf) != 1 || buf[0] == '\n' || buf[0] == '\r') {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: fieldsTerminatedBy: '%s' not supported (one character, e.g. \\t or ,)", mname, line, v ? v : "");
		goto done;
	}
	p->delim = buf[0];
	xmlFree(v);
	/* fieldsEnclosedBy, default '"', "" = none */
	v = bc_dwca__attr(el, "fieldsEnclosedBy");
	unescape(v ? v : "\"", buf, sizeof buf);
	if (strlen(buf) > 1 || buf[0] == p->delim) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: fieldsEnclosedBy: '%s' not supported (one character or empty)", mname, line, v ? v : "");
		goto done;
	}
	p->quote = buf[0];
	xmlFree(v);
	/* linesTerminatedBy, default "\n" (CRLF accepted too) */
	v = bc_dwca__attr(el, "linesTerminatedBy");
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
	v = bc_dwca__attr(el, "ignoreHeaderLines");
	if (v && (parse_index(v, &p->skip) != 0)) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: ignoreHeaderLines: '%s' is not a whole number", mname, line, v);
		goto done;
	}
	xmlFree(v);
	v = bc_dwca__attr(el, "encoding");
	p->encoding = bc__strdup(v ? v : "UTF-8");
	xmlFree(v);
	v = NULL;
	if (!p->encoding)
		return bc_dwca__oom(err);
	for (xmlNode *c = el->children; c; c = c->next) {
		long cl = xmlGetLineNo(c);
		if (bc_dwca__is_text_el(c, "files")) {
			for (xmlNode *l = c->children; l; l = l->next) {
				if (!bc_dwca__is_text_el(l, "location"))
					continue;
				if (p->location)
					return bc_err_set(err, BC_EINVALID, "%s:%ld: location: several data files for one %s are not supported", mname, xmlGetLineNo(l), tag);
				xmlChar *t = xmlNodeGetContent(l);
				p->location = t ? bc_dwca__trim_copy((const char *)t) : NULL;
				xmlFree(t);
				if (!p->location)
					return bc_dwca__oom(err);
			}
		} else if (bc_dwca__is_text_el(c, core ? "id" : "coreid")) {
			v = bc_dwca__attr(c, "index");
			if (!v || parse_index(v, &p->key_index) != 0) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: %s: index '%s' is not a column number", mname, cl, core ? "id" : "coreid", v ? v : "");
				goto done;
			}
			xmlFree(v);
			v = NULL;
		} else if (bc_dwca__is_text_el(c, "field")) {
			dw_field f = {-1, NULL, NULL, NULL, -1};
			v = bc_dwca__attr(c, "index");
			if (v && parse_index(v, &f.index) != 0) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: field: index '%s' is not a column number", mname, cl, v);
				goto done;
			}
			xmlFree(v);
			v = bc_dwca__attr(c, "term");
			if (!v || !*v) {
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: field: attribute term is required", mname, cl);
				goto done;
			}
			f.term = bc__strdup(v);
			xmlFree(v);
			v = bc_dwca__attr(c, "default");
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
