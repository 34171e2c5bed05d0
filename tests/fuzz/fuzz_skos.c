/*
 * fuzz_skos.c - libFuzzer target: the SKOS RDF/XML chart reader
 * (bc_chart_load_skos). Any input must give a chart or a clean error with
 * a message, never a crash, a leak or undefined behaviour.
 */
#include "fuzz.h"
#include "bathychron.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	const char *path = fuzz_file(data, size, "rdf");
	bc_chart *chart = NULL;
	bc_err err = {0};
	int rc = bc_chart_load_skos(&chart, path, "fuzz", &err);
	if (rc == BC_OK) {
		/* Walk the result: every interval has a name and a sane parent. */
		size_t n = bc_chart_count(chart);
		for (size_t i = 0; i < n; i++) {
			const bc_interval *iv = bc_chart_interval(chart, i);
			if (!iv->name || iv->parent >= (int)n || iv->parent < -1)
				abort();
		}
		for (size_t i = 0; i < bc_chart_label_count(chart); i++)
			if (bc_chart_label(chart, i)->interval >= (int)n)
				abort();
		/* The TSV writer must accept anything the reader gave. */
		FILE *null = fopen("/dev/null", "w");
		if (null) {
			bc_err werr = {0};
			bc_chart_write_tsv(chart, null, &werr);
			fclose(null);
		}
	} else if (!err.msg[0] || strchr(err.msg, '\n')) {
		abort(); /* every refusal carries one line of text */
	}
	bc_chart_free(chart);
	unlink(path);
	return 0;
}
