/*
 * csv.c - the delimited-text reader: CSV/TSV, delimiter detection, UTF-8
 * (BOM allowed, anything else refused with the line), CRLF, RFC 4180
 * quoting through libcsv; each record keeps the physical line it starts on.
 */
#include "csvio.h"

#include <csv.h>
#include <errno.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

/* A quoted field longer than this is almost surely an unmatched quote; we
 * stop instead of reading the rest of the file into one cell. */
#define CSV_MAX_RECORD_BYTES (16u << 20)

typedef struct csv_rec {
	bc_buf text;      /* fields, each NUL-terminated */
	size_t *off;      /* start of each field in text */
	size_t n, cap;
	long line;
} csv_rec;

struct bc_csv {
	char *name;
	FILE *f;                 /* NULL when reading from memory */
	const char *mem;
	size_t mem_len, mem_pos;
	char *line;              /* current physical line (getline buffer) */
	size_t line_cap;
	long lineno;             /* physical lines fed so far */
	long next_start;         /* line where the next record begins */
	uint64_t bytes, size;
	struct csv_parser p;
	int parser_ready;
	char delim;
	int eof, failed;
	/* the record being built, then a small queue of finished ones */
	csv_rec build;
	int building;            /* a field of the current record has been seen */
	size_t build_bytes;
	csv_rec *q;
	size_t qn, qcap, qhead;
	csv_rec cur;             /* handed to the caller */
	int oom;
};

static void rec_clear(csv_rec *r)
{
	r->text.len = 0;
	r->n = 0;
}

static void rec_free(csv_rec *r)
{
	bc__buf_free(&r->text);
	free(r->off);
	memset(r, 0, sizeof *r);
}

static int rec_add(csv_rec *r, const char *s, size_t n)
{
	if (r->n == r->cap) {
		size_t nc = r->cap ? r->cap * 2 : 32;
		size_t *no = bc__realloc(r->off, nc * sizeof *no);
		if (!no)
			return BC_ENOMEM;
		r->off = no;
		r->cap = nc;
	}
	r->off[r->n++] = r->text.len;
	/* bc__buf_append always leaves a NUL after the data (it reserves room
	 * for it): counting that NUL in makes it the field separator */
	if (bc__buf_append(&r->text, s ? s : "", s ? n : 0))
		return BC_ENOMEM;
	r->text.len++;
	return BC_OK;
}

static void cb_field(void *s, size_t n, void *data)
{
	bc_csv *c = data;
	if (!c->building) {
		c->building = 1;
		c->build.line = c->next_start;
	}
	if (rec_add(&c->build, s, n))
		c->oom = 1;
}

static int rec_all_empty(const csv_rec *r)
{
	for (size_t i = 0; i < r->n; i++)
		if (r->text.data[r->off[i]])
			return 0;
	return 1;
}

static void cb_record(int ch, void *data)
{
	bc_csv *c = data;
	if (c->building && !rec_all_empty(&c->build)) {
		if (c->qn == c->qcap) {
			size_t nc = c->qcap ? c->qcap * 2 : 4;
			csv_rec *nq = bc__realloc(c->q, nc * sizeof *nq);
			if (!nq) {
				c->oom = 1;
				return;
			}
			memset(nq + c->qcap, 0, (nc - c->qcap) * sizeof *nq);
			c->q = nq;
			c->qcap = nc;
		}
		/* swap buffers: the queue slot's old storage becomes the builder's */
		csv_rec tmp = c->q[c->qn];
		c->q[c->qn++] = c->build;
		c->build = tmp;
	}
	rec_clear(&c->build);
	c->building = 0;
	c->build_bytes = 0;
	/* every unquoted line end is reported (CSV_REPALL_NL): the next record
	 * starts on the following physical line */
	if (ch == '\n' || ch == '\r')
		c->next_start = c->lineno + 1;
}

static int csv_setup(bc_csv *c, const char *name, const bc_csv_options *opts, bc_err *err)
{
	if (!(c->name = bc__strdup(name)))
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	c->delim = opts ? opts->delim : 0;
	c->next_start = 1;
	return BC_OK;
}

