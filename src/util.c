/*
 * util.c - errors, allocation, growable strings, hashing and file reading
 * shared by every module.
 */
#include "internal.h"

#include <errno.h>
#include <nettle/sha2.h>
#include <stdlib.h>
#include <string.h>

static long alloc_fail_countdown;

void bc__alloc_fail_after(long n) { alloc_fail_countdown = n; }

static bool alloc_should_fail(void)
{
	if (alloc_fail_countdown <= 0)
		return false;
	return --alloc_fail_countdown == 0;
}

void *bc__malloc(size_t n) { return alloc_should_fail() ? NULL : malloc(n ? n : 1); }
void *bc__calloc(size_t c, size_t s) { return alloc_should_fail() ? NULL : calloc(c ? c : 1, s ? s : 1); }
void *bc__realloc(void *p, size_t n) { return alloc_should_fail() ? NULL : realloc(p, n ? n : 1); }

void *bc__grow(void *p, size_t n, size_t *cap, size_t elem, size_t first)
{
	if (n < *cap)
		return p;
	size_t nc = *cap ? *cap * 2 : first;
	void *q = bc__realloc(p, nc * elem);
	if (q)
		*cap = nc;
	return q;
}

char *bc__strndup(const char *s, size_t n)
{
	char *d = bc__malloc(n + 1);
	if (!d)
		return NULL;
	memcpy(d, s, n);
	d[n] = '\0';
	return d;
}

char *bc__strdup(const char *s) { return s ? bc__strndup(s, strlen(s)) : NULL; }

int bc__err_vset(bc_err *err, int code, const char *fmt, va_list ap)
{
	if (err) {
		err->code = code;
		int n = vsnprintf(err->msg, sizeof err->msg, fmt, ap);
		/* One line, always: text quoted from a file (a cell with a line
		 * break, a library message, a terminal escape) must not break
		 * the message or reach a terminal raw. */
		for (unsigned char *p = (unsigned char *)err->msg; *p; p++)
			if (*p < 0x20 || *p == 0x7f)
				*p = (*p == '\n' || *p == '\r' || *p == '\t') ? ' ' : '?';
		/* A message cut short must not end inside a UTF-8 sequence. */
		if (n >= (int)sizeof err->msg) {
			size_t len = strlen(err->msg), k = len;
			while (k > 0 && ((unsigned char)err->msg[k - 1] & 0xC0) == 0x80)
				k--;
			if (k > 0 && (unsigned char)err->msg[k - 1] >= 0xC0) {
				unsigned char lead = (unsigned char)err->msg[k - 1];
				size_t want = lead >= 0xF0 ? 4 : lead >= 0xE0 ? 3 : 2;
				if (len - (k - 1) < want)
					err->msg[k - 1] = '\0';
			}
		}
	}
	return code;
}

int bc_err_set(bc_err *err, int code, const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	bc__err_vset(err, code, fmt, ap);
	va_end(ap);
	return code;
}

const char *bc_strerror(int code)
{
	switch (code) {
	case BC_OK: return "success";
	case BC_ENOTFOUND: return "not found";
	case BC_EINVALID: return "invalid input";
	case BC_EDB: return "database error";
	case BC_EIO: return "input/output error";
	case BC_ENOMEM: return "out of memory";
	case BC_EBUSY: return "database busy";
	case BC_EEXISTS: return "already exists";
	case BC_EFOREIGN: return "not a bathychron database";
	case BC_EUSAGE: return "usage error";
	default: return "error";
	}
}

int bc_format_parse(bc_format *out, const char *name)
{
	static const struct { const char *name; bc_format f; } formats[] = {
		{"csv", BC_FORMAT_CSV}, {"tsv", BC_FORMAT_TSV}, {"md", BC_FORMAT_MD},
		{"markdown", BC_FORMAT_MD}, {"latex", BC_FORMAT_LATEX}, {"tex", BC_FORMAT_LATEX},
		{"json", BC_FORMAT_JSON},
	};
	for (size_t i = 0; i < sizeof formats / sizeof formats[0]; i++)
		if (name && strcmp(name, formats[i].name) == 0) {
			*out = formats[i].f;
			return BC_OK;
		}
	return BC_EUSAGE;
}

int bc__buf_append(bc_buf *b, const char *s, size_t n)
{
	if (b->len + n + 1 > b->cap) {
		size_t cap = b->cap ? b->cap : 64;
		while (cap < b->len + n + 1)
			cap *= 2;
		char *d = bc__realloc(b->data, cap);
		if (!d)
			return BC_ENOMEM;
		b->data = d;
		b->cap = cap;
	}
	memcpy(b->data + b->len, s, n);
	b->len += n;
	b->data[b->len] = '\0';
	return BC_OK;
}

int bc__buf_puts(bc_buf *b, const char *s) { return bc__buf_append(b, s, strlen(s)); }

