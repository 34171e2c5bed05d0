/*
 * fuzz_dwca.c - libFuzzer target for the Darwin Core Archive reader:
 * arbitrary bytes as a zip file, opened and read to the end, must never
 * crash, hang or leak; a refusal is a normal outcome. Seeds: tests/fuzz/dwca/
 * (small valid and hostile archives). Built by make fuzz-build; make fuzz
 * runs it (see tests/fuzz/README.md).
 */
#include "dwca.h"

#include <stdio.h>
#include <stdlib.h>
#include <unistd.h>

int LLVMFuzzerTestOneInput(const unsigned char *data, size_t size);

int LLVMFuzzerTestOneInput(const unsigned char *data, size_t size)
{
	static char path[64];
	if (!path[0])
		snprintf(path, sizeof path, "/tmp/bc-fuzz-dwca-%ld.zip", (long)getpid());
	FILE *fp = fopen(path, "wb");
	if (!fp)
		return 0;
	fwrite(data, 1, size, fp);
	fclose(fp);
	/* small limits keep each run fast */
	bc_dwca_limits lim = BC_DWCA_LIMITS_INIT;
	lim.max_entry = lim.max_total = 1 << 20;
	bc_dwca *a = NULL;
	bc_err err = {0};
	if (bc_dwca__open(&a, path, "fuzz.zip", &lim, &err) == BC_OK) {
		int rc;
		while ((rc = bc_dwca__next(a, &err)) == 1)
			for (size_t i = 0; i < bc_dwca__ncolumns(a); i++)
				if (!bc_dwca__value(a, i))
					abort();
		bc_dwca__free(a);
	}
	unlink(path);
	return 0;
}
