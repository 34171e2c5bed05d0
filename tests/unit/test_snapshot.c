/*
 * test_snapshot.c - the column snapshot: every value comes back as the
 * table holds it, across chunk edges, whether built or read back; it is
 * stored only outside a caller's transaction and refused once stale.
 */
#include "test.h"
#include "test_sql.h"
#include "db.h"
#include "snapshot.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

enum { ROWS = 2 * BC_SNAP_CHUNK + 123 }; /* three chunks, the last short */

static bc_db *filled_db(void)
{
	char path[512];
	bc_db *db = NULL;
	snprintf(path, sizeof path, "%s/snap.gpkg", test_tmpdir());
	if (bc_db_create(&db, path, NULL))
		return NULL;
	char sql[1024];
	snprintf(sql, sizeof sql,
		"INSERT INTO import_batches(kind, file, sha256, tool_version) VALUES ('occurrences', 't.csv', 'x', 'test');"
		"INSERT INTO localities(fid, name, longitude, latitude) VALUES (1, 'A', 1, 2), (2, 'B', 3, 4);"
		"WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < %d)"
		" INSERT INTO occurrences(occurrence_pk, batch_id, line, scientific_name, taxon_group, genus, family, \"order\","
		"  older_ma, younger_ma, age_status, timescale, min_depth_m, max_depth_m, articulation, preservation, reference_key, locality_id)"
		" SELECT 10 + 3 * i, 1, i, 'Gen' || (i %% 17) || ' sp', CASE WHEN i %% 2 THEN 'crinoids' ELSE '' END, 'Gen' || (i %% 17), 'Fam', 'Ord',"
		"  i * 0.001 + 1, i * 0.001, 'numeric', 't', CASE WHEN i %% 5 THEN i %% 700 END, CASE WHEN i %% 7 THEN i %% 700 + 5 END,"
		"  CASE i %% 3 WHEN 0 THEN 'articulated' WHEN 1 THEN 'disarticulated' ELSE '' END, 'calyx', 'R' || (i %% 11),"
		"  CASE WHEN i %% 4 THEN 1 + i %% 2 END FROM c;",
		ROWS);
	if (sqlite3_exec(bc_db__sqlite(db), sql, NULL, NULL, NULL) != SQLITE_OK) {
		bc_db_close(db);
		return NULL;
	}
	return db;
}

static int stored_parts(bc_db *db) { return (int)test_query_num(db, "SELECT count(*) FROM occurrence_snapshot"); }

static int same_num(double a, double b) { return (isnan(a) && isnan(b)) || a == b; }

/* Every row of the snapshot against the table, column by column. */
static int matches_table(bc_db *db, bc_snapshot *sn)
{
	sqlite3_stmt *st = NULL;
	if (sqlite3_prepare_v2(bc_db__sqlite(db),
		"SELECT occurrence_pk, locality_id, older_ma, younger_ma, min_depth_m, max_depth_m, articulation, reference_key,"
		" taxon_group, genus FROM occurrences ORDER BY occurrence_pk", -1, &st, NULL) != SQLITE_OK)
		return 0;
	size_t ns, seen = 0;
	const char *const *str = bc_snapshot__strings(sn, &ns);
	bc_snapshot_rows r;
	int ok = 1, more;
	bc_err err = {0};
	while (ok && (more = bc_snapshot__next(sn, &r, &err)) == 1) {
		ok = r.n > 0 && r.n <= BC_SNAP_CHUNK;
		for (size_t i = 0; ok && i < r.n; i++, seen++) {
			ok = sqlite3_step(st) == SQLITE_ROW;
			double v[4];
			for (int c = 0; ok && c < 4; c++)
				v[c] = sqlite3_column_type(st, c + 2) == SQLITE_NULL ? NAN : sqlite3_column_double(st, c + 2);
			int64_t loc = sqlite3_column_type(st, 1) == SQLITE_NULL ? -1 : sqlite3_column_int64(st, 1);
			ok = ok && r.pk[i] == sqlite3_column_int64(st, 0) && r.loc[i] == loc && same_num(r.older[i], v[0]) &&
			     same_num(r.younger[i], v[1]) && same_num(r.dmin[i], v[2]) && same_num(r.dmax[i], v[3]) &&
			     strcmp(str[r.text[BC_SNAP_ARTICULATION][i]], (const char *)sqlite3_column_text(st, 6)) == 0 &&
			     strcmp(str[r.text[BC_SNAP_REFERENCE][i]], (const char *)sqlite3_column_text(st, 7)) == 0 &&
			     strcmp(str[r.text[BC_SNAP_GROUP][i]], (const char *)sqlite3_column_text(st, 8)) == 0 &&
			     strcmp(str[r.text[BC_SNAP_GENUS][i]], (const char *)sqlite3_column_text(st, 9)) == 0 &&
			     r.text[BC_SNAP_NAME] == NULL; /* not asked for */
		}
	}
	ok = ok && more == 0 && seen == ROWS && sqlite3_step(st) == SQLITE_DONE;
	sqlite3_finalize(st);
	return ok;
}

