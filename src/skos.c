/*
 * skos.c - reads the ICS chart from SKOS RDF/XML into a bc_chart: bounds
 * inline (2024-12) or on boundary resources (2020, 2017). The only chart
 * file that includes libxml2: no network, no DTD, no entity is ever
 * expanded, and libxml2's errors come back as our one-line messages.
 *
 * Two stages: the document is turned into RDF triples (a small RDF/XML
 * reader over the libxml2 tree), then the triples are read as a chart.
 */
#include "skos.h"
#include "xml.h"

#include <ctype.h>
#include <errno.h>
#include <limits.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include <libxml/SAX2.h>
#include <libxml/parser.h>
#include <libxml/parserInternals.h>
#include <libxml/tree.h>
#include <libxml/uri.h>
#include <libxml/xmlerror.h>

#define NS_RDF "http://www.w3.org/1999/02/22-rdf-syntax-ns#"
#define NS_SKOS "http://www.w3.org/2004/02/skos/core#"
#define NS_TIME "http://www.w3.org/2006/time#"
#define NS_GTS "http://resource.geosciml.org/ontology/timescale/gts#"
#define NS_RANK "http://resource.geosciml.org/ontology/timescale/rank/"
#define NS_ISCHART "http://resource.geosciml.org/classifier/ics/ischart/"
#define NS_TRS "http://resource.geosciml.org/classifier/cgi/geologicage/"

#define RDF_TYPE NS_RDF "type"
#define MAX_DEPTH 64 /* interval hierarchy; the ICS chart has 6 levels */

/* ------------------------------------------------------------------ */
/* An arena for every string of one load, freed at once.               */
/* ------------------------------------------------------------------ */

typedef struct arena_blk {
	struct arena_blk *next;
	size_t used, cap;
	char data[];
} arena_blk;

typedef struct arena {
	arena_blk *head;
} arena;

static char *arena_alloc(arena *a, size_t n)
{
	if (!a->head || a->head->cap - a->head->used < n) {
		size_t cap = n > 65536 ? n : 65536;
		arena_blk *b = bc__malloc(sizeof *b + cap);
		if (!b)
			return NULL;
		b->next = a->head;
		b->used = 0;
		b->cap = cap;
		a->head = b;
	}
	char *p = a->head->data + a->head->used;
	a->head->used += n;
	return p;
}

static const char *arena_cat(arena *a, const char *x, const char *y)
{
	size_t nx = strlen(x), ny = y ? strlen(y) : 0;
	char *p = arena_alloc(a, nx + ny + 1);
	if (!p)
		return NULL;
	memcpy(p, x, nx);
	if (ny)
		memcpy(p + nx, y, ny);
	p[nx + ny] = '\0';
	return p;
}

static void arena_free(arena *a)
{
	while (a->head) {
		arena_blk *n = a->head->next;
		free(a->head);
		a->head = n;
	}
}

/* ------------------------------------------------------------------ */
/* Triples, with a subject index that keeps document order.            */
/* ------------------------------------------------------------------ */

typedef struct triple {
	const char *s, *p, *o, *lang; /* o: IRI or blank id, or literal text */
	int lit;
	long line;
	int next; /* next triple of the same subject, -1 at the end */
} triple;

typedef struct subject {
	const char *key;
	int head, tail;
} subject;

typedef struct graph {
	arena mem;
	triple *t;
	size_t n, cap;
	int *slot; /* open addressing into subj, -1 empty */
	size_t nslot;
	subject *subj; /* in order of first appearance */
	size_t nsubj, capsubj;
	long blank;
	const char *file;
	bc_err *err;
	int rc;
} graph;

static uint64_t hash_str(const char *s)
{
	uint64_t h = 1469598103934665603ULL;
	for (; *s; s++)
		h = (h ^ (unsigned char)*s) * 1099511628211ULL;
	return h;
}

static int g_oom(graph *g)
{
	if (!g->rc)
		g->rc = bc_err_set(g->err, BC_ENOMEM, "%s: out of memory", g->file);
	return g->rc;
}

/* Index of the subject `s`, created when `create`; -1 when absent. */
static int g_subject(graph *g, const char *s, int create)
{
	if (create && (g->nsubj + 1) * 2 > g->nslot) {
		size_t ns = g->nslot ? g->nslot * 2 : 1024;
		int *slot = bc__malloc(ns * sizeof *slot);
		if (!slot)
			return g_oom(g), -1;
		for (size_t i = 0; i < ns; i++)
			slot[i] = -1;
		for (size_t i = 0; i < g->nsubj; i++) {
			size_t k = hash_str(g->subj[i].key) & (ns - 1);
			while (slot[k] >= 0)
				k = (k + 1) & (ns - 1);
			slot[k] = (int)i;
		}
		free(g->slot);
		g->slot = slot;
		g->nslot = ns;
	}
	if (!g->nslot)
		return -1;
	size_t k = hash_str(s) & (g->nslot - 1);
	while (g->slot[k] >= 0) {
		if (strcmp(g->subj[g->slot[k]].key, s) == 0)
			return g->slot[k];
		k = (k + 1) & (g->nslot - 1);
	}
	if (!create)
		return -1;
	subject *p = bc__grow(g->subj, g->nsubj, &g->capsubj, sizeof *p, 512);
	if (!p)
		return g_oom(g), -1;
	g->subj = p;
	g->subj[g->nsubj] = (subject){s, -1, -1};
	g->slot[k] = (int)g->nsubj;
	return (int)g->nsubj++;
}

