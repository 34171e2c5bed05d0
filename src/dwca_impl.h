/*
 * dwca_impl.h - the reader's state and internals, shared by the reader's
 * files: dwca.c (opening, the reader object), dwca_entries.c (zip and
 * folder entries, size limits), dwca_meta.c (meta.xml, terms), dwca_text.c
 * (data files) and dwca_join.c (records: extensions joined to core rows).
 * Private to those files.
 */
#ifndef BC_DWCA_IMPL_H
#define BC_DWCA_IMPL_H

#include "dwca.h"
#include <libxml/tree.h>
#include <nettle/sha2.h>
#include <zip.h>

#define NS_TEXT "http://rs.tdwg.org/dwc/text/"
#define NS_DWC "http://rs.tdwg.org/dwc/terms/"
#define NS_CHRONO "http://rs.tdwg.org/chrono/terms/"
#define NS_DCTERMS "http://purl.org/dc/terms/"
#define NS_OBIS "http://rs.iobis.org/obis/terms/"

enum { PART_CORE, PART_MOF, PART_CHRONO, PART_OTHER };

typedef struct dw_field {
	long index;  /* column, or -1 for a constant */
	char *term;  /* full IRI */
	char *col;   /* record column name */
	char *def;   /* default value, or NULL */
	int col_i;   /* index into the record columns (core only) */
} dw_field;

typedef struct dw_part {
	int kind;
	char *row_type;
	char *location;
	char *where;      /* "NAME/location" */
	char delim, quote, eol;
	long skip;
	char *encoding;
	long key_index;   /* <id> or <coreid>, -1 when absent */
	long meta_line;
	dw_field *f;
	size_t nf;
	char *data;       /* content as UTF-8 */
	size_t len;
	char **header;    /* first skipped line, when ignoreHeaderLines >= 1 */
	size_t nheader;
	int extra_col;    /* record column holding this extension's JSON rows */
	size_t pos;       /* reading position (core) */
	long line;        /* next physical line (core) */
} dw_part;

typedef struct dw_row {
	bc_buf text;      /* cells, each NUL-terminated */
	size_t *off;
	size_t n, cap;
	long line;
} dw_row;

typedef struct ext_row {
	size_t part;
	long line;
	char *text;
	size_t *off;
	size_t n;
	int used;
	struct ext_row *chain;
} ext_row;

struct bc_dwca {
	char *name;
	bc_dwca_limits lim;
	zip_t *zip;
	char *prefix;     /* entry prefix inside a zip ("" or "dir/") */
	char *root;       /* real path of a folder */
	uint64_t total;
	struct sha256_ctx sha;
	char sha_hex[65];
	char *metadata;
	bc_buf layout;
	dw_part *parts;   /* parts[0] is the core */
	size_t nparts;
	char **cols;
	size_t ncols;
	size_t core_width; /* cells a core row may have */
	int id_col;       /* occurrenceID filled from <id>, or -1 */
	ext_row **rows;   /* every extension row, in file order */
	size_t nrows;
	ext_row **bucket;
	size_t nbucket;
	/* current record */
	char **vals;
	dw_row cur;
	const char *where;
	long line;
	int has_problem;
	char problem[1024];
	char problem_field[256];
	size_t orphan;    /* next extension row to look at after the core */
	int core_done;
	struct seen_id { char *id; long line; } *seen; /* core ids so far (open addressing) */
	size_t nseen, capseen;
};

/* dwca.c */
int bc_dwca__oom(bc_err *err);
/** Copy of `s` without surrounding white space. Caller frees. */
char *bc_dwca__trim_copy(const char *s);
/** Lower case, '_' and '-' as spaces, runs of space collapsed, "palaeo" as "paleo". */
void bc_dwca__norm_key(const char *s, char *out, size_t cap);
/** Parses a whole string as a finite number (surrounding blanks allowed): 0 or -1. */
int bc_dwca__parse_number(const char *s, double *out);
void bc_dwca__format_number(double v, char *out, size_t cap);
/** Index of a record column, or -1. */
int bc_dwca__col_find(const bc_dwca *a, const char *name);
uint64_t bc_dwca__hash(const char *s);
/** Frees the current record's values. */
void bc_dwca__clear_vals(bc_dwca *a);
/** Local name of a term IRI: the text after its last '/' or '#'. Borrowed. */
const char *bc_dwca__last_part(const char *iri);

/* dwca_entries.c */
/** NULL when `p` is a safe relative path inside the archive, else why not. */
const char *bc_dwca__path_problem(const char *p);
/** Reads one file of the archive (whole) into memory, enforcing limits. */
int bc_dwca__read_entry(bc_dwca *a, const char *loc, uint64_t limit, char **out, size_t *len, bc_err *err);
/** 1 when the archive has the file `loc`, 0 when not, BC_ENOMEM. */
int bc_dwca__has_entry(bc_dwca *a, const char *loc);
/** Checks every entry of a zip before anything is read from it; sets a->prefix. */
int bc_dwca__check_zip(bc_dwca *a, bc_err *err);

/* dwca_meta.c */
/** Parses meta.xml or eml.xml hardened (a DOCTYPE is refused). Caller frees with xmlFreeDoc. */
int bc_dwca__xml_parse(xmlDoc **out, const char *file, const char *buf, size_t len, bc_err *err);
/** 1 when `n` is the element `name` of the Darwin Core text namespace (or none). */
int bc_dwca__is_text_el(xmlNode *n, const char *name);
/** An attribute's value (caller frees with xmlFree), or NULL. */
char *bc_dwca__attr(xmlNode *n, const char *name);
/** Reads a <core> (core = 1) or <extension> element of meta.xml `mname` into p. */
int bc_dwca__read_part(bc_dwca *a, xmlNode *el, dw_part *p, int core, const char *mname, bc_err *err);

/* dwca_text.c */
/** Cell i of a row ("" beyond its end). */
const char *bc_dwca__row_cell(const dw_row *r, size_t i);
/** Reads the next record of part p: 1 = record, 0 = end, or a negative code. */
int bc_dwca__row_next(dw_part *p, dw_row *r, bc_err *err);
/** Converts p->data to UTF-8 (from its declared encoding), checks it, skips header lines. */
int bc_dwca__part_decode(bc_dwca *a, dw_part *p, bc_err *err);
/** Frees a row's storage (the row is empty afterwards). */
void bc_dwca__row_free(dw_row *r);

#endif