TEST(snapshot_built_then_read_back_equals_table)
{
	bc_err err = {0};
	bc_db *db = filled_db();
	CHECK(db != NULL);
	unsigned want = BC_SNAP_BIT(BC_SNAP_GROUP) | BC_SNAP_BIT(BC_SNAP_GENUS);
	bc_snapshot *sn = NULL;
	CHECK_INT(stored_parts(db), 0);
	CHECK_OK(bc_snapshot__load(&sn, db, want, &err), &err);
	CHECK(sn && bc_snapshot__stored(sn));
	CHECK(matches_table(db, sn));  /* built in memory */
	bc_snapshot__free(sn);
	CHECK_INT(stored_parts(db), 16);
	CHECK_OK(bc_snapshot__load(&sn, db, want, &err), &err);
	CHECK(sn && bc_snapshot__stored(sn));
	CHECK(matches_table(db, sn));  /* read back in chunks */
	bc_snapshot__free(sn);
	CHECK(sqlite3_get_autocommit(bc_db__sqlite(db))); /* no transaction left open */
	bc_db_close(db);
}

TEST(snapshot_inside_a_transaction_stores_nothing)
{
	bc_err err = {0};
	bc_db *db = filled_db();
	CHECK(db != NULL);
	bc_snapshot *sn = NULL;
	unsigned want = BC_SNAP_BIT(BC_SNAP_GROUP) | BC_SNAP_BIT(BC_SNAP_GENUS);
	CHECK_OK(bc_db__exec(db, "BEGIN", &err), &err);
	CHECK_OK(bc_snapshot__load(&sn, db, want, &err), &err);
	CHECK(sn && !bc_snapshot__stored(sn));
	CHECK(matches_table(db, sn));
	bc_snapshot__free(sn);
	CHECK(!sqlite3_get_autocommit(bc_db__sqlite(db))); /* the caller's transaction goes on */
	CHECK_INT(stored_parts(db), 0);
	bc_db__rollback(db);
	bc_db_close(db);
}

TEST(snapshot_stale_copy_is_not_read)
{
	bc_err err = {0};
	bc_db *db = filled_db();
	CHECK(db != NULL);
	bc_snapshot *sn = NULL;
	CHECK_OK(bc_snapshot__load(&sn, db, 0, &err), &err);
	bc_snapshot__free(sn);
	CHECK_INT(stored_parts(db), 16);
	/* Put the parts back by hand after a change the triggers emptied
	 * them for: the key range no longer matches, so they are rebuilt. */
	CHECK_OK(bc_db__exec(db, "CREATE TEMP TABLE keep AS SELECT * FROM occurrence_snapshot;"
				 "DELETE FROM occurrences WHERE occurrence_pk = (SELECT max(occurrence_pk) FROM occurrences);"
				 "INSERT INTO occurrence_snapshot SELECT * FROM keep;", &err), &err);
	CHECK_OK(bc_snapshot__load(&sn, db, 0, &err), &err);
	bc_snapshot_rows r;
	size_t n = 0;
	while (bc_snapshot__next(sn, &r, &err) == 1)
		n += r.n;
	CHECK_INT(n, ROWS - 1);
	bc_snapshot__free(sn);
	bc_db_close(db);
}

TEST(snapshot_off_by_environment)
{
	bc_err err = {0};
	bc_db *db = filled_db();
	CHECK(db != NULL);
	bc_snapshot *sn = (bc_snapshot *)1;
	setenv("BATHYCHRON_SNAPSHOT", "off", 1);
	CHECK_OK(bc_snapshot__load(&sn, db, 0, &err), &err);
	unsetenv("BATHYCHRON_SNAPSHOT");
	CHECK(sn == NULL);
	CHECK_INT(stored_parts(db), 0);
	bc_db_close(db);
}