static void g_add(graph *g, const char *s, const char *p, const char *o, int lit, const char *lang, long line)
{
	if (g->rc || !s || !p || !o)
		return (void)(g->rc || g_oom(g));
	int si = g_subject(g, s, 1);
	if (si < 0)
		return;
	triple *t = bc__grow(g->t, g->n, &g->cap, sizeof *t, 4096);
	if (!t)
		return (void)g_oom(g);
	g->t = t;
	g->t[g->n] = (triple){g->subj[si].key, p, o, lang ? lang : "", lit, line, -1};
	if (g->subj[si].tail >= 0)
		g->t[g->subj[si].tail].next = (int)g->n;
	else
		g->subj[si].head = (int)g->n;
	g->subj[si].tail = (int)g->n;
	g->n++;
}

/* First triple of subject `s` with predicate `p` after index `from`
 * (-1 = from the start); -1 when there is none. */
static int g_next(const graph *g, const char *s, const char *p, int from)
{
	int k;
	if (from < 0) {
		int si = g_subject((graph *)g, s, 0);
		k = si < 0 ? -1 : g->subj[si].head;
	} else {
		k = g->t[from].next;
	}
	for (; k >= 0; k = g->t[k].next)
		if (strcmp(g->t[k].p, p) == 0)
			return k;
	return -1;
}

static const triple *g_first(const graph *g, const char *s, const char *p)
{
	int k = g_next(g, s, p, -1);
	return k < 0 ? NULL : &g->t[k];
}

/* ------------------------------------------------------------------ */
/* RDF/XML (W3C RDF 1.1 XML Syntax) over the libxml2 tree.             */
/* ------------------------------------------------------------------ */

static int is_ns(const xmlNode *n, const char *ns)
{
	return n->ns && n->ns->href && strcmp((const char *)n->ns->href, ns) == 0;
}

static int is_rdf(const xmlNode *n, const char *local)
{
	return is_ns(n, NS_RDF) && strcmp((const char *)n->name, local) == 0;
}

static const char *g_str(graph *g, const xmlChar *s)
{
	const char *r = arena_cat(&g->mem, s ? (const char *)s : "", NULL);
	if (!r)
		g_oom(g);
	return r;
}

/* Takes an xmlChar* from libxml2, copies it into the arena and frees it. */
static const char *g_take(graph *g, xmlChar *s)
{
	const char *r = s ? g_str(g, s) : NULL;
	xmlFree(s);
	return r;
}

static const char *g_elem_iri(graph *g, const xmlNode *n)
{
	const char *r = arena_cat(&g->mem, n->ns && n->ns->href ? (const char *)n->ns->href : "", (const char *)n->name);
	if (!r)
		g_oom(g);
	return r;
}

static const char *g_attr(graph *g, xmlNode *n, const char *local, const char *ns)
{
	return g_take(g, xmlGetNsProp(n, (const xmlChar *)local, (const xmlChar *)ns));
}

static const char *g_resolve(graph *g, const char *base, const char *ref)
{
	if (!base || !*base)
		return ref;
	if (!*ref)
		return base;
	return g_take(g, xmlBuildURI((const xmlChar *)ref, (const xmlChar *)base));
}

static const char *g_blank(graph *g)
{
	char id[32];
	snprintf(id, sizeof id, "_:g%ld", ++g->blank);
	return g_str(g, (const xmlChar *)id);
}

static const char *g_base(graph *g, xmlNode *n, const char *base)
{
	const char *b = g_attr(g, n, "base", (const char *)XML_XML_NAMESPACE);
	return b ? g_resolve(g, base, b) : base;
}

static const char *g_trimmed_text(graph *g, xmlNode *n)
{
	xmlChar *c = xmlNodeGetContent(n);
	const char *s = c ? (const char *)c : "";
	while (isspace((unsigned char)*s))
		s++;
	size_t len = strlen(s);
	while (len && isspace((unsigned char)s[len - 1]))
		len--;
	char *r = arena_alloc(&g->mem, len + 1);
	if (r) {
		memcpy(r, s, len);
		r[len] = '\0';
	} else {
		g_oom(g);
	}
	xmlFree(c);
	return r;
}

static const char *rdf_node(graph *g, xmlNode *el, const char *base);

/* Attributes that are RDF properties (not rdf:about and the like). */
static int is_property_attr(const xmlAttr *a)
{
	if (!a->ns || !a->ns->href)
		return 0;
	if (strcmp((const char *)a->ns->href, (const char *)XML_XML_NAMESPACE) == 0)
		return 0;
	if (strcmp((const char *)a->ns->href, NS_RDF) == 0)
		return strcmp((const char *)a->name, "type") == 0;
	return 1;
}