int bc__buf_printf(bc_buf *b, const char *fmt, ...)
{
	char small[512];
	va_list ap;
	va_start(ap, fmt);
	int n = vsnprintf(small, sizeof small, fmt, ap);
	va_end(ap);
	if (n < 0)
		return BC_ERROR;
	if ((size_t)n < sizeof small)
		return bc__buf_append(b, small, (size_t)n);
	char *big = bc__malloc((size_t)n + 1);
	if (!big)
		return BC_ENOMEM;
	va_start(ap, fmt);
	vsnprintf(big, (size_t)n + 1, fmt, ap);
	va_end(ap);
	int rc = bc__buf_append(b, big, (size_t)n);
	free(big);
	return rc;
}

int bc__buf_json_string(bc_buf *b, const char *s)
{
	int rc = bc__buf_append(b, "\"", 1);
	const unsigned char *p = (const unsigned char *)s;
	while (rc == 0 && *p) {
		/* a run of bytes that need no escape goes in with one append */
		const unsigned char *run = p;
		while (*p >= 0x20 && *p != '"' && *p != '\\')
			p++;
		if (p > run && (rc = bc__buf_append(b, (const char *)run, (size_t)(p - run))))
			break;
		if (!*p)
			break;
		switch (*p) {
		case '"': rc = bc__buf_puts(b, "\\\""); break;
		case '\\': rc = bc__buf_puts(b, "\\\\"); break;
		case '\n': rc = bc__buf_puts(b, "\\n"); break;
		case '\r': rc = bc__buf_puts(b, "\\r"); break;
		case '\t': rc = bc__buf_puts(b, "\\t"); break;
		default: rc = bc__buf_printf(b, "\\u%04x", *p);
		}
		p++;
	}
	return rc ? rc : bc__buf_append(b, "\"", 1);
}

void bc__buf_free(bc_buf *b)
{
	free(b->data);
	b->data = NULL;
	b->len = b->cap = 0;
}

static void hex_digest(const uint8_t *d, char out[65])
{
	static const char hex[] = "0123456789abcdef";
	for (int i = 0; i < 32; i++) {
		out[2 * i] = hex[d[i] >> 4];
		out[2 * i + 1] = hex[d[i] & 15];
	}
	out[64] = '\0';
}

void bc__sha256_hex(const void *data, size_t n, char out[65])
{
	struct sha256_ctx ctx;
	uint8_t d[SHA256_DIGEST_SIZE];
	sha256_init(&ctx);
	sha256_update(&ctx, n, data);
	sha256_digest(&ctx, sizeof d, d);
	hex_digest(d, out);
}

int bc__sha256_file(const char *path, char out[65], bc_err *err)
{
	FILE *f = fopen(path, "rb");
	if (!f)
		return bc_err_set(err, errno == ENOENT ? BC_ENOTFOUND : BC_EIO, "%s: %s", path, strerror(errno));
	struct sha256_ctx ctx;
	uint8_t d[SHA256_DIGEST_SIZE];
	unsigned char block[65536];
	size_t n;
	sha256_init(&ctx);
	while ((n = fread(block, 1, sizeof block, f)) > 0)
		sha256_update(&ctx, n, block);
	int bad = ferror(f);
	fclose(f);
	if (bad)
		return bc_err_set(err, BC_EIO, "%s: read error", path);
	sha256_digest(&ctx, sizeof d, d);
	hex_digest(d, out);
	return BC_OK;
}

int bc__read_file(const char *path, char **out, size_t *len, bc_err *err)
{
	*out = NULL;
	FILE *f = fopen(path, "rb");
	if (!f)
		return bc_err_set(err, errno == ENOENT ? BC_ENOTFOUND : BC_EIO, "%s: %s", path, strerror(errno));
	bc_buf b = {0};
	char block[65536];
	size_t n;
	int rc = BC_OK;
	while (rc == BC_OK && (n = fread(block, 1, sizeof block, f)) > 0)
		rc = bc__buf_append(&b, block, n);
	if (rc == BC_OK && ferror(f))
		rc = bc_err_set(err, BC_EIO, "%s: read error", path);
	else if (rc == BC_OK && !b.data)
		rc = bc__buf_append(&b, "", 0);
	else if (rc)
		bc_err_set(err, rc, "%s: out of memory", path);
	fclose(f);
	if (rc) {
		bc__buf_free(&b);
		return rc;
	}
	*out = b.data;
	if (len)
		*len = b.len;
	return BC_OK;
}

void bc__note_add(char *note, size_t cap, const char *fmt, ...)
{
	size_t n = strlen(note);
	if (n + 3 >= cap)
		return;
	if (n) {
		memcpy(note + n, "; ", 3);
		n += 2;
	}
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(note + n, cap - n, fmt, ap);
	va_end(ap);
}
