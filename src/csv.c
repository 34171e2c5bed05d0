/*
 * csv.c - the delimited-text reader: CSV/TSV, delimiter detection, UTF-8
 * (BOM allowed, anything else refused with the line), CRLF, RFC 4180
 * quoting through libcsv; each record keeps the physical line it starts on.
 */
#include "csvio.h"

#include <csv.h>
#include <errno.h>
#include <nettle/sha2.h>
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
	size_t mem_len;
	const char *rb;          /* input not yet split into lines: the read */
	size_t rlen, rpos;       /* buffer, or the whole text when reading from memory */
	char *rbuf;
	const char *line;        /* current physical line: in rb, or in own */
	char *own;               /* a line that crossed the end of the read buffer */
	size_t own_cap;
	long lineno;             /* physical lines fed so far */
	long next_start;         /* line where the next record begins */
	uint64_t bytes, size;
	struct csv_parser p;
	int parser_ready;
	char delim;
	int libcsv_only;
	int hashing;             /* every byte read also goes into sha */
	struct sha256_ctx sha;
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

static int rec_grow(csv_rec *r)
{
	size_t nc = r->cap ? r->cap * 2 : 32;
	size_t *no = bc__realloc(r->off, nc * sizeof *no);
	if (!no)
		return BC_ENOMEM;
	r->off = no;
	r->cap = nc;
	return BC_OK;
}