static void rdf_property_attrs(graph *g, const char *s, xmlNode *el, const char *base)
{
	for (xmlAttr *a = el->properties; a && !g->rc; a = a->next) {
		if (!is_property_attr(a))
			continue;
		const char *p = arena_cat(&g->mem, (const char *)a->ns->href, (const char *)a->name);
		const char *v = g_take(g, xmlNodeListGetString(el->doc, a->children, 1));
		if (!v)
			v = "";
		if (p && strcmp(p, RDF_TYPE) == 0)
			g_add(g, s, p, g_resolve(g, base, v), 0, NULL, xmlGetLineNo(el));
		else
			g_add(g, s, p, v, 1, g_take(g, xmlNodeGetLang(el)), xmlGetLineNo(el));
	}
}

static void rdf_property(graph *g, const char *s, xmlNode *pe, const char *base, int *li)
{
	base = g_base(g, pe, base);
	long line = xmlGetLineNo(pe);
	const char *p = g_elem_iri(g, pe);
	if (!p)
		return;
	if (is_rdf(pe, "li")) {
		char n[48];
		snprintf(n, sizeof n, "_%d", ++*li);
		p = arena_cat(&g->mem, NS_RDF, n);
	}
	xmlNode *child = NULL;
	for (xmlNode *c = pe->children; c; c = c->next)
		if (c->type == XML_ELEMENT_NODE) {
			child = c;
			break;
		}
	const char *res = g_attr(g, pe, "resource", NS_RDF);
	const char *nid = g_attr(g, pe, "nodeID", NS_RDF);
	const char *pt = g_attr(g, pe, "parseType", NS_RDF);
	if (res) {
		const char *o = g_resolve(g, base, res);
		g_add(g, s, p, o, 0, NULL, line);
		rdf_property_attrs(g, o, pe, base);
	} else if (nid) {
		const char *o = arena_cat(&g->mem, "_:n", nid);
		g_add(g, s, p, o, 0, NULL, line);
		rdf_property_attrs(g, o, pe, base);
	} else if (pt && strcmp(pt, "Resource") == 0) {
		const char *o = g_blank(g);
		g_add(g, s, p, o, 0, NULL, line);
		int li2 = 0;
		for (xmlNode *c = pe->children; c && !g->rc; c = c->next)
			if (c->type == XML_ELEMENT_NODE)
				rdf_property(g, o, c, base, &li2);
	} else if (pt && strcmp(pt, "Collection") == 0) {
		const char *prev = NULL;
		for (xmlNode *c = pe->children; c && !g->rc; c = c->next) {
			if (c->type != XML_ELEMENT_NODE)
				continue;
			const char *cell = g_blank(g), *item = rdf_node(g, c, base);
			if (prev)
				g_add(g, prev, NS_RDF "rest", cell, 0, NULL, line);
			else
				g_add(g, s, p, cell, 0, NULL, line);
			g_add(g, cell, NS_RDF "first", item, 0, NULL, xmlGetLineNo(c));
			prev = cell;
		}
		if (prev)
			g_add(g, prev, NS_RDF "rest", NS_RDF "nil", 0, NULL, line);
		else
			g_add(g, s, p, NS_RDF "nil", 0, NULL, line);
	} else if (child && !(pt && strcmp(pt, "Literal") == 0)) {
		g_add(g, s, p, rdf_node(g, child, base), 0, NULL, line);
	} else {
		int has_attrs = 0;
		for (xmlAttr *a = pe->properties; a; a = a->next)
			has_attrs |= is_property_attr(a);
		if (has_attrs && !pe->children) {
			const char *o = g_blank(g);
			g_add(g, s, p, o, 0, NULL, line);
			rdf_property_attrs(g, o, pe, base);
		} else {
			g_add(g, s, p, g_trimmed_text(g, pe), 1, g_take(g, xmlNodeGetLang(pe)), line);
		}
	}
}

/* A node element: its subject, its type, its properties. */
static const char *rdf_node(graph *g, xmlNode *el, const char *base)
{
	if (g->rc)
		return NULL;
	base = g_base(g, el, base);
	const char *s, *v;
	if ((v = g_attr(g, el, "about", NS_RDF)))
		s = g_resolve(g, base, v);
	else if ((v = g_attr(g, el, "ID", NS_RDF)))
		s = arena_cat(&g->mem, base ? base : "", (v = arena_cat(&g->mem, "#", v)) ? v : "");
	else if ((v = g_attr(g, el, "nodeID", NS_RDF)))
		s = arena_cat(&g->mem, "_:n", v);
	else
		s = g_blank(g);
	if (!s)
		return g_oom(g), NULL;
	if (!is_rdf(el, "Description"))
		g_add(g, s, RDF_TYPE, g_elem_iri(g, el), 0, NULL, xmlGetLineNo(el));
	rdf_property_attrs(g, s, el, base);
	int li = 0;
	for (xmlNode *c = el->children; c && !g->rc; c = c->next)
		if (c->type == XML_ELEMENT_NODE)
			rdf_property(g, s, c, base, &li);
	return s;
}

/* ------------------------------------------------------------------ */
/* Hardened parsing.                                                   */
/* ------------------------------------------------------------------ */

/* SAX hook: the first entity declaration stops the parse. Entities are
 * never defined, so nothing can expand (entity-expansion bombs, external
 * entities such as file:///etc/passwd). A chart file needs no DTD. */