int bc_csv__open(bc_csv **out, const char *path, const char *name, const bc_csv_options *opts, bc_err *err)
{
	*out = NULL;
	bc_csv *c = bc__calloc(1, sizeof *c);
	if (!c)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	int rc = csv_setup(c, name ? name : path, opts, err);
	if (rc == BC_OK && !(c->f = fopen(path, "rb")))
		rc = bc_err_set(err, errno == ENOENT ? BC_ENOTFOUND : BC_EIO, "%s: cannot open: %s", name ? name : path, strerror(errno));
	if (rc == BC_OK) {
		struct stat sb;
		if (fstat(fileno(c->f), &sb) == 0 && S_ISREG(sb.st_mode))
			c->size = (uint64_t)sb.st_size;
	}
	if (rc) {
		bc_csv__free(c);
		return rc;
	}
	*out = c;
	return BC_OK;
}

int bc_csv__open_mem(bc_csv **out, const char *name, const char *data, size_t len, const bc_csv_options *opts, bc_err *err)
{
	*out = NULL;
	bc_csv *c = bc__calloc(1, sizeof *c);
	if (!c)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	int rc = csv_setup(c, name, opts, err);
	if (rc) {
		bc_csv__free(c);
		return rc;
	}
	c->mem = data;
	c->mem_len = len;
	c->size = len;
	*out = c;
	return BC_OK;
}

void bc_csv__free(bc_csv *c)
{
	if (!c)
		return;
	if (c->f)
		fclose(c->f);
	if (c->parser_ready)
		csv_free(&c->p);
	free(c->name);
	free(c->line);
	rec_free(&c->build);
	rec_free(&c->cur);
	for (size_t i = 0; i < c->qcap; i++)
		rec_free(&c->q[i]);
	free(c->q);
	free(c);
}

/* Reads one physical line (with its line end if any) into c->line; returns
 * its length, 0 at the end, -1 on a read error. A line ends at LF, CRLF, or
 * a bare CR (files saved with classic Mac line ends), so every record's
 * line number is right. */
static long csv_read_line(bc_csv *c)
{
	size_t n = 0;
	for (;;) {
		int ch;
		if (c->f) {
			ch = getc_unlocked(c->f);
			if (ch == EOF && ferror(c->f))
				return -1;
		} else {
			ch = c->mem_pos < c->mem_len ? (unsigned char)c->mem[c->mem_pos++] : EOF;
		}
		if (ch == EOF)
			break;
		if (n + 3 > c->line_cap) { /* this byte, perhaps an LF after a CR, and the NUL */
			size_t nc = c->line_cap ? c->line_cap * 2 : 256;
			char *nb = bc__realloc(c->line, nc);
			if (!nb)
				return -2;
			c->line = nb;
			c->line_cap = nc;
		}
		c->line[n++] = (char)ch;
		if (ch == '\n')
			break;
		if (ch == '\r') {
			int next = c->f ? getc_unlocked(c->f) : (c->mem_pos < c->mem_len ? (unsigned char)c->mem[c->mem_pos] : EOF);
			if (next != '\n') {
				if (c->f && next != EOF)
					ungetc(next, c->f);
				break;
			}
			if (!c->f)
				c->mem_pos++;
			c->line[n++] = '\n';
			break;
		}
	}
	if (n)
		c->line[n] = '\0';
	return (long)n;
}

int bc_csv__utf8_valid(const unsigned char *s, size_t n, size_t *bad_at)
{
	size_t i = 0;
	while (i < n) {
		unsigned char b = s[i];
		if (b < 0x80) {
			i++;
			continue;
		}
		size_t k;
		unsigned cp, min;
		if (b >= 0xC2 && b <= 0xDF) { k = 1; cp = b & 0x1F; min = 0x80; }
		else if (b >= 0xE0 && b <= 0xEF) { k = 2; cp = b & 0x0F; min = 0x800; }
		else if (b >= 0xF0 && b <= 0xF4) { k = 3; cp = b & 0x07; min = 0x10000; }
		else goto bad;
		if (i + k >= n)
			goto bad;
		for (size_t j = 1; j <= k; j++) {
			if ((s[i + j] & 0xC0) != 0x80)
				goto bad;
			cp = (cp << 6) | (s[i + j] & 0x3F);
		}
		if (cp < min || cp > 0x10FFFF || (cp >= 0xD800 && cp <= 0xDFFF))
			goto bad;
		i += k + 1;
	}
	return 1;
bad:
	if (bad_at)
		*bad_at = i;
	return 0;
}

