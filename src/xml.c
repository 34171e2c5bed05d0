/*
 * xml.c - one hardened libxml2 parse for every XML reader: options,
 * SAX hooks against DTD tricks, and libxml2's errors in our message form.
 */
#include "xml.h"

#include <libxml/parserInternals.h>
#include <libxml/xmlerror.h>
#include <string.h>

static void xml_error(void *ctx,
#if LIBXML_VERSION >= 21200
	const xmlError *e
#else
	xmlErrorPtr e
#endif
)
{
	bc_xml_state *st = ctx;
	if (!st || st->rc || !e || e->level < XML_ERR_ERROR)
		return;
	char msg[512];
	snprintf(msg, sizeof msg, "%s", e->message ? e->message : "error");
	size_t n = strlen(msg);
	while (n && (msg[n - 1] == '\n' || msg[n - 1] == ' '))
		msg[--n] = '\0';
	st->rc = bc_err_set(st->err, BC_EINVALID, "%s:%d: XML: not well-formed: %s", st->file, e->line, msg);
}

static void xml_silent(void *ctx, const char *fmt, ...)
{
	(void)ctx;
	(void)fmt;
}

xmlDoc *bc_xml__parse(bc_xml_state *st, const char *buf, int len,
		      internalSubsetSAXFunc doctype_hook, entityDeclSAXFunc entity_hook)
{
	xmlInitParser();
	xmlParserCtxtPtr ctxt = xmlCreateMemoryParserCtxt(buf, len);
	if (!ctxt) {
		st->rc = bc_err_set(st->err, BC_ENOMEM, "%s: out of memory", st->file);
		return NULL;
	}
	/* NONET; never NOENT, DTDLOAD, DTDATTR or HUGE, so libxml2's limits stay on. */
	xmlCtxtUseOptions(ctxt, XML_PARSE_NONET | XML_PARSE_BIG_LINES);
	ctxt->_private = st;
	if (doctype_hook)
		ctxt->sax->internalSubset = doctype_hook;
	ctxt->sax->entityDecl = entity_hook;
	ctxt->sax->unparsedEntityDecl = NULL;
	xmlSetStructuredErrorFunc(st, xml_error);
	xmlSetGenericErrorFunc(NULL, xml_silent);
	xmlParseDocument(ctxt);
	xmlSetStructuredErrorFunc(NULL, NULL);
	xmlSetGenericErrorFunc(NULL, NULL);
	int wf = ctxt->wellFormed;
	xmlDoc *doc = ctxt->myDoc;
	ctxt->myDoc = NULL;
	xmlFreeParserCtxt(ctxt);
	if (!st->rc && (!wf || !doc))
		st->rc = bc_err_set(st->err, BC_EINVALID, "%s: XML: not well-formed", st->file);
	if (st->rc) {
		xmlFreeDoc(doc);
		return NULL;
	}
	return doc;
}