static void skos_entity_decl(void *ctx, const xmlChar *name, int type, const xmlChar *public_id,
	const xmlChar *system_id, xmlChar *content)
{
	(void)public_id;
	(void)content;
	xmlParserCtxtPtr ctxt = ctx;
	bc_xml_state *st = ctxt->_private;
	if (st && !st->rc) {
		int external = type == XML_EXTERNAL_GENERAL_PARSED_ENTITY || type == XML_EXTERNAL_GENERAL_UNPARSED_ENTITY ||
			type == XML_EXTERNAL_PARAMETER_ENTITY;
		st->rc = bc_err_set(st->err, BC_EINVALID,
			"%s:%d: DOCTYPE: refused: the document type declaration declares %sentity '%s'%s%s%s "
			"(entities are never expanded; a chart file needs no DTD)",
			st->file, xmlSAX2GetLineNumber(ctx), external ? "external " : "", name ? (const char *)name : "",
			system_id ? " (" : "", system_id ? (const char *)system_id : "", system_id ? ")" : "");
	}
	xmlStopParser(ctxt);
}

static int skos_parse(xmlDoc **out, const char *path, const char *buf, size_t len, bc_err *err)
{
	*out = NULL;
	if (len > INT_MAX)
		return bc_err_set(err, BC_EINVALID, "%s: refused: file too large for the XML reader (%zu bytes)", path, len);
	bc_xml_state st = {path, err, BC_OK};
	xmlDoc *doc = bc_xml__parse(&st, buf, (int)len, NULL, skos_entity_decl);
	if (!doc)
		return st.rc;
	if (!st.rc && doc->intSubset && (doc->intSubset->entities || doc->intSubset->pentities))
		st.rc = bc_err_set(err, BC_EINVALID, "%s: DOCTYPE: refused: the document type declaration declares entities", path);
	if (st.rc) {
		xmlFreeDoc(doc);
		return st.rc;
	}
	*out = doc;
	return BC_OK;
}

/* ------------------------------------------------------------------ */
/* From triples to a chart.                                            */
/* ------------------------------------------------------------------ */

typedef struct cand {
	const char *iri;
	bc_rank rank;
	long line;
	const char *name;
	double older, older_unc, younger, younger_unc;
	long end_line; /* line of time:hasEnd */
	int has_colour;
	unsigned colour;
	int parent;      /* index into cands, -1 for none */
	int composed;    /* 0, or 1 = Upper/Lower/Middle, 2 = label resource */
	int word;        /* composed == 1: index into subdivision_words */
	const char *label_from; /* composed == 2: the resource whose labels it takes */
	int index;       /* index in the chart, -1 until added */
} cand;

typedef struct loader {
	graph g;
	cand *c;
	size_t n;
	const char *file;
	bc_err *err;
} loader;

/* Rank IRIs of the releases: gts:rank rank/X (2020, 2024-12) or rdf:type gts:X (2017). */
static const struct {
	const char *local;
	bc_rank rank;
} rank_iris[] = {
	{"Super-Eon", BC_RANK_SUPEREON}, {"Eon", BC_RANK_EON}, {"Era", BC_RANK_ERA}, {"Period", BC_RANK_PERIOD},
	{"Sub-Period", BC_RANK_SUBPERIOD}, {"Epoch", BC_RANK_EPOCH}, {"Age", BC_RANK_AGE},
};

static int same_ignoring_hyphens(const char *a, const char *b)
{
	for (;;) {
		while (*a == '-' || *a == '_')
			a++;
		while (*b == '-' || *b == '_')
			b++;
		if (tolower((unsigned char)*a) != tolower((unsigned char)*b))
			return 0;
		if (!*a)
			return 1;
		a++;
		b++;
	}
}

static bc_rank rank_local(const char *local)
{
	for (size_t i = 0; i < sizeof rank_iris / sizeof rank_iris[0]; i++)
		if (same_ignoring_hyphens(local, rank_iris[i].local))
			return rank_iris[i].rank;
	return BC_RANK_UNKNOWN;
}

/* Rank of subject `s`: 0 if it is not an interval, negative on error. */
static int ld_rank(loader *L, const char *s, bc_rank *out)
{
	*out = BC_RANK_UNKNOWN;
	const triple *t = g_first(&L->g, s, NS_GTS "rank");
	if (t) {
		if (t->lit || strncmp(t->o, NS_RANK, strlen(NS_RANK)) != 0 || !(*out = rank_local(t->o + strlen(NS_RANK))))
			return bc_err_set(L->err, BC_EINVALID, "%s:%ld: gts:rank: unknown rank '%s' for <%s>", L->file, t->line, t->o, s);
		return 1;
	}
	for (int k = g_next(&L->g, s, RDF_TYPE, -1); k >= 0; k = g_next(&L->g, s, RDF_TYPE, k)) {
		const char *o = L->g.t[k].o;
		if (strncmp(o, NS_GTS, strlen(NS_GTS)) == 0 && (*out = rank_local(o + strlen(NS_GTS))))
			return 1;
	}
	return 0;
}

static int is_true(const graph *g, const char *s, const char *p)
{
	const triple *t = g_first(g, s, p);
	return t && t->lit && (strcmp(t->o, "true") == 0 || strcmp(t->o, "1") == 0);
}