/* Counts candidate delimiters outside quotes in the header line. */
static char csv_detect(const char *s, size_t n)
{
	size_t tabs = 0, commas = 0, semis = 0;
	int q = 0;
	for (size_t i = 0; i < n; i++) {
		if (s[i] == '"')
			q = !q;
		else if (!q && s[i] == '\t')
			tabs++;
		else if (!q && s[i] == ',')
			commas++;
		else if (!q && s[i] == ';')
			semis++;
	}
	if (tabs > 0 && tabs >= commas && tabs >= semis)
		return '\t';
	if (semis > commas)
		return ';';
	return ',';
}

static int csv_is_space(unsigned char ch)
{
	(void)ch;
	return 0; /* spaces are data; we trim where a column's meaning allows it */
}

/* Feeds physical lines until at least one record is queued or input ends. */
static int csv_fill(bc_csv *c, bc_err *err)
{
	while (c->qhead >= c->qn && !c->eof) {
		c->qhead = c->qn = 0;
		long n = csv_read_line(c);
		if (n == -2 || c->oom)
			return bc_err_set(err, BC_ENOMEM, "out of memory");
		if (n < 0)
			return bc_err_set(err, BC_EIO, "%s:%ld: cannot read: %s", c->name, c->lineno + 1, strerror(errno));
		if (n == 0) {
			c->eof = 1;
			if (c->parser_ready) {
				/* libcsv only reports an unclosed quote at the end in
				 * strict mode; its state 2 (FIELD_BEGUN in libcsv.c) with
				 * `quoted` set means a quoted field is still open. */
				if ((c->p.quoted && c->p.pstate == 2) || csv_fini(&c->p, cb_field, cb_record, c) != 0)
					return bc_err_set(err, BC_EINVALID, "%s:%ld: quoting: a quoted field starts on this line and is never closed (unmatched \")",
						c->name, c->build.n || c->building ? c->build.line : c->next_start);
				if (c->oom)
					return bc_err_set(err, BC_ENOMEM, "out of memory");
			}
			break;
		}
		unsigned char *s = (unsigned char *)c->line;
		size_t len = (size_t)n;
		c->lineno++;
		c->bytes += len;
		if (c->lineno == 1) {
			if (len >= 2 && ((s[0] == 0xFF && s[1] == 0xFE) || (s[0] == 0xFE && s[1] == 0xFF)))
				return bc_err_set(err, BC_EINVALID, "%s:1: encoding: UTF-16 (byte-order mark found); save the file as UTF-8", c->name);
			if (len >= 3 && s[0] == 0xEF && s[1] == 0xBB && s[2] == 0xBF) {
				s += 3;
				len -= 3;
			}
			/* A spreadsheet program's own file instead of its text export:
			 * the OLE2 signature of .xls (and old .doc) files. */
			if (len >= 8 && memcmp(s, "\xD0\xCF\x11\xE0\xA1\xB1\x1A\xE1", 8) == 0)
				return bc_err_set(err, BC_EINVALID, "%s:1: encoding: an Excel 97-2003 workbook (.xls), not text; save the sheet as CSV (UTF-8) and import that", c->name);
		}
		if (memchr(s, '\0', len))
			return bc_err_set(err, BC_EINVALID, "%s:%ld: encoding: NUL byte in the text (a binary or UTF-16 file?); save the file as UTF-8 text", c->name, c->lineno);
		if (!bc_csv__utf8_valid(s, len, NULL))
			return bc_err_set(err, BC_EINVALID, "%s:%ld: encoding: not UTF-8 (looks like Latin-1/Windows-1252); save the file as UTF-8", c->name, c->lineno);
		if (!c->parser_ready) {
			if (csv_init(&c->p, CSV_REPALL_NL | CSV_APPEND_NULL | CSV_STRICT_FINI) != 0)
				return bc_err_set(err, BC_ENOMEM, "out of memory");
			c->parser_ready = 1;
			if (!c->delim)
				c->delim = csv_detect((const char *)s, len);
			csv_set_delim(&c->p, (unsigned char)c->delim);
			csv_set_space_func(&c->p, csv_is_space); /* libcsv's default line ends (CR, LF) stay */
			/* libcsv grows a cell by blk_size (default 128 bytes) per
			 * realloc: with an allocator that copies on every realloc
			 * (sanitizers, valgrind, some libcs) a long cell costs
			 * quadratic time. 64 KiB steps keep a 16 MB cell cheap. */
			csv_set_blk_size(&c->p, 64 * 1024);
		}
		if (csv_parse(&c->p, s, len, cb_field, cb_record, c) != len)
			return bc_err_set(err, c->oom || csv_error(&c->p) == CSV_ENOMEM ? BC_ENOMEM : BC_EINVALID, "%s:%ld: %s",
				c->name, c->lineno, csv_strerror(csv_error(&c->p)));
		if (c->oom)
			return bc_err_set(err, BC_ENOMEM, "out of memory");
		c->build_bytes += len;
		/* libcsv's state 0 (ROW_NOT_BEGUN): the record ended on this line,
		 * so a long but complete line is no run-on record. */
		if (!c->building && c->p.pstate == 0)
			c->build_bytes = 0;
		if (c->build_bytes + c->p.entry_pos > CSV_MAX_RECORD_BYTES)
			return bc_err_set(err, BC_EINVALID, "%s:%ld: quoting: a record runs on for more than %u MB from here (an unmatched \"?)",
				c->name, c->building ? c->build.line : c->next_start, CSV_MAX_RECORD_BYTES >> 20);
	}
	return BC_OK;
}

