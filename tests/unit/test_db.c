/*
 * test_db.c - create, open, refuse: the database life cycle.
 */
#include "test.h"
#include "db.h"

#include <stdlib.h>
#include <unistd.h>

static char *path_in(const char *dir, const char *name)
{
	static char buf[512];
	snprintf(buf, sizeof buf, "%s/%s", dir, name);
	return buf;
}

static int query_int(bc_db *db, const char *sql)
{
	sqlite3_stmt *st = NULL;
	int v = -999;
	if (sqlite3_prepare_v2(bc_db__sqlite(db), sql, -1, &st, NULL) == SQLITE_OK && sqlite3_step(st) == SQLITE_ROW)
		v = sqlite3_column_int(st, 0);
	sqlite3_finalize(st);
	return v;
}

/* OGC GeoPackage 1.3.0 (OGC 12-128r17), Requirement 2: application_id
 * 0x47504B47 ("GPKG") and user_version 10300; Requirement 11: the three
 * required spatial reference systems. */
TEST(db_create_is_geopackage_1_3)
{
	bc_err err = {0};
	bc_db *db = NULL;
	CHECK_OK(bc_db_create(&db, path_in(test_tmpdir(), "a.gpkg"), &err), &err);
	CHECK_INT(query_int(db, "PRAGMA application_id"), 0x47504B47);
	CHECK_INT(query_int(db, "PRAGMA user_version"), 10300);
	CHECK_INT(query_int(db, "SELECT count(*) FROM gpkg_spatial_ref_sys WHERE srs_id IN (-1, 0, 4326)"), 3);
	CHECK_INT(query_int(db, "SELECT count(*) FROM gpkg_geometry_columns WHERE table_name = 'localities' AND geometry_type_name = 'POINT'"), 1);
	CHECK_INT(query_int(db, "SELECT value FROM bathychron_meta WHERE key = 'schema_version'"), bc_db_schema_version());
	bc_db_close(db);
}

TEST(db_create_never_overwrites)
{
	bc_err err = {0};
	bc_db *db = NULL;
	const char *p = path_in(test_tmpdir(), "b.gpkg");
	FILE *f = fopen(p, "w");
	CHECK(f != NULL);
	fputs("precious", f);
	fclose(f);
	CHECK_INT(bc_db_create(&db, p, &err), BC_EEXISTS);
	CHECK(db == NULL);
	char *text = NULL;
	CHECK_OK(bc__read_file(p, &text, NULL, &err), &err);
	CHECK_STR(text, "precious");
	free(text);
}

TEST(db_open_refuses_foreign_and_newer)
{
	bc_err err = {0};
	bc_db *db = NULL;
	const char *dir = test_tmpdir();
	char other[512];
	snprintf(other, sizeof other, "%s/other.sqlite", dir);
	sqlite3 *s = NULL;
	CHECK(sqlite3_open(other, &s) == SQLITE_OK);
	sqlite3_exec(s, "CREATE TABLE t(x)", NULL, NULL, NULL);
	sqlite3_close(s);
	CHECK_INT(bc_db_open(&db, other, &err), BC_EFOREIGN);
	CHECK(strstr(err.msg, "not a bathychron database") != NULL);

	const char *p = path_in(dir, "c.gpkg");
	CHECK_OK(bc_db_create(&db, p, &err), &err);
	bc_db__exec(db, "UPDATE bathychron_meta SET value = '9999' WHERE key = 'schema_version'", &err);
	bc_db_close(db);
	db = NULL;
	CHECK_INT(bc_db_open(&db, p, &err), BC_EFOREIGN);
	CHECK(strstr(err.msg, "newer") != NULL);

	CHECK_INT(bc_db_open(&db, path_in(dir, "missing.gpkg"), &err), BC_ENOTFOUND);
}

TEST(db_open_migrates_older_schema_forward)
{
	bc_err err = {0};
	bc_db *db = NULL;
	const char *p = path_in(test_tmpdir(), "d.gpkg");
	CHECK_OK(bc_db_create(&db, p, &err), &err);
	/* Pretend the file predates the views migration. */
	CHECK_OK(bc_db__exec(db, "DROP VIEW occurrence_details; DROP VIEW quarantine_details; DROP VIEW chart_intervals;"
				 "UPDATE bathychron_meta SET value = '2' WHERE key = 'schema_version'", &err), &err);
	bc_db_close(db);
	db = NULL;
	CHECK_OK(bc_db_open(&db, p, &err), &err);
	CHECK_INT(query_int(db, "SELECT value FROM bathychron_meta WHERE key = 'schema_version'"), bc_db_schema_version());
	CHECK_INT(query_int(db, "SELECT count(*) FROM sqlite_master WHERE type = 'view' AND name = 'occurrence_details'"), 1);
	bc_db_close(db);
}