static int parse_number(const char *s, double *out)
{
	char *end;
	errno = 0;
	double v = strtod(s, &end);
	while (isspace((unsigned char)*end))
		end++;
	if (end == s || *end || errno || !isfinite(v))
		return -1;
	*out = v;
	return 0;
}

static int ld_number(loader *L, const triple *t, const char *field, double *out)
{
	if (!t->lit || parse_number(t->o, out) != 0)
		return bc_err_set(L->err, BC_EINVALID, "%s:%ld: %s: '%s' is not a number", L->file, t->line, field, t->o);
	return BC_OK;
}

/* Divisor from a temporal reference system to Ma: 1 for Ma, 1e6 for years
 * before present, 1e3 for ka; 0 when unknown (dividing, not multiplying by
 * 1e-6, gives 11700 a -> 0.0117 exactly as written). No TRS stated is read as Ma. The 50-year
 * offset between BP (1950) and the Ma origin (2000) is below the charts'
 * precision. */
static double trs_scale(const char *trs)
{
	if (!trs)
		return 1;
	if (strcmp(trs, NS_TRS "ma") == 0)
		return 1;
	if (strcmp(trs, NS_TRS "bp") == 0 || strcmp(trs, NS_TRS "ka") == 0)
		return strcmp(trs, NS_TRS "bp") == 0 ? 1e6 : 1e3;
	return 0;
}

static int ld_uncertainty(loader *L, const char *x, double *unc)
{
	const triple *u = g_first(&L->g, x, NS_GTS "positionalUncertainty");
	if (!u)
		return BC_OK;
	const triple *d = g_first(&L->g, u->o, NS_TIME "numericDuration");
	if (!d)
		return BC_OK;
	int rc = ld_number(L, d, "time:numericDuration", unc);
	const triple *unit = g_first(&L->g, u->o, NS_TIME "unitType");
	if (!rc && unit && strlen(unit->o) >= 2 && strcmp(unit->o + strlen(unit->o) - 2, "/a") == 0)
		*unc /= 1e6;
	return rc;
}

/* One bound of interval `s`: predicate time:hasBeginning or time:hasEnd. */
static int ld_bound(loader *L, const cand *c, const char *pred, const char *field, double *value, double *unc)
{
	*value = NAN;
	*unc = NAN;
	const triple *b = g_first(&L->g, c->iri, pred);
	if (!b || b->lit)
		return bc_err_set(L->err, BC_EINVALID, "%s:%ld: %s: interval <%s> has no %s", L->file, b ? b->line : c->line,
			field, c->iri, b ? "boundary resource" : "such bound");
	const char *x = b->o;
	/* 2024-12: ischart:inMYA and schema:marginOfError on an inline node. */
	const triple *t = g_first(&L->g, x, NS_ISCHART "inMYA");
	if (t) {
		int rc = ld_number(L, t, "ischart:inMYA", value);
		const triple *m = g_first(&L->g, x, "https://schema.org/marginOfError");
		if (!m)
			m = g_first(&L->g, x, "http://schema.org/marginOfError");
		if (!rc && m)
			rc = ld_number(L, m, "schema:marginOfError", unc);
		return rc;
	}
	/* 2020/2017: boundary -> time:inTemporalPosition -> time:numericPosition,
	 * preferring a position in Ma over one in years BP. The uncertainty
	 * sits on the position (2020) or on the boundary (2017). */
	const triple *best = NULL;
	double best_scale = 0;
	for (int k = g_next(&L->g, x, NS_TIME "inTemporalPosition", -1); k >= 0;
	     k = g_next(&L->g, x, NS_TIME "inTemporalPosition", k)) {
		const char *y = L->g.t[k].o;
		const triple *np = g_first(&L->g, y, NS_TIME "numericPosition");
		const triple *trs = g_first(&L->g, y, NS_TIME "hasTRS");
		double scale = trs_scale(trs ? trs->o : NULL);
		if (!np)
			continue;
		if (scale == 0)
			return bc_err_set(L->err, BC_EINVALID, "%s:%ld: time:hasTRS: unknown temporal reference system <%s>", L->file,
				trs->line, trs->o);
		if (!best || (scale == 1 && best_scale != 1)) {
			best = np;
			best_scale = scale;
		}
	}
	if (!best && (t = g_first(&L->g, x, NS_TIME "numericPosition"))) {
		best = t;
		best_scale = 1;
	}
	if (!best)
		return bc_err_set(L->err, BC_EINVALID, "%s:%ld: %s: boundary <%s> of <%s> has no numeric position", L->file, b->line,
			field, x, c->iri);
	int rc = ld_number(L, best, "time:numericPosition", value);
	if (rc)
		return rc;
	*value /= best_scale;
	for (int k = g_next(&L->g, x, NS_TIME "inTemporalPosition", -1); k >= 0 && isnan(*unc);
	     k = g_next(&L->g, x, NS_TIME "inTemporalPosition", k))
		if ((rc = ld_uncertainty(L, L->g.t[k].o, unc)))
			return rc;
	if (isnan(*unc))
		rc = ld_uncertainty(L, x, unc);
	return rc;
}

static const triple *en_label(const graph *g, const char *s)
{
	for (int k = g_next(g, s, NS_SKOS "prefLabel", -1); k >= 0; k = g_next(g, s, NS_SKOS "prefLabel", k))
		if (g->t[k].lit && strcasecmp(g->t[k].lang, "en") == 0 && g->t[k].o[0])
			return &g->t[k];
	return NULL;
}