int bc_csv__next(bc_csv *c, bc_err *err)
{
	if (c->failed)
		return bc_err_set(err, BC_ERROR, "%s: reading stopped after an earlier error", c->name);
	int rc = csv_fill(c, err);
	if (rc) {
		c->failed = 1;
		return rc;
	}
	if (c->qhead >= c->qn)
		return 0;
	csv_rec tmp = c->cur;
	c->cur = c->q[c->qhead];
	c->q[c->qhead++] = tmp;
	return 1;
}

size_t bc_csv__nfields(const bc_csv *c) { return c->cur.n; }
const char *bc_csv__field(const bc_csv *c, size_t i) { return i < c->cur.n ? c->cur.text.data + c->cur.off[i] : ""; }
long bc_csv__line(const bc_csv *c) { return c->cur.line; }
char bc_csv__delim(const bc_csv *c) { return c->delim; }
uint64_t bc_csv__bytes(const bc_csv *c) { return c->bytes; }
uint64_t bc_csv__size(const bc_csv *c) { return c->size; }
const char *bc_csv__name(const bc_csv *c) { return c->name; }

int bc_csv__quote(bc_buf *b, const char *s, char delim)
{
	int need = 0;
	for (const char *p = s; *p; p++)
		if (*p == '"' || *p == delim || *p == '\n' || *p == '\r') {
			need = 1;
			break;
		}
	if (!need)
		return bc__buf_puts(b, s);
	if (bc__buf_append(b, "\"", 1))
		return BC_ENOMEM;
	for (const char *p = s; *p; p++) {
		if (*p == '"' && bc__buf_append(b, "\"", 1))
			return BC_ENOMEM;
		if (bc__buf_append(b, p, 1))
			return BC_ENOMEM;
	}
	return bc__buf_append(b, "\"", 1);
}

int bc_csv__text_cell(bc_buf *b, const char *s, char delim, int guard)
{
	if (guard && s[0] && strchr("=+-@\t\r", s[0])) {
		bc_buf g = {0};
		int rc = bc__buf_append(&g, "'", 1) || bc__buf_puts(&g, s) || bc_csv__quote(b, g.data, delim) ? BC_ENOMEM : BC_OK;
		bc__buf_free(&g);
		return rc;
	}
	return bc_csv__quote(b, s, delim);
}
