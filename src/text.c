/*
 * text.c - Unicode folding of free text for matching (utf8proc): NFKD,
 * case fold, no diacritics, one dash, one space. Only this file and the
 * callers of text.h know how text is compared.
 */
#include "text.h"

#include <stdint.h>
#include <string.h>
#include <utf8proc.h>

/* Characters lumped beyond what UTF8PROC_LUMP does. */
static int32_t text_lump(int32_t c)
{
	if (c < 0x20 || c == 0x7f)
		return ' ';
	if (c < 0x80)
		return c;
	switch (utf8proc_category(c)) {
	case UTF8PROC_CATEGORY_ZS:
	case UTF8PROC_CATEGORY_ZL:
	case UTF8PROC_CATEGORY_ZP:
	case UTF8PROC_CATEGORY_CC:
		return ' ';
	case UTF8PROC_CATEGORY_PD:
		return '-';
	case UTF8PROC_CATEGORY_PI:
	case UTF8PROC_CATEGORY_PF:
		return '\'';
	default:
		break;
	}
	if (c == 0x2212 || c == 0x2043 || c == 0xfe63 || c == 0xff0d)
		return '-';
	return c;
}

long bc_text__fold(const char *in, size_t len, char *out, size_t cap, size_t *bad_at)
{
	static const int opts = UTF8PROC_DECOMPOSE | UTF8PROC_COMPAT | UTF8PROC_CASEFOLD | UTF8PROC_STRIPMARK |
		UTF8PROC_LUMP | UTF8PROC_IGNORE | UTF8PROC_STRIPCC;
	int32_t cps[BC_TEXT_MAX];
	if (len > BC_TEXT_MAX || cap == 0)
		return -2;
	/* Validate first, so the caller learns where the bad bytes are. */
	for (size_t i = 0; i < len;) {
		int32_t c;
		utf8proc_ssize_t n = utf8proc_iterate((const utf8proc_uint8_t *)in + i, (utf8proc_ssize_t)(len - i), &c);
		if (n <= 0 || c < 0) {
			if (bad_at)
				*bad_at = i;
			return -1;
		}
		i += (size_t)n;
	}
	utf8proc_ssize_t n = utf8proc_decompose((const utf8proc_uint8_t *)in, (utf8proc_ssize_t)len, cps, BC_TEXT_MAX,
		(utf8proc_option_t)opts);
	if (n < 0) {
		if (bad_at)
			*bad_at = 0;
		return n == UTF8PROC_ERROR_INVALIDUTF8 ? -1 : -2;
	}
	if (n > BC_TEXT_MAX)
		return -2;
	size_t o = 0;
	int space = 1; /* drop leading spaces */
	for (utf8proc_ssize_t i = 0; i < n; i++) {
		int32_t c = text_lump(cps[i]);
		if (c == ' ') {
			if (!space && o + 1 < cap)
				out[o++] = ' ';
			space = 1;
			continue;
		}
		space = 0;
		utf8proc_uint8_t enc[4];
		utf8proc_ssize_t k = utf8proc_encode_char(c, enc);
		if (o + (size_t)k + 1 > cap)
			return -2;
		memcpy(out + o, enc, (size_t)k);
		o += (size_t)k;
	}
	while (o > 0 && out[o - 1] == ' ')
		o--;
	out[o] = '\0';
	return (long)o;
}

size_t bc_text__key(char *s)
{
	size_t o = 0, len = strlen(s);
	int space = 1;
	for (size_t i = 0; i < len;) {
		unsigned char ch = (unsigned char)s[i];
		size_t n = 1;
		int keep;
		if (ch < 0x80) {
			keep = (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') || (ch >= '0' && ch <= '9');
		} else {
			int32_t c;
			utf8proc_ssize_t k = utf8proc_iterate((const utf8proc_uint8_t *)s + i, (utf8proc_ssize_t)(len - i), &c);
			if (k <= 0) {
				keep = 0;
			} else {
				n = (size_t)k;
				utf8proc_category_t cat = utf8proc_category(c);
				keep = (cat >= UTF8PROC_CATEGORY_LU && cat <= UTF8PROC_CATEGORY_LO) ||
					(cat >= UTF8PROC_CATEGORY_MN && cat <= UTF8PROC_CATEGORY_ME) ||
					(cat >= UTF8PROC_CATEGORY_ND && cat <= UTF8PROC_CATEGORY_NO);
			}
		}
		if (keep) {
			memmove(s + o, s + i, n);
			o += n;
			space = 0;
		} else if (!space) {
			s[o++] = ' ';
			space = 1;
		}
		i += n;
	}
	while (o > 0 && s[o - 1] == ' ')
		o--;
	s[o] = '\0';
	return o;
}

/* Decodes up to `max` code points; returns the count, or max + 1 if longer.
 * ASCII bytes are taken as they are; only other bytes go through utf8proc. */
static size_t text_decode(const char *s, int32_t *cp, size_t max)
{
	size_t n = 0;
	const unsigned char *p = (const unsigned char *)s;
	while (*p) {
		if (n == max)
			return max + 1;
		if (*p < 0x80) {
			cp[n++] = *p++;
			continue;
		}
		int32_t c;
		utf8proc_ssize_t k = utf8proc_iterate(p, -1, &c);
		if (k <= 0) {
			c = 0xfffd;
			k = 1;
		}
		cp[n++] = c;
		p += k;
	}
	return n;
}

size_t bc_text__edit_distance(const char *a, const char *b, size_t max)
{
	enum { LIM = 256 };
	int32_t ca[LIM], cb[LIM];
	size_t row[LIM + 1];
	size_t na = text_decode(a, ca, LIM), nb = text_decode(b, cb, LIM);
	if (na > LIM || nb > LIM)
		return max + 1;
	if ((na > nb ? na - nb : nb - na) > max)
		return max + 1;
	for (size_t j = 0; j <= nb; j++)
		row[j] = j;
	for (size_t i = 1; i <= na; i++) {
		size_t diag = row[0], best = i;
		row[0] = i;
		for (size_t j = 1; j <= nb; j++) {
			size_t up = row[j];
			size_t v = diag + (ca[i - 1] != cb[j - 1]);
			if (up + 1 < v)
				v = up + 1;
			if (row[j - 1] + 1 < v)
				v = row[j - 1] + 1;
			row[j] = v;
			diag = up;
			if (v < best)
				best = v;
		}
		if (best > max)
			return max + 1;
	}
	return row[nb] > max ? max + 1 : row[nb];
}