static const char *local_name(const char *iri)
{
	const char *a = strrchr(iri, '/'), *h = strrchr(iri, '#');
	const char *p = a > h ? a : h;
	return p ? p + 1 : iri;
}

static int hex_colour(const char *s, unsigned *out)
{
	if (*s == '#')
		s++;
	if (strlen(s) != 6)
		return -1;
	unsigned v = 0;
	for (int i = 0; i < 6; i++) {
		int c = tolower((unsigned char)s[i]);
		if (!isxdigit(c))
			return -1;
		v = v * 16 + (unsigned)(isdigit(c) ? c - '0' : c - 'a' + 10);
	}
	*out = v;
	return 0;
}

static int cand_of(const loader *L, const char *iri)
{
	for (size_t i = 0; i < L->n; i++)
		if (strcmp(L->c[i].iri, iri) == 0)
			return (int)i;
	return -1;
}

/* Everything of one interval but its name (which may depend on the parent's). */
static int ld_interval(loader *L, cand *c)
{
	int rc = ld_bound(L, c, NS_TIME "hasBeginning", "time:hasBeginning", &c->older, &c->older_unc);
	if (!rc)
		rc = ld_bound(L, c, NS_TIME "hasEnd", "time:hasEnd", &c->younger, &c->younger_unc);
	if (rc)
		return rc;
	const triple *end = g_first(&L->g, c->iri, NS_TIME "hasEnd");
	c->end_line = end ? end->line : c->line;
	if (!(c->older >= c->younger))
		return bc_err_set(L->err, BC_EINVALID,
			"%s:%ld: time:hasEnd: interval <%s> ends at %g Ma, before it begins at %g Ma (time:hasBeginning); refusing a chart with an inverted interval",
			L->file, c->end_line, c->iri, c->younger, c->older);
	const triple *col = g_first(&L->g, c->iri, "https://schema.org/color");
	if (!col)
		col = g_first(&L->g, c->iri, "http://schema.org/color");
	if (col) {
		if (!col->lit || hex_colour(col->o, &c->colour) != 0)
			return bc_err_set(L->err, BC_EINVALID, "%s:%ld: schema:color: '%s' is not an RGB colour #RRGGBB", L->file,
				col->line, col->o);
		c->has_colour = 1;
	}
	c->parent = -1;
	for (int k = g_next(&L->g, c->iri, NS_SKOS "broader", -1); k >= 0 && c->parent < 0;
	     k = g_next(&L->g, c->iri, NS_SKOS "broader", k))
		c->parent = cand_of(L, L->g.t[k].o);
	return BC_OK;
}

/* The English name. The 2024-12 release gives no label to some intervals:
 * UpperCretaceous and the like (named here "Late Cretaceous", with
 * "Upper Cretaceous" as a label, as the 2020 release names them), and
 * CambrianStage10 and the like, whose labels sit on a separate resource
 * ischart/Stage10 (named here "Cambrian Stage 10"). */
static const struct {
	const char *prefix, *time_word;
} subdivision_words[] = {{"Upper", "Late"}, {"Middle", "Middle"}, {"Lower", "Early"}};

static int ld_name(loader *L, cand *c)
{
	const triple *t = en_label(&L->g, c->iri);
	if (t) {
		c->name = t->o;
		return BC_OK;
	}
	const char *local = local_name(c->iri);
	if (c->parent >= 0)
		for (size_t i = 0; i < sizeof subdivision_words / sizeof subdivision_words[0]; i++) {
			size_t n = strlen(subdivision_words[i].prefix);
			if (strncmp(local, subdivision_words[i].prefix, n) == 0 && isupper((unsigned char)local[n])) {
				char buf[512];
				snprintf(buf, sizeof buf, "%s %s", subdivision_words[i].time_word, L->c[c->parent].name);
				c->name = arena_cat(&L->g.mem, buf, NULL);
				c->composed = 1;
				c->word = (int)i;
				return c->name ? BC_OK : g_oom(&L->g);
			}
		}
	size_t ns_len = (size_t)(local - c->iri);
	for (const char *p = local + 1; *p; p++) {
		if (!isupper((unsigned char)*p))
			continue;
		char iri[1024];
		snprintf(iri, sizeof iri, "%.*s%s", (int)ns_len, c->iri, p);
		const triple *l = en_label(&L->g, iri);
		if (!l || cand_of(L, iri) >= 0)
			continue;
		char buf[1024];
		snprintf(buf, sizeof buf, "%.*s %s", (int)(p - local), local, l->o);
		c->name = arena_cat(&L->g.mem, buf, NULL);
		c->label_from = l->s;
		c->composed = 2;
		return c->name ? BC_OK : g_oom(&L->g);
	}
	return bc_err_set(L->err, BC_EINVALID, "%s:%ld: skos:prefLabel: interval <%s> has no English (xml:lang=\"en\") label",
		L->file, c->line, c->iri);
}

