/*
 * test_import.c - occurrence import: counts that add up, quarantine,
 * batches, units, environments, ages, extra columns, export round trip.
 */
#include "test.h"
#include "test_sql.h"
#include "db.h"

#include <stdlib.h>

static const char *write_file(const char *name, const char *text)
{
	static char path[8][512];
	static int k;
	char *p = path[k++ % 8];
	snprintf(p, 512, "%s/%s", test_tmpdir(), name);
	FILE *f = fopen(p, "wb");
	if (f) {
		fputs(text, f);
		fclose(f);
	}
	return p;
}

static bc_db *new_db(bc_err *err)
{
	char path[512];
	snprintf(path, sizeof path, "%s/i.gpkg", test_tmpdir());
	bc_db *db = NULL;
	bc_db_create(&db, path, err);
	return db;
}

static const char *q_text(bc_db *db, const char *sql)
{
	static char buf[4][2048];
	static int k;
	char *b = buf[k++ % 4];
	sqlite3_stmt *st = NULL;
	snprintf(b, 2048, "(none)");
	if (sqlite3_prepare_v2(bc_db__sqlite(db), sql, -1, &st, NULL) == SQLITE_OK && sqlite3_step(st) == SQLITE_ROW)
		snprintf(b, 2048, "%s", sqlite3_column_text(st, 0) ? (const char *)sqlite3_column_text(st, 0) : "(null)");
	sqlite3_finalize(st);
	return b;
}

typedef struct msgs {
	int n;
	char first[1024];
} msgs;

static void on_report(void *ctx, const char *m)
{
	msgs *x = ctx;
	if (!x->n++)
		snprintf(x->first, sizeof x->first, "%s", m);
}

/* Every kind of bad row in one file: read = stored + quarantined, and the
 * quarantine holds one row per rejected record with its raw cells. */
TEST(import_mixed_file_counts_add_up)
{
	bc_err err = {0};
	bc_db *db = new_db(&err);
	CHECK_MSG(db, "%s", err.msg);
	bc_import_options o = BC_IMPORT_OPTIONS_INIT;
	msgs m = {0};
	o.report = on_report;
	o.ctx = &m;
	o.display_name = "mixed.csv";
	bc_import_result r;
	CHECK_OK(bc_import_file(&r, db, test_path("cli/fixtures/mixed.csv"), &o, &err), &err);
	CHECK_INT(r.n_read, 17);
	CHECK_INT(r.n_stored, 4);
	CHECK_INT(r.n_quarantined, 13);
	CHECK_INT(r.n_read, r.n_stored + r.n_quarantined);
	CHECK_INT(r.n_age_conflicts, 1);
	CHECK_INT(m.n, 13);
	CHECK(strncmp(m.first, "mixed.csv:3: earliestAgeOrLowestStage: unknown age 'Blorptian'", 62) == 0);
	CHECK_NEAR(test_query_num(db, "SELECT count(*) FROM quarantine"), 13, 0);
	CHECK_NEAR(test_query_num(db, "SELECT n_read + 0.0 * n_stored FROM import_batches"), 17, 0);
	CHECK_STR(q_text(db, "SELECT json_extract(raw_row, '$.minimumPaleodepthInMeters') FROM quarantine WHERE line = 8"), "deep");
	CHECK_STR(q_text(db, "SELECT field || ': ' || reason FROM quarantine WHERE line = 12"),
		"row: 6 cells, but the header has 16 columns (a missing or extra comma, or a line break outside quotes?)");
	/* the multi-line record starts on line 15 and keeps its extra column */
	CHECK_STR(q_text(db, "SELECT line || ' ' || extra FROM occurrences WHERE occurrence_id = 'M14'"), "15 {\"notes\":\"two\\r\\nline note\"}");
	CHECK_STR(q_text(db, "SELECT line FROM occurrences WHERE occurrence_id = 'M17'"), "19");
	bc_db_close(db);
}