static int rec_add(csv_rec *r, const char *s, size_t n)
{
	if (r->n == r->cap && rec_grow(r))
		return BC_ENOMEM;
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

/*
 * The common case without libcsv: a whole line with no quote character,
 * read while no record is open, ending in a line end. It is split at the
 * delimiter into the record being built, exactly as libcsv would (spaces
 * are data, a trailing delimiter gives an empty last cell, an empty line
 * gives no record) and then ended like libcsv's end of a row. Returns
 * BC_ERROR, having done nothing, when libcsv must take the line.
 */
static int csv_plain_line(bc_csv *c, const unsigned char *s, size_t len)
{
	if (c->libcsv_only || c->building || c->p.pstate != 0 || len == 0 || (s[len - 1] != '\n' && s[len - 1] != '\r') ||
		memchr(s, '"', len))
		return BC_ERROR;
	size_t body = len - 1;
	if (body && s[body] == '\n' && s[body - 1] == '\r')
		body--;
	if (body) {
		csv_rec *r = &c->build;
		c->building = 1;
		r->line = c->next_start;
		if (bc__buf_append(&r->text, (const char *)s, body)) {
			c->oom = 1;
			return BC_OK;
		}
		char *t = r->text.data;
		size_t at = 0;
		for (;;) {
			char *d = memchr(t + at, c->delim, body - at);
			if (r->n == r->cap && rec_grow(r)) {
				c->oom = 1;
				return BC_OK;
			}
			r->off[r->n++] = at;
			if (!d)
				break;
			*d = '\0';
			at = (size_t)(d - t) + 1;
		}
		r->text.len = body + 1; /* with the NUL bc__buf_append wrote */
	}
	cb_record('\n', c);
	return BC_OK;
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
	c->rb = data;
	c->rlen = len;
	c->size = len;
	*out = c;
	return BC_OK;
}

void bc_csv__libcsv_only(bc_csv *c, int on)
{
	c->libcsv_only = on;
}

void bc_csv__hash_input(bc_csv *c)
{
	sha256_init(&c->sha);
	c->hashing = 1;
	if (!c->f)
		sha256_update(&c->sha, c->mem_len, (const uint8_t *)c->mem);
}

int bc_csv__input_sha256(bc_csv *c, char out[65])
{
	static const char hex[] = "0123456789abcdef";
	if (!c->hashing || !c->eof || c->failed)
		return BC_ERROR;
	uint8_t d[SHA256_DIGEST_SIZE];
	sha256_digest(&c->sha, sizeof d, d);
	c->hashing = 0;
	for (size_t i = 0; i < sizeof d; i++) {
		out[2 * i] = hex[d[i] >> 4];
		out[2 * i + 1] = hex[d[i] & 15];
	}
	out[64] = '\0';
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
	free(c->own);
	free(c->rbuf);
	rec_free(&c->build);
	rec_free(&c->cur);
	for (size_t i = 0; i < c->qcap; i++)
		rec_free(&c->q[i]);
	free(c->q);
	free(c);
}

#define CSV_READ_BYTES (64u << 10)

/* Reads more of a file into the read buffer; returns the bytes read, 0
 * at the end (and always for text in memory), -1 on a read error. */
static long csv_refill(bc_csv *c)
{
	if (!c->f)
		return 0;
	if (!c->rbuf && !(c->rbuf = bc__malloc(CSV_READ_BYTES)))
		return -2;
	size_t n = fread(c->rbuf, 1, CSV_READ_BYTES, c->f);
	if (n == 0 && ferror(c->f))
		return -1;
	if (c->hashing)
		sha256_update(&c->sha, n, (const uint8_t *)c->rbuf);
	c->rb = c->rbuf;
	c->rlen = n;
	c->rpos = 0;
	return (long)n;
}

static int own_append(bc_csv *c, size_t have, const char *s, size_t n)
{
	if (have + n + 1 > c->own_cap) {
		size_t nc = c->own_cap ? c->own_cap : 256;
		while (have + n + 1 > nc)
			nc *= 2;
		char *nb = bc__realloc(c->own, nc);
		if (!nb)
			return BC_ENOMEM;
		c->own = nb;
		c->own_cap = nc;
	}
	memcpy(c->own + have, s, n);
	return BC_OK;
}

/* Reads one physical line (with its line end if any) into c->line; returns
 * its length, 0 at the end, -1 on a read error, -2 out of memory. A line
 * ends at LF, CRLF, or a bare CR (files saved with classic Mac line
 * ends), so every record's line number is right. A line inside the read
 * buffer is used where it lies; one crossing the buffer's end is copied. */
static long csv_read_line(bc_csv *c)
{
	size_t n = 0;
	int copied = 0, cr_last = 0; /* the line so far is in own; it ends in a CR */
	for (;;) {
		if (c->rpos >= c->rlen) {
			long got = csv_refill(c);
			if (got < 0)
				return got;
			if (got == 0)
				break;
		}
		const char *b = c->rb + c->rpos;
		size_t avail = c->rlen - c->rpos, seg;
		int done = 0;
		if (cr_last) {
			/* a CR ended the previous buffer: an LF here belongs to it */
			seg = *b == '\n' ? 1 : 0;
			done = 1;
		} else {
			const char *nl = memchr(b, '\n', avail);
			seg = nl ? (size_t)(nl - b) + 1 : avail;
			const char *cr = memchr(b, '\r', seg);
			if (cr) {
				seg = (size_t)(cr - b) + 1;
				if (seg < avail) {
					if (b[seg] == '\n')
						seg++;
					done = 1;
				} else {
					cr_last = 1;
				}
			} else if (nl) {
				done = 1;
			}
		}
		if (done && !copied) {
			c->line = b;
			n = seg;
			c->rpos += seg;
			break;
		}
		if (own_append(c, n, b, seg))
			return -2;
		copied = 1;
		n += seg;
		c->rpos += seg;
		if (done)
			break;
	}
	if (copied) {
		c->own[n] = '\0';
		c->line = c->own;
	}
	return (long)n;
}

int bc_csv__utf8_valid(const unsigned char *s, size_t n, size_t *bad_at)
{
	size_t i = 0;
	while (i < n) {
		/* eight ASCII bytes at a time */
		if (i + 8 <= n) {
			uint64_t w;
			memcpy(&w, s + i, sizeof w);
			if (!(w & 0x8080808080808080ULL)) {
				i += 8;
				continue;
			}
		}
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
		const unsigned char *s = (const unsigned char *)c->line;
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
		if (csv_plain_line(c, s, len) == BC_OK)
			;
		else if (csv_parse(&c->p, s, len, cb_field, cb_record, c) != len)
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
