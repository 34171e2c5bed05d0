/*
 * test_check.c - the data-quality report and the quarantine CSV.
 */
#include "test.h"
#include "db.h"

#include <stdlib.h>

static char *run_check(bc_db *db, const bc_check_options *o, long long *n, bc_err *err)
{
	char *buf = NULL;
	size_t len = 0;
	FILE *f = open_memstream(&buf, &len);
	if (!f)
		return NULL;
	int rc = bc_check_run(db, o, f, n, err);
	fclose(f);
	if (rc) {
		free(buf);
		return NULL;
	}
	return buf;
}

static int count_lines_starting(const char *text, const char *prefix)
{
	int n = 0;
	size_t k = strlen(prefix);
	for (const char *p = text; p && *p; p = strchr(p, '\n') ? strchr(p, '\n') + 1 : NULL)
		n += strncmp(p, prefix, k) == 0;
	return n;
}

TEST(check_reports_every_kind)
{
	bc_err err = {0};
	bc_db *db = NULL;
	char path[512], coords[512];
	snprintf(path, sizeof path, "%s/c.gpkg", test_tmpdir());
	CHECK_OK(bc_db_create(&db, path, &err), &err);
	bc_import_result r;
	CHECK_OK(bc_import_file(&r, db, test_path("cli/fixtures/mixed.csv"), NULL, &err), &err);
	/* the same locality 5 km away: a coordinate conflict */
	snprintf(coords, sizeof coords, "%s/coords.csv", test_tmpdir());
	FILE *f = fopen(coords, "w");
	CHECK(f);
	fputs("scientificName,locality,decimalLatitude,decimalLongitude,latestAgeOrHighestStage\nFictocrinus delta,Quarry Vell,50.545,10.25,Maastrichtian\n", f);
	fclose(f);
	CHECK_OK(bc_import_file(&r, db, coords, NULL, &err), &err);
	bc_check_options o = BC_CHECK_OPTIONS_INIT;
	long long n = 0;
	char *out = run_check(db, &o, &n, &err);
	CHECK_MSG(out, "%s", err.msg);
	int q = count_lines_starting(out, "quarantined\t"), u = count_lines_starting(out, "unlinked_reference\t"),
	    a = count_lines_starting(out, "age_conflict\t"), d = count_lines_starting(out, "duplicate\t"),
	    l = count_lines_starting(out, "locality_coordinates\t"), c = count_lines_starting(out, "no_coordinates\t");
	int header = strncmp(out, "problem\tbatch\tfile\tline\tkey\tdetail\n", 35) == 0;
	free(out);
	CHECK(header);
	CHECK_INT(q, 13);
	CHECK_INT(u, 4);
	CHECK_INT(a, 1);
	CHECK_INT(d, 1);
	CHECK_INT(l, 1);
	CHECK_INT(c, 0); /* every stored row has coordinates */
	CHECK_INT(n, 13 + 4 + 1 + 1 + 1);
	o.format = BC_FORMAT_JSON;
	out = run_check(db, &o, &n, &err);
	CHECK(out && out[0] == '[' && strstr(out, "\"problem\": \"duplicate\", \"batch\": 1"));
	free(out);
	o.quarantine = 1;
	out = run_check(db, &o, &n, &err);
	CHECK(out);
	CHECK_INT(n, 13);
	int qh = strncmp(out, "quarantine_batch,quarantine_file,quarantine_line,quarantine_field,quarantine_reason,occurrenceID,", 96) == 0;
	int guarded = strstr(out, ",'-5,") != NULL;
	free(out);
	CHECK(qh);
	CHECK(guarded);
	bc_db_close(db);
}