TEST(import_same_content_refused_and_dry_run_writes_nothing)
{
	bc_err err = {0};
	bc_db *db = new_db(&err);
	CHECK_MSG(db, "%s", err.msg);
	const char *f = write_file("a.csv", "scientificName,earliestAgeOrLowestStage\nFictocrinus alpha,Campanian\n");
	bc_import_options o = BC_IMPORT_OPTIONS_INIT;
	o.dry_run = 1;
	bc_import_result r;
	CHECK_OK(bc_import_file(&r, db, f, &o, &err), &err);
	CHECK_INT(r.n_stored, 1);
	CHECK_INT(r.batch_id, 0);
	CHECK_NEAR(test_query_num(db, "SELECT count(*) FROM import_batches"), 0, 0);
	CHECK_NEAR(test_query_num(db, "SELECT count(*) FROM occurrences"), 0, 0);
	o.dry_run = 0;
	o.display_name = "a.csv";
	CHECK_OK(bc_import_file(&r, db, f, &o, &err), &err);
	CHECK_INT(r.batch_id, 1);
	CHECK_INT(bc_import_file(&r, db, f, &o, &err), BC_EEXISTS);
	char want[256];
	snprintf(want, sizeof want, "a.csv: identical content was imported already as batch 1 on %s (from a.csv); nothing imported",
		q_text(db, "SELECT started_at FROM import_batches"));
	CHECK_STR(err.msg, want);
	CHECK_NEAR(test_query_num(db, "SELECT count(*) FROM occurrences"), 1, 0);
	bc_db_close(db);
}

TEST(import_whole_file_problems)
{
	bc_err err = {0};
	bc_db *db = new_db(&err);
	CHECK_MSG(db, "%s", err.msg);
	bc_import_options o = BC_IMPORT_OPTIONS_INIT;
	bc_import_result r;
	o.display_name = "x.csv";
	CHECK_INT(bc_import_file(&r, db, write_file("e.csv", ""), &o, &err), BC_EINVALID);
	CHECK_STR(err.msg, "x.csv: empty file; expected a header row and data rows");
	CHECK_INT(bc_import_file(&r, db, write_file("h.csv", "scientificName,locality\n"), &o, &err), BC_EINVALID);
	CHECK_STR(err.msg, "x.csv: only a header row, no data rows; nothing imported");
	CHECK_INT(bc_import_file(&r, db, write_file("n.csv", "Taxon;Stage\nA;Campanian\n"), &o, &err), BC_EINVALID);
	CHECK_STR(err.msg, "x.csv:1: header: no scientificName column among 'Taxon', 'Stage' (wrong delimiter, or headers that need --map?)");
	CHECK_INT(bc_import_file(&r, db, write_file("l.csv", "scientificName,locality\nA,B\nC,K\xf6ln\n"), &o, &err), BC_EINVALID);
	CHECK_STR(err.msg, "x.csv:3: encoding: not UTF-8 (looks like Latin-1/Windows-1252); save the file as UTF-8");
	CHECK_NEAR(test_query_num(db, "SELECT count(*) FROM import_batches"), 0, 0);
	CHECK_NEAR(test_query_num(db, "SELECT count(*) FROM occurrences"), 0, 0);
	bc_db_close(db);
}

/* Feet and fathoms by the international definitions (NIST SP 811, 2008,
 * App. B; 1959 yard and pound agreement): 100 ft = 30.48 m, 10 fathoms =
 * 18.288 m. Environment-only rows take the vocabulary's range. */
