/*
 * xml.h - the hardened libxml2 parse shared by the XML readers (SKOS charts,
 * Darwin Core meta.xml and eml.xml). Private; includes libxml2.
 */
#ifndef BC_XML_H
#define BC_XML_H

#include "internal.h"
#include <libxml/parser.h>

/** Where a parse reports: the file named in messages, the error to fill, its code. */
typedef struct bc_xml_state {
	const char *file;
	bc_err *err;
	int rc;
} bc_xml_state;

/**
 * Parses `len` bytes with libxml2 hardened: no network, never entity
 * substitution, DTD loading, default attributes or the "huge" option (so
 * libxml2's size limits stay on). libxml2's errors become
 * "FILE:LINE: XML: not well-formed: ..." in st->err (nothing is printed).
 * The SAX hooks (either may be NULL) decide what a DOCTYPE or an entity
 * declaration means for the caller; they find `st` in ctxt->_private and
 * should set st->rc and stop the parser to refuse. Returns the document
 * (the caller frees it with xmlFreeDoc) or NULL with st->rc set.
 */
xmlDoc *bc_xml__parse(bc_xml_state *st, const char *buf, int len,
		      internalSubsetSAXFunc doctype_hook, entityDeclSAXFunc entity_hook);

#endif
