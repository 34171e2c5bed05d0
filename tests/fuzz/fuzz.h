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

#endif