TEST(import_map_units_environments_and_defaults)
{
	bc_err err = {0};
	bc_db *db = new_db(&err);
	CHECK_MSG(db, "%s", err.msg);
	const char *map = write_file("lab.map",
		"column \"Taxon\" -> scientificName\ncolumn \"Stage\" -> earliestAgeOrLowestStage\n"
		"column \"Depth (ft)\" -> depth unit ft\ncolumn \"Max (fathoms)\" -> maximumPaleodepthInMeters unit fathom\n"
		"column \"Env\" -> depositionalEnvironment\ndefault taxonGroup \"Crinoidea\"\n");
	const char *f = write_file("lab.csv",
		"Taxon,Stage,Depth (ft),Env,Lab note\n"
		"A one,Campanian,100,,kept\n"
		"A two,Campanian,100-200,,\n"
		"A three,Campanian,,Upper bathyal,\n"
		"A four,Campanian,,carbonate ramp,\n");
	bc_import_options o = BC_IMPORT_OPTIONS_INIT;
	o.map = map;
	bc_import_result r;
	CHECK_OK(bc_import_file(&r, db, f, &o, &err), &err);
	CHECK_INT(r.n_stored, 3);
	CHECK_INT(r.n_quarantined, 1);
	CHECK(test_query_num(db, "SELECT min_depth_m FROM occurrences WHERE scientific_name = 'A one'") == 100 * 0.3048);
	CHECK_NEAR(test_query_num(db, "SELECT min_depth_m FROM occurrences WHERE scientific_name = 'A one'"), 30.48, 1e-12);
	CHECK_NEAR(test_query_num(db, "SELECT max_depth_m FROM occurrences WHERE scientific_name = 'A two'"), 60.96, 1e-12);
	CHECK_STR(q_text(db, "SELECT depth_source || ' ' || environment || ' ' || min_depth_m || '-' || max_depth_m FROM occurrences WHERE scientific_name = 'A three'"),
		"environment upper bathyal 200.0-600.0");
	CHECK_STR(q_text(db, "SELECT taxon_group || ' ' || extra FROM occurrences WHERE scientific_name = 'A one'"), "Crinoidea {\"Lab note\":\"kept\"}");
	CHECK_STR(q_text(db, "SELECT field FROM quarantine"), "depositionalEnvironment");
	/* the same sheet with the term added by --environments is fully stored */
	const char *env = write_file("env.tsv", "term\tmin_m\tmax_m\tnote\tsource\ncarbonate ramp\t0\t60\t\tour convention (from memory)\n");
	const char *f2 = write_file("lab2.csv", "Taxon,Stage,Max (fathoms),Env\nB one,Campanian,10,carbonate ramp\n");
	o.environments = env;
	CHECK_OK(bc_import_file(&r, db, f2, &o, &err), &err);
	CHECK_INT(r.n_stored, 1);
	CHECK_NEAR(test_query_num(db, "SELECT max_depth_m FROM occurrences WHERE scientific_name = 'B one'"), 18.288, 1e-12);
	CHECK_NEAR(test_query_num(db, "SELECT min_depth_m FROM occurrences WHERE scientific_name = 'B one'"), 18.288, 1e-12);
	CHECK_NEAR(test_query_num(db, "SELECT count(*) FROM vocabularies WHERE kind = 'environments'"), 2, 0);
	bc_db_close(db);
}

/* Numbers win over names when both are given; a disagreement beyond
 * BC_AGE_CONFLICT_TOLERANCE_MYR is stored and flagged. */
TEST(import_age_numbers_names_and_conflicts)
{
	bc_err err = {0};
	bc_db *db = new_db(&err);
	CHECK_MSG(db, "%s", err.msg);
	bc_chart *chart = NULL;
	CHECK_OK(bc_timescale_get(&chart, db, NULL, &err), &err);
	int camp = bc_chart_find(chart, "Campanian");
	CHECK(camp >= 0);
	double older = bc_chart_interval(chart, (size_t)camp)->older_ma, younger = bc_chart_interval(chart, (size_t)camp)->younger_ma;
	bc_chart_free(chart);
	char text[1024];
	snprintf(text, sizeof text,
		"scientificName,earliestAgeOrLowestStage,earliestChronometricAge,latestChronometricAge,earliestPeriodOrLowestSystem\n"
		"inside,Campanian,%.3f,%.3f,\n"
		"within tolerance,Campanian,%.3f,%.3f,\n"
		"outside,Campanian,%.3f,%.3f,\n"
		"point,,80,,\n"
		"stage vs system,Campanian,,,Jurassic\n",
		older - 1, younger + 1, older + 0.4, younger, older + 2, younger);
	const char *f = write_file("ages.csv", text);
	bc_import_result r;
	CHECK_OK(bc_import_file(&r, db, f, NULL, &err), &err);
	CHECK_INT(r.n_stored, 5);
	CHECK_STR(q_text(db, "SELECT age_status || ' ' || age_conflict || ' ' || age_from FROM occurrences WHERE scientific_name = 'inside'"), "numeric 0 Campanian");
	CHECK_NEAR(test_query_num(db, "SELECT older_ma FROM occurrences WHERE scientific_name = 'inside'"), older - 1, 1e-9);
	CHECK_NEAR(test_query_num(db, "SELECT age_conflict FROM occurrences WHERE scientific_name = 'within tolerance'"), 0, 0);
	CHECK_NEAR(test_query_num(db, "SELECT age_conflict FROM occurrences WHERE scientific_name = 'outside'"), 1, 0);
	CHECK_NEAR(test_query_num(db, "SELECT older_ma FROM occurrences WHERE scientific_name = 'outside'"), older + 2, 1e-9);
	CHECK_STR(q_text(db, "SELECT older_ma || ' ' || younger_ma || ' ' || age_status FROM occurrences WHERE scientific_name = 'point'"), "80.0 80.0 numeric");
	CHECK_NEAR(test_query_num(db, "SELECT age_conflict FROM occurrences WHERE scientific_name = 'stage vs system'"), 1, 0);
	CHECK_NEAR(test_query_num(db, "SELECT older_ma FROM occurrences WHERE scientific_name = 'stage vs system'"), older, 1e-9);
	CHECK_INT(r.n_age_conflicts, 2);
	bc_db_close(db);
}

