/*
 * fuzz.h - shared pieces of the libFuzzer targets in tests/fuzz/.
 * Each fuzz_<name>.c defines LLVMFuzzerTestOneInput; its seed corpus is
 * tests/fuzz/<name>/. Readers that take a path get the input as a file.
 */
#ifndef BC_FUZZ_H
#define BC_FUZZ_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);
int LLVMFuzzerInitialize(int *argc, char ***argv);

/* A NUL-terminated copy of the input (an embedded NUL ends the text, as
 * it would for any C string a caller passes). Caller frees. */
static inline char *fuzz_text(const uint8_t *data, size_t size)
{
	char *s = malloc(size + 1);
	if (!s)
		abort();
	memcpy(s, data, size);
	s[size] = '\0';
	return s;
}

/* The input written to a per-process file named `<tmp>/bc-fuzz-<pid>.<ext>`;
 * the same path is rewritten for every input. Returns the path. */
static inline const char *fuzz_file(const uint8_t *data, size_t size, const char *ext)
{
	static char path[512];
	const char *tmp = getenv("TMPDIR");
	snprintf(path, sizeof path, "%s/bc-fuzz-%ld.%s", tmp && *tmp ? tmp : "/tmp", (long)getpid(), ext);
	FILE *f = fopen(path, "wb");
	if (!f || (size && fwrite(data, 1, size, f) != size) || fclose(f) != 0)
		abort();
	return path;
}

/* 1 when s[0..n) is valid UTF-8 (shortest forms, no surrogates, <= U+10FFFF). */
static inline int fuzz_utf8_valid(const unsigned char *s, size_t n)
{
	for (size_t i = 0; i < n;) {
		unsigned char b = s[i];
		size_t k;
		unsigned cp, min;
		if (b < 0x80) { i++; continue; }
		else if (b >= 0xC2 && b <= 0xDF) { k = 1; cp = b & 0x1F; min = 0x80; }
		else if (b >= 0xE0 && b <= 0xEF) { k = 2; cp = b & 0x0F; min = 0x800; }
		else if (b >= 0xF0 && b <= 0xF4) { k = 3; cp = b & 0x07; min = 0x10000; }
		else return 0;
		for (size_t j = 1; j <= k; j++) {
			if (i + j >= n || (s[i + j] & 0xC0) != 0x80)
				return 0;
			cp = (cp << 6) | (s[i + j] & 0x3F);
		}
		if (cp < min || cp > 0x10FFFF || (cp >= 0xD800 && cp <= 0xDFFF))
			return 0;
		i += k + 1;
	}
	return 1;
}

/* A fixed-size text field of a result: NUL-terminated within its array,
 * and valid UTF-8 (when the input was). */
static inline int fuzz_field_ok(const char *f, size_t cap, int input_utf8)
{
	const char *nul = memchr(f, '\0', cap);
	if (!nul)
		return 0;
	return !input_utf8 || fuzz_utf8_valid((const unsigned char *)f, (size_t)(nul - f));
}

#endif