static int add_labels_of(loader *L, bc_chart *chart, int idx, const char *s)
{
	static const char *const preds[] = {NS_SKOS "prefLabel", NS_SKOS "altLabel"};
	for (size_t p = 0; p < 2; p++)
		for (int k = g_next(&L->g, s, preds[p], -1); k >= 0; k = g_next(&L->g, s, preds[p], k)) {
			const triple *t = &L->g.t[k];
			if (!t->lit || !t->o[0])
				continue;
			int dup = 0;
			for (size_t j = bc_chart_label_count(chart); j-- > 0 && !dup;) {
				const bc_label *lb = bc_chart_label(chart, j);
				if (lb->interval != idx)
					break;
				dup = strcmp(lb->text, t->o) == 0 && strcmp(lb->lang, t->lang) == 0;
			}
			if (dup)
				continue;
			int rc = bc_chart_add_label(chart, idx, t->o, t->lang, L->err);
			if (rc)
				return rc;
		}
	return BC_OK;
}

static int cmp_siblings(const cand *a, const cand *b)
{
	if (a->older != b->older)
		return a->older > b->older ? -1 : 1;
	if (a->younger != b->younger)
		return a->younger > b->younger ? -1 : 1;
	return strcmp(a->iri, b->iri);
}

/* Adds `i` then its children, oldest first (the chart's reading order);
 * parents always precede children. */
static int ld_emit(loader *L, bc_chart *chart, int i, int depth)
{
	cand *c = &L->c[i];
	if (depth > MAX_DEPTH)
		return bc_err_set(L->err, BC_EINVALID, "%s:%ld: skos:broader: hierarchy deeper than %d levels at <%s>", L->file,
			c->line, MAX_DEPTH, c->iri);
	int rc = ld_name(L, c);
	if (rc)
		return rc;
	if (bc_chart_find(chart, c->name) >= 0)
		return bc_err_set(L->err, BC_EINVALID, "%s:%ld: skos:prefLabel: two intervals are named '%s' (the second is <%s>)",
			L->file, c->line, c->name, c->iri);
	bc_interval iv = {
		.name = c->name, .iri = c->iri, .rank = c->rank,
		.parent = c->parent >= 0 ? L->c[c->parent].index : -1,
		.older_ma = c->older, .older_unc = c->older_unc, .younger_ma = c->younger, .younger_unc = c->younger_unc,
		.has_colour = c->has_colour, .colour = c->colour, .colour_source = "",
	};
	char src[512];
	if (c->has_colour) {
		const char *base = strrchr(L->file, '/');
		snprintf(src, sizeof src, "schema:color in %s", base ? base + 1 : L->file);
		iv.colour_source = src;
	}
	bc_err e = {0};
	int idx = bc_chart_add_interval(chart, &iv, &e);
	if (idx < 0)
		return bc_err_set(L->err, idx, "%s:%ld: %s", L->file, c->line, e.msg);
	c->index = idx;
	rc = add_labels_of(L, chart, idx, c->iri);
	if (!rc && c->composed == 1) {
		/* "Late Cretaceous" is a label too, and so is "Upper Cretaceous". */
		rc = bc_chart_add_label(chart, idx, c->name, "en", L->err);
		const char *pre = subdivision_words[c->word].prefix, *word = subdivision_words[c->word].time_word;
		if (!rc && strcmp(pre, word) != 0) {
			char upper[600];
			snprintf(upper, sizeof upper, "%s%s", pre, c->name + strlen(word));
			rc = bc_chart_add_label(chart, idx, upper, "en", L->err);
		}
	} else if (!rc && c->composed == 2) {
		rc = bc_chart_add_label(chart, idx, c->name, "en", L->err);
		if (!rc)
			rc = add_labels_of(L, chart, idx, c->label_from);
	}
	/* Children, oldest first: a selection sort keeps this allocation-free. */
	int last = -1;
	for (;;) {
		int next = -1;
		for (size_t j = 0; j < L->n && !rc; j++) {
			if (L->c[j].parent != i || L->c[j].index >= 0)
				continue;
			if (last >= 0 && cmp_siblings(&L->c[j], &L->c[last]) <= 0)
				continue;
			if (next < 0 || cmp_siblings(&L->c[j], &L->c[next]) < 0)
				next = (int)j;
		}
		if (rc || next < 0)
			break;
		rc = ld_emit(L, chart, next, depth + 1);
		last = next;
	}
	return rc;
}

/* Provenance from the concept scheme or ontology resource, if any. */
static void ld_provenance(loader *L, bc_chart *chart)
{
	const char *title = NULL, *version = NULL, *licence = NULL;
	for (size_t i = 0; i < L->g.nsubj; i++) {
		const char *s = L->g.subj[i].key;
		int scheme = 0;
		for (int k = g_next(&L->g, s, RDF_TYPE, -1); k >= 0; k = g_next(&L->g, s, RDF_TYPE, k))
			scheme |= strcmp(L->g.t[k].o, NS_SKOS "ConceptScheme") == 0 || strcmp(L->g.t[k].o, "http://www.w3.org/2002/07/owl#Ontology") == 0;
		if (!scheme)
			continue;
		const triple *t = en_label(&L->g, s);
		if (!t)
			t = g_first(&L->g, s, "http://purl.org/dc/terms/title");
		if (!title && t)
			title = t->o;
		static const char *const vp[] = {"http://www.w3.org/2002/07/owl#versionInfo", NS_SKOS "versionInfo",
			"http://purl.org/dc/terms/modified"};
		for (size_t k = 0; k < 3 && !version; k++)
			if ((t = g_first(&L->g, s, vp[k])))
				version = t->o;
		static const char *const lp[] = {"https://schema.org/license", "http://schema.org/license",
			"http://purl.org/dc/terms/license", "http://purl.org/dc/terms/rights", "http://purl.org/dc/elements/1.1/rights"};
		for (size_t k = 0; k < 5 && !licence; k++)
			if ((t = g_first(&L->g, s, lp[k])))
				licence = t->o;
	}
	const char *base = strrchr(L->file, '/');
	char src[1024];
	snprintf(src, sizeof src, "%s%s%s%s, read from %s", title ? title : "SKOS chart", version ? " (version " : "",
		version ? version : "", version ? ")" : "", base ? base + 1 : L->file);
	bc_chart_set_source(chart, src, licence ? licence : "", NULL);
}