/* import -> export -> import stores the same values (guard quotes, extra
 * columns, multi-line cells, converted depths and environments included). */
TEST(import_export_import_is_lossless)
{
	bc_err err = {0};
	bc_db *db = new_db(&err);
	CHECK_MSG(db, "%s", err.msg);
	bc_import_result r;
	CHECK_OK(bc_import_file(&r, db, test_path("cli/fixtures/mixed.csv"), NULL, &err), &err);
	CHECK_OK(bc_import_file(&r, db, test_path("cli/fixtures/good.csv"), NULL, &err), &err);
	char out[512], db2path[512];
	snprintf(out, sizeof out, "%s/export.csv", test_tmpdir());
	FILE *f = fopen(out, "wb");
	CHECK(f);
	long long n = 0;
	CHECK_OK(bc_export_csv(db, f, &n, &err), &err);
	fclose(f);
	CHECK_INT(n, 7);
	snprintf(db2path, sizeof db2path, "%s/second.gpkg", test_tmpdir());
	bc_db *db2 = NULL;
	CHECK_OK(bc_db_create(&db2, db2path, &err), &err);
	CHECK_OK(bc_import_file(&r, db2, out, NULL, &err), &err);
	CHECK_INT(r.n_stored, 7);
	CHECK_INT(r.n_quarantined, 0);
	CHECK_INT(r.n_unguarded, 1);
	const char *sql =
		"SELECT group_concat(x, char(10)) FROM (SELECT quote(occurrence_id) || quote(scientific_name) || quote(taxon_group) || "
		"quote(\"order\") || quote(family) || quote(genus) || quote(locality) || quote(country) || quote(longitude) || "
		"quote(latitude) || quote(age_from) || quote(age_to) || quote(older_ma) || quote(younger_ma) || quote(age_status) || "
		"quote(age_note) || quote(age_conflict) || quote(formation) || quote(member) || quote(bed) || quote(min_depth_m) || "
		"quote(max_depth_m) || quote(depth_source) || quote(environment) || quote(preservation) || quote(articulation) || "
		"quote(individual_count) || quote(reference_key) AS x FROM occurrence_details ORDER BY occurrence_pk)";
	char a[2048];
	snprintf(a, sizeof a, "%s", q_text(db, sql));
	const char *b = q_text(db2, sql);
	CHECK_STR(b, a);
	const char *ex = "SELECT group_concat(extra, '|') FROM (SELECT extra FROM occurrences ORDER BY occurrence_pk)";
	snprintf(a, sizeof a, "%s", q_text(db, ex));
	CHECK_STR(q_text(db2, ex), a);
	bc_db_close(db2);
	bc_db_close(db);
}

/* verbatimCoordinates + verbatimSRS go through PROJ: a DMS pair in
 * EPSG:4326 (50°30'N 0°30'W = 50.5, -0.5 exactly), a UTM pair (checked
 * against the same point sent forward by PROJ), and an unknown CRS. */
