/*
 * dwca_text.c - the data files of a Darwin Core Archive as meta.xml
 * describes them: converted to UTF-8 from their declared encoding and
 * checked, header lines skipped, then read as delimited text (delimiter,
 * quote and line end per file) one record at a time.
 */
#include "dwca_impl.h"

#include <ctype.h>
#include <iconv.h>
#include <stdlib.h>
#include <string.h>

/* ------------------------------------------------------------------ */
/* Small helpers.                                                      */
/* ------------------------------------------------------------------ */

static int str_ieq(const char *a, const char *b)
{
	for (; *a && *b; a++, b++)
		if (tolower((unsigned char)*a) != tolower((unsigned char)*b))
			return 0;
	return *a == *b;
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

/* ------------------------------------------------------------------ */
/* Delimited text.                                                     */
/* ------------------------------------------------------------------ */

static void row_reset(dw_row *r)
{
	r->text.len = 0;
	r->n = 0;
}

void bc_dwca__row_free(dw_row *r)
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
int bc_dwca__part_decode(bc_dwca *a, dw_part *p, bc_err *err)
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
			bc_dwca__row_free(&r);
			return rc;
		}
		if (rc == 0)
			break;
		if (k == 0) {
			p->header = bc__calloc(r.n, sizeof *p->header);
			if (!p->header) {
				bc_dwca__row_free(&r);
				return bc_dwca__oom(err);
			}
			p->nheader = r.n;
			for (size_t i = 0; i < r.n; i++)
				if (!(p->header[i] = bc_dwca__trim_copy(bc_dwca__row_cell(&r, i)))) {
					bc_dwca__row_free(&r);
					return bc_dwca__oom(err);
				}
		}
	}
	bc_dwca__row_free(&r);
	return BC_OK;
}