static int skos_read_chart(bc_chart **out, xmlDoc *doc, const char *path, const char *name, bc_err *err)
{
	*out = NULL;
	loader L = {.file = path, .err = err};
	L.g.file = path;
	L.g.err = err;
	bc_chart *chart = NULL;
	int rc = BC_OK;
	xmlNode *root = xmlDocGetRootElement(doc);
	if (!root || !is_rdf(root, "RDF")) {
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: XML: the root element is not rdf:RDF; not an RDF/XML file", path,
			root ? xmlGetLineNo(root) : 1L);
		goto done;
	}
	const char *base = g_base(&L.g, root, NULL);
	for (xmlNode *c = root->children; c && !L.g.rc; c = c->next)
		if (c->type == XML_ELEMENT_NODE)
			rdf_node(&L.g, c, base);
	if ((rc = L.g.rc))
		goto done;
	L.c = bc__calloc(L.g.nsubj, sizeof *L.c);
	if (!L.c) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	for (size_t i = 0; i < L.g.nsubj && !rc; i++) {
		const char *s = L.g.subj[i].key;
		bc_rank r;
		int k = ld_rank(&L, s, &r);
		if (k < 0)
			rc = k;
		if (k <= 0 || is_true(&L.g, s, "http://www.w3.org/2002/07/owl#deprecated"))
			continue;
		L.c[L.n++] = (cand){.iri = s, .rank = r, .line = L.g.t[L.g.subj[i].head].line, .index = -1};
	}
	if (!rc && L.n == 0)
		rc = bc_err_set(err, BC_EINVALID, "%s: no chart intervals found (no resource with a gts:rank or a gts rank type)", path);
	for (size_t i = 0; i < L.n && !rc; i++)
		rc = ld_interval(&L, &L.c[i]);
	if (rc)
		goto done;
	if ((rc = bc_chart_new(&chart, name, err)))
		goto done;
	ld_provenance(&L, chart);
	/* Roots, oldest first, then each subtree. */
	for (;;) {
		int next = -1;
		for (size_t j = 0; j < L.n; j++)
			if (L.c[j].parent < 0 && L.c[j].index < 0 && (next < 0 || cmp_siblings(&L.c[j], &L.c[next]) < 0))
				next = (int)j;
		if (next < 0 || rc)
			break;
		rc = ld_emit(&L, chart, next, 0);
	}
	for (size_t j = 0; j < L.n && !rc; j++)
		if (L.c[j].index < 0)
			rc = bc_err_set(err, BC_EINVALID, "%s:%ld: skos:broader: <%s> is in a cycle of broader intervals", path, L.c[j].line,
				L.c[j].iri);
done:
	if (rc) {
		bc_chart_free(chart);
		chart = NULL;
	}
	free(L.c);
	free(L.g.t);
	free(L.g.slot);
	free(L.g.subj);
	arena_free(&L.g.mem);
	*out = chart;
	return rc;
}

char *bc_chart__name_from_path(const char *path)
{
	const char *b = strrchr(path, '/');
	b = b ? b + 1 : path;
	char *s = bc__strdup(b);
	if (!s)
		return NULL;
	static const char *const ext[] = {".rdf", ".xml", ".owl", ".tsv", ".txt"};
	for (size_t i = 0; i < sizeof ext / sizeof ext[0]; i++) {
		size_t n = strlen(s), e = strlen(ext[i]);
		if (n > e && strcasecmp(s + n - e, ext[i]) == 0) {
			s[n - e] = '\0';
			break;
		}
	}
	size_t n = strlen(s);
	if (n > 5 && strcasecmp(s + n - 5, ".skos") == 0)
		s[n - 5] = '\0';
	return s;
}

int bc_chart_load_skos(bc_chart **out, const char *path, const char *name, bc_err *err)
{
	*out = NULL;
	char *buf = NULL, *auto_name = NULL;
	size_t len = 0;
	xmlDoc *doc = NULL;
	int rc = bc__read_file(path, &buf, &len, err);
	if (rc)
		goto done;
	if (!name && !(name = auto_name = bc_chart__name_from_path(path))) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	if ((rc = skos_parse(&doc, path, buf, len, err)))
		goto done;
	rc = skos_read_chart(out, doc, path, name, err);
done:
	xmlFreeDoc(doc);
	free(buf);
	free(auto_name);
	return rc;
}