TEST(import_verbatim_coordinates)
{
	bc_err err = {0};
	bc_db *db = new_db(&err);
	CHECK_MSG(db, "%s", err.msg);
	const char *f = write_file("v.csv",
		"scientificName,earliestAgeOrLowestStage,locality,verbatimCoordinates,verbatimSRS,decimalLatitude,decimalLongitude,geodeticDatum\n"
		"A,Campanian,Site DMS,\"50\xc2\xb0" "30'N 0\xc2\xb0" "30'W\",EPSG:4326,,,\n"
		"B,Campanian,Site bad,1 2,EPSG:999999,,,\n"
		"C,Campanian,Site no srs,1 2,,,,\n"
		"D,Campanian,Site datum,,,10,10,NAD27\n");
	bc_import_result r;
	msgs m = {0};
	bc_import_options o = BC_IMPORT_OPTIONS_INIT;
	o.report = on_report;
	o.ctx = &m;
	CHECK_OK(bc_import_file(&r, db, f, &o, &err), &err);
	CHECK_INT(r.n_stored, 1);
	CHECK_INT(r.n_quarantined, 3);
	CHECK_NEAR(test_query_num(db, "SELECT latitude FROM localities WHERE name = 'Site DMS'"), 50.5, 1e-9);
	CHECK_NEAR(test_query_num(db, "SELECT longitude FROM localities WHERE name = 'Site DMS'"), -0.5, 1e-9);
	CHECK_STR(q_text(db, "SELECT verbatim_srs FROM localities WHERE name = 'Site DMS'"), "EPSG:4326");
	CHECK_STR(q_text(db, "SELECT field FROM quarantine WHERE line = 3"), "verbatimCoordinates");
	CHECK_STR(q_text(db, "SELECT field FROM quarantine WHERE line = 4"), "verbatimSRS");
	CHECK_STR(q_text(db, "SELECT field FROM quarantine WHERE line = 5"), "geodeticDatum");
	bc_db_close(db);
}

/* Every allocation of a small import fails in turn: the import either
 * succeeds or reports out of memory, and leaves nothing half-written
 * (ASan/UBSan in the sanitizer build catch leaks and bad accesses). */
TEST(import_survives_each_allocation_failure)
{
	bc_err err = {0};
	bc_db *db = new_db(&err);
	CHECK_MSG(db, "%s", err.msg);
	const char *map = write_file("m.map", "column \"Taxon\" -> scientificName\ncolumn \"D (ft)\" -> depth unit ft\n");
	const char *f = write_file("small.csv",
		"Taxon,earliestAgeOrLowestStage,D (ft),preservationMode,locality,decimalLatitude,decimalLongitude,Note\n"
		"A,Campanian,100,crown,Site,10,20,x\nB,Nowhereian,,,Site,10,20,y\nC,Maastrichtian,5-9,columnal,,,,\"multi\nline\"\n");
	int ok = 0, nomem = 0;
	/* every allocation among the first 300, then every 17th (loading the
	 * chart makes thousands; the step keeps the test quick) */
	for (long k = 1; k < 100000 && !ok; k += k < 300 ? 1 : 17) {
		bc_import_options o = BC_IMPORT_OPTIONS_INIT;
		o.map = map;
		o.dry_run = 1;
		bc_import_result r;
		memset(&err, 0, sizeof err);
		bc__alloc_fail_after(k);
		int rc = bc_import_file(&r, db, f, &o, &err);
		bc__alloc_fail_after(0);
		if (rc == BC_OK) {
			CHECK_INT(r.n_read, r.n_stored + r.n_quarantined);
			ok++;
		} else {
			CHECK_MSG(rc == BC_ENOMEM || rc == BC_EDB || rc == BC_ERROR, "allocation %ld: %d %s", k, rc, err.msg);
			nomem++;
		}
		CHECK_NEAR(test_query_num(db, "SELECT count(*) FROM import_batches"), 0, 0);
	}
	CHECK(nomem > 10);
	CHECK(ok > 0);
	bc_db_close(db);
}
