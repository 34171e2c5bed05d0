/*
 * fuzz_metaxml.c - libFuzzer target: meta.xml of a Darwin Core Archive.
 * The input is the meta.xml of an unpacked archive (a folder) beside a
 * small fixed occurrence.txt and measurementorfact.txt, so mutations reach
 * the XML reader and the archive-layout checks directly instead of
 * breaking a zip container (fuzz_dwca covers the zip side). Any input must
 * give records or a one-line refusal; nothing may be read from outside the
 * folder.
 */
#include "fuzz.h"
#include "dwca.h"

#include <sys/stat.h>

static char dir[512], meta[600];

static void put(const char *name, const char *text)
{
	char p[700];
	snprintf(p, sizeof p, "%s/%s", dir, name);
	FILE *f = fopen(p, "wb");
	if (!f || fputs(text, f) < 0 || fclose(f) != 0)
		abort();
}

static void cleanup(void)
{
	static const char *const names[] = {"meta.xml", "occurrence.txt", "measurementorfact.txt"};
	char p[700];
	for (size_t i = 0; i < sizeof names / sizeof names[0]; i++) {
		snprintf(p, sizeof p, "%s/%s", dir, names[i]);
		unlink(p);
	}
	snprintf(p, sizeof p, "%s-outside.txt", dir);
	unlink(p);
	rmdir(dir);
}

int LLVMFuzzerInitialize(int *argc, char ***argv)
{
	(void)argc;
	(void)argv;
	const char *tmp = getenv("TMPDIR");
	snprintf(dir, sizeof dir, "%s/bc-fuzz-meta-%ld", tmp && *tmp ? tmp : "/tmp", (long)getpid());
	if (mkdir(dir, 0700) != 0)
		abort();
	snprintf(meta, sizeof meta, "%s/meta.xml", dir);
	atexit(cleanup);
	put("occurrence.txt",
		"id\toccurrenceID\tscientificName\tearliestAgeOrLowestStage\tminimumPaleodepthInMeters\n"
		"1\tA1\tFictocrinus alpha\tCampanian\t120\n"
		"2\tA2\tImaginocrinus beta\tMaastrichtian\t\n");
	put("measurementorfact.txt",
		"coreid\tmeasurementType\tmeasurementValue\tmeasurementUnit\n"
		"2\tmaximum palaeodepth\t300\tm\n");
	/* A file outside the folder that a hostile location might name. */
	char outside[700];
	snprintf(outside, sizeof outside, "%s-outside.txt", dir);
	FILE *f = fopen(outside, "wb");
	if (f) {
		fputs("id\toccurrenceID\nX\tOUTSIDE-SECRET\n", f);
		fclose(f);
	}
	return 0;
}

static int has(const uint8_t *data, size_t size, const char *s)
{
	size_t n = strlen(s);
	for (size_t i = 0; i + n <= size; i++)
		if (memcmp(data + i, s, n) == 0)
			return 1;
	return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	FILE *f = fopen(meta, "wb");
	if (!f || (size && fwrite(data, 1, size, f) != size) || fclose(f) != 0)
		abort();
	bc_dwca_limits lim = BC_DWCA_LIMITS_INIT;
	lim.max_entry = lim.max_total = lim.max_xml = 1 << 20;
	bc_dwca *a = NULL;
	bc_err err = {0};
	if (bc_dwca__open(&a, dir, "fuzz", &lim, &err) == BC_OK) {
		bc_err rerr = {0};
		int rc;
		while ((rc = bc_dwca__next(a, &rerr)) == 1)
			for (size_t i = 0; i < bc_dwca__ncolumns(a); i++) {
				const char *v = bc_dwca__value(a, i);
				/* a location escaped the folder (unless meta.xml
				 * itself carries the text, as a default value may) */
				if (!v || (strstr(v, "OUTSIDE-SECRET") && !has(data, size, "OUTSIDE-SECRET")))
					abort();
			}
		if (rc < 0 && (!rerr.msg[0] || strchr(rerr.msg, '\n')))
			abort();
		bc_dwca__free(a);
	} else if (!err.msg[0] || strchr(err.msg, '\n')) {
		abort();
	}
	return 0;
}
