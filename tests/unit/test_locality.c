/*
 * test_locality.c - localities: sharing by normalised name, coordinates
 * kept and disagreements reported, extent, near-duplicates, coverage.
 */
#include "test.h"
#include "test_sql.h"
#include "locality.h"
#include "geo.h"

#include <stdlib.h>

static bc_db *loc_db(const char *name)
{
	static char p[512];
	bc_err err = {0};
	bc_db *db = NULL;
	snprintf(p, sizeof p, "%s/%s", test_tmpdir(), name);
	if (bc_db_create(&db, p, &err) != 0) {
		fprintf(stderr, "%s\n", err.msg);
		return NULL;
	}
	return db;
}

static bc_locality_input loc_in(const char *name, const char *country, const char *formation, double lon, double lat, int64_t line)
{
	bc_locality_input in = {name, country, formation, lon, lat, "", "", NAN, 0, line};
	return in;
}

TEST(locality_named_rows_share_one_record)
{
	bc_err err = {0};
	bc_db *db = loc_db("a.gpkg");
	CHECK(db != NULL);
	bc_locality_cache *lc = NULL;
	CHECK_OK(bc_locality__cache_new(&lc, db, &err), &err);
	int64_t a = 0, b = 0, c = 0, d = 0, e = -1;
	bc_locality_input in = loc_in("Kettle  Hollow", "Freedonia", "", NAN, NAN, 2);
	int rc = bc_locality__get_or_create(lc, &in, &a, &err);
	in = loc_in(" kettle hollow ", "FREEDONIA", "Marl Fm", 10.5, 45.25, 3);
	rc = rc ? rc : bc_locality__get_or_create(lc, &in, &b, &err);
	in = loc_in("Kettle Hollow", "Sylvania", "", NAN, NAN, 4);
	rc = rc ? rc : bc_locality__get_or_create(lc, &in, &c, &err);
	in = loc_in("KETTLE HOLLOW", "freedonia", "Other Fm", 10.5, 45.25, 5);
	rc = rc ? rc : bc_locality__get_or_create(lc, &in, &d, &err);
	in = loc_in("", "Freedonia", "", NAN, NAN, 6);
	rc = rc ? rc : bc_locality__get_or_create(lc, &in, &e, &err);
	bc_locality__cache_free(lc);
	int n = (int)test_query_num(db, "SELECT count(*) FROM localities");
	double lon = test_query_num(db, "SELECT longitude FROM localities WHERE fid = 1");
	int nform = (int)test_query_num(db, "SELECT count(*) FROM localities WHERE fid = 1 AND formation = 'Marl Fm' AND name = 'Kettle  Hollow'");
	bc_db_close(db);
	CHECK_OK(rc, &err);
	CHECK(a > 0 && a == b && a == d && c != a);
	CHECK_INT(e, 0); /* unnamed, no coordinates: no locality */
	CHECK_INT(n, 2);
	CHECK(lon == 10.5);
	CHECK_INT(nform, 1);
}

static int collect_conflict(const bc_locality_conflict *c, void *user)
{
	bc_locality_conflict *out = user;
	if (out->fid != 0)
		return 99; /* more than one */
	*out = *c;
	out->name = out->file = out->kept_file = out->country = out->verbatim = NULL; /* borrowed */
	return 0;
}

TEST(locality_keeps_first_coordinates_and_reports_disagreement)
{
	bc_err err = {0};
	bc_db *db = loc_db("b.gpkg");
	CHECK(db != NULL);
	CHECK_OK(bc_db__exec(db, "INSERT INTO import_batches (batch_id, kind, file, sha256, tool_version) "
				 "VALUES (7, 'occurrences', 'sheet.csv', 'x', 'test')", &err), &err);
	bc_locality_cache *lc = NULL;
	CHECK_OK(bc_locality__cache_new(&lc, db, &err), &err);
	int64_t f1 = 0, f2 = 0, f3 = 0, f4 = 0;
	bc_locality_input in = loc_in("Grey Cliff", "", "", 0, 0, 10);
	in.batch_id = 7;
	int rc = bc_locality__get_or_create(lc, &in, &f1, &err);
	in.line = 11; /* same place again: no disagreement */
	rc = rc ? rc : bc_locality__get_or_create(lc, &in, &f2, &err);
	in.lon = 1; /* one degree of longitude east on the equator */
	in.line = 12;
	in.verbatim_coordinates = "0 1";
	rc = rc ? rc : bc_locality__get_or_create(lc, &in, &f3, &err);
	in.lon = 0.00001; /* about 1.1 m away: within tolerance */
	in.line = 13;
	rc = rc ? rc : bc_locality__get_or_create(lc, &in, &f4, &err);
	bc_locality__cache_free(lc);
	CHECK_OK(rc, &err);
	CHECK(f1 == f2 && f2 == f3 && f3 == f4);
	double kept = test_query_num(db, "SELECT longitude FROM localities");
	int given = (int)test_query_num(db, "SELECT count(*) FROM locality_coordinates");
	bc_locality_conflict c = {0};
	rc = bc_locality__conflicts(db, 100.0, collect_conflict, &c, &err);
	bc_db_close(db);
	CHECK(kept == 0);
	CHECK_INT(given, 4);
	CHECK_OK(rc, &err);
	CHECK_INT(c.fid, f1);
	CHECK_INT(c.line, 12);
	CHECK_INT(c.kept_line, 10);
	CHECK(c.lon == 1 && c.kept_lon == 0);
	/* 1° of longitude on the equator: 111319.490793 m (GeodSolve, check-values §7). */
	CHECK_NEAR(c.distance_m, 111319.490793, 1e-6);
}

TEST(locality_layer_extent_and_geometry)
{
	bc_err err = {0};
	bc_db *db = loc_db("c.gpkg");
	CHECK(db != NULL);
	bc_locality_cache *lc = NULL;
	CHECK_OK(bc_locality__cache_new(&lc, db, &err), &err);
	int64_t f = 0;
	bc_locality_input in = loc_in("A", "", "", 0.5, 50.5, 1);
	int rc = bc_locality__get_or_create(lc, &in, &f, &err);
	in = loc_in("B", "", "", -3.25, 52, 2);
	rc = rc ? rc : bc_locality__get_or_create(lc, &in, &f, &err);
	in = loc_in("C", "", "", NAN, NAN, 3);
	rc = rc ? rc : bc_locality__get_or_create(lc, &in, &f, &err);
	in = loc_in("C", "", "", 4, 49, 4); /* C gets its first coordinates */
	rc = rc ? rc : bc_locality__get_or_create(lc, &in, &f, &err);
	in = loc_in("D", "", "", 200, 10, 5);
	int bad = bc_locality__get_or_create(lc, &in, &f, &err);
	in = loc_in("D", "", "", 20, NAN, 5);
	int half = bc_locality__get_or_create(lc, &in, &f, &err);
	bc_locality__cache_free(lc);
	double minx = test_query_num(db, "SELECT min_x FROM gpkg_contents WHERE table_name = 'localities'");
	double maxx = test_query_num(db, "SELECT max_x FROM gpkg_contents WHERE table_name = 'localities'");
	double miny = test_query_num(db, "SELECT min_y FROM gpkg_contents WHERE table_name = 'localities'");
	double maxy = test_query_num(db, "SELECT max_y FROM gpkg_contents WHERE table_name = 'localities'");
	int stamped = (int)test_query_num(db, "SELECT count(*) FROM gpkg_contents WHERE table_name = 'localities' AND last_change LIKE '____-__-__T__:__:__.___Z'");
	/* geom of A is the check-values §9 blob for POINT(0.5 50.5) */
	int blob_ok = (int)test_query_num(db, "SELECT hex(geom) = '47500001E61000000101000000000000000000E03F0000000000404940' FROM localities WHERE name = 'A'");
	CHECK_OK(bc_locality__refresh_extent(db, &err), &err);
	double minx2 = test_query_num(db, "SELECT min_x FROM gpkg_contents WHERE table_name = 'localities'");
	bc_db_close(db);
	CHECK_OK(rc, &err);
	CHECK_INT(bad, BC_EINVALID);
	CHECK_INT(half, BC_EINVALID);
	CHECK(minx == -3.25 && maxx == 4 && miny == 49 && maxy == 52);
	CHECK(minx2 == -3.25);
	CHECK_INT(stamped, 1);
	CHECK_INT(blob_ok, 1);
}

typedef struct near_list {
	int n;
	int64_t f1[8], f2[8];
	double d[8];
} near_list;

static int collect_near(const bc_locality_near *p, void *user)
{
	near_list *l = user;
	if (l->n < 8)
		l->f1[l->n] = p->fid1, l->f2[l->n] = p->fid2, l->d[l->n] = p->distance_m;
	l->n++;
	return 0;
}

TEST(locality_unnamed_near_duplicates)
{
	bc_err err = {0};
	bc_db *db = loc_db("d.gpkg");
	CHECK(db != NULL);
	bc_locality_cache *lc = NULL;
	CHECK_OK(bc_locality__cache_new(&lc, db, &err), &err);
	int64_t f[6] = {0};
	bc_locality_input in[6] = {
		loc_in("", "", "Marl Fm", 10, 45, 1),
		loc_in("", "", "Marl Fm", 10, 45, 2),           /* same place: same record */
		loc_in("", "", "marl  fm", 10, 45.0005, 3),     /* 55.5 m north, same formation */
		loc_in("", "", "Chalk Fm", 10, 45.0001, 4),     /* close, other formation */
		loc_in("", "", "Marl Fm", 10, 45.01, 5),        /* 1.1 km away */
		loc_in("Named Pit", "", "Marl Fm", 10, 45.0002, 6), /* named: not a candidate */
	};
	int rc = 0;
	for (int i = 0; rc == 0 && i < 6; i++)
		rc = bc_locality__get_or_create(lc, &in[i], &f[i], &err);
	bc_locality__cache_free(lc);
	near_list l = {0};
	if (rc == 0)
		rc = bc_locality__near_unnamed(db, 100.0, collect_near, &l, &err);
	bc_db_close(db);
	CHECK_OK(rc, &err);
	CHECK(f[0] == f[1] && f[2] != f[0]);
	CHECK_INT(l.n, 1);
	CHECK_INT(l.f1[0], f[0]);
	CHECK_INT(l.f2[0], f[2]);
	/* 0.0005° of latitude at 45°: about 55.5 m (common practice, 111.1 km per degree) */
	CHECK_NEAR(l.d[0], 55.5, 0.5);
}

TEST(locality_key_normalises)
{
	bc_err err = {0};
	char *a = NULL, *b = NULL, *c = NULL;
	CHECK_OK(bc_locality__key("  Ste\xcc\x81phane\tQUARRY ", &a, &err), &err); /* decomposed é */
	CHECK_OK(bc_locality__key("st\xc3\xa9phane quarry", &b, &err), &err);         /* composed é */
	CHECK_OK(bc_locality__key("\xff bad", &c, &err), &err);                        /* not UTF-8 */
	int same = strcmp(a, b) == 0;
	int ok_c = strcmp(c, "\xff bad") == 0;
	free(a);
	free(b);
	free(c);
	CHECK(same);
	CHECK(ok_c);
}

/* ---- coverage ---- */

/* Hand-checked sets. Edge lengths are GeodSolve values from check-values
 * §7: 1° of latitude at the equator 110574.388558 m, 1° of longitude on
 * the equator 111319.490793 m. Cells: EPSG:6933 is Lambert cylindrical
 * equal-area with standard parallel 30° on WGS 84, so x = a·k0·λ with
 * k0 = cos 30° / sqrt(1 - e² sin² 30°) = 0.8667500; 1° of longitude is
 * 96486 m of x (computed by hand from the EPSG definition). */
TEST(coverage_points_hand_checked)
{
	bc_err err = {0};
	bc_coverage cv;
	double lon[] = {0, 0, 1, 0};
	double lat[] = {0, 1, 0, 0}; /* the last repeats the first */
	CHECK_OK(bc_coverage_points(&cv, lon, lat, 4, NULL, &err), &err);
	CHECK_INT(cv.n_localities, 4);
	CHECK_NEAR(cv.mst_km, (110574.388558 + 111319.490793) / 1000, 1e-9);
	CHECK(cv.min_lat == 0 && cv.max_lat == 1 && cv.lat_range == 1);
	CHECK(cv.cell_km == 100);
	/* x of 1°E is 96.5 km: cell (0, 0) like (0, 0); y of 1°N is about
	 * a·sin 1°/k0 = 128 km: cell (0, 1). */
	CHECK_INT(cv.n_cells, 2);

	double lon2[] = {0, 1, 2, -1};
	double lat2[] = {0, 0, 0, 0};
	bc_coverage_options o = {50, 0};
	CHECK_OK(bc_coverage_points(&cv, lon2, lat2, 3, &o, &err), &err);
	CHECK_INT(cv.n_cells, 3); /* x = 0, 96.5, 193.0 km -> cells 0, 1, 3 of 50 km */
	CHECK_NEAR(cv.mst_km, 2 * 111319.490793 / 1000, 1e-9);
	o.cell_km = 100;
	CHECK_OK(bc_coverage_points(&cv, lon2, lat2, 4, &o, &err), &err);
	CHECK_INT(cv.n_cells, 3); /* cells -1, 0, 0, 1 */
	CHECK(cv.lat_range == 0);
	o.cell_km = 1000;
	CHECK_OK(bc_coverage_points(&cv, lon2, lat2, 3, &o, &err), &err);
	CHECK_INT(cv.n_cells, 1);

	CHECK_OK(bc_coverage_points(&cv, NULL, NULL, 0, NULL, &err), &err);
	CHECK_INT(cv.n_localities, 0);
	CHECK(isnan(cv.lat_range) && cv.mst_km == 0 && cv.n_cells == 0);
	o.cell_km = 0;
	CHECK_INT(bc_coverage_points(&cv, lon2, lat2, 1, &o, &err), BC_EINVALID);
	double badlat[] = {95};
	CHECK_INT(bc_coverage_points(&cv, lon2, badlat, 1, NULL, &err), BC_EINVALID);
}

/* Prim's tree against a brute-force check on four points in a line and a
 * star: the tree of collinear equatorial points is the sum of neighbours. */
TEST(coverage_mst_collinear_and_cluster)
{
	bc_err err = {0};
	bc_coverage cv;
	double lon[] = {3, 0, 2, 1};
	double lat[] = {0, 0, 0, 0};
	CHECK_OK(bc_coverage_points(&cv, lon, lat, 4, NULL, &err), &err);
	CHECK_NEAR(cv.mst_km, 3 * 111319.490793 / 1000, 1e-9);
	/* Equator to pole along one meridian via a midpoint: quarter meridian
	 * 10001965.729313 m (GeodSolve, check-values §7). */
	double lon2[] = {0, 0, 0};
	double lat2[] = {0, 90, 45};
	CHECK_OK(bc_coverage_points(&cv, lon2, lat2, 3, NULL, &err), &err);
	CHECK_NEAR(cv.mst_km, 10001965.729313 / 1000, 1e-6);
	CHECK(cv.lat_range == 90);
}

TEST(coverage_from_database)
{
	bc_err err = {0};
	bc_db *db = loc_db("e.gpkg");
	CHECK(db != NULL);
	bc_locality_cache *lc = NULL;
	CHECK_OK(bc_locality__cache_new(&lc, db, &err), &err);
	int64_t f[4] = {0};
	bc_locality_input in[4] = {
		loc_in("P", "", "", 0, 0, 1), loc_in("Q", "", "", 1, 0, 2),
		loc_in("R", "", "", NAN, NAN, 3), loc_in("S", "", "", 2, 0, 4),
	};
	int rc = 0;
	for (int i = 0; rc == 0 && i < 4; i++)
		rc = bc_locality__get_or_create(lc, &in[i], &f[i], &err);
	bc_locality__cache_free(lc);
	CHECK_OK(rc, &err);
	char sql[1024];
	snprintf(sql, sizeof sql,
		"INSERT INTO import_batches (batch_id, kind, file, sha256, tool_version) VALUES (1, 'occurrences', 'x.csv', 'h', 't');"
		"INSERT INTO occurrences (occurrence_pk, batch_id, line, locality_id, older_ma, younger_ma, age_status, timescale) VALUES "
		"(1, 1, 2, %lld, 72, 66, 'exact', 'ics'), (2, 1, 3, %lld, 72, 66, 'exact', 'ics'), (3, 1, 4, %lld, 72, 66, 'exact', 'ics'),"
		"(4, 1, 5, %lld, 72, 66, 'exact', 'ics'), (5, 1, 6, NULL, 72, 66, 'exact', 'ics')",
		(long long)f[0], (long long)f[0], (long long)f[1], (long long)f[2]);
	CHECK_OK(bc_db__exec(db, sql, &err), &err);
	bc_coverage cv;
	int64_t pks[] = {1, 2, 3, 4, 5};
	rc = bc_coverage_occurrences(&cv, db, pks, 5, NULL, &err);
	bc_coverage all;
	int rc2 = bc_coverage_localities(&all, db, NULL, 0, NULL, &err);
	bc_coverage some;
	int64_t fids[] = {f[3], f[0], f[3]};
	int rc3 = bc_coverage_localities(&some, db, fids, 3, NULL, &err);
	int64_t missing[] = {999};
	int rc4 = bc_coverage_occurrences(&some, db, missing, 1, NULL, &err);
	bc_db_close(db);
	CHECK_OK(rc, &err);
	CHECK_INT(cv.n_localities, 2);      /* P and Q */
	CHECK_INT(cv.n_unlocated, 1);       /* R */
	CHECK_INT(cv.n_without_locality, 1);
	CHECK_NEAR(cv.mst_km, 111319.490793 / 1000, 1e-9);
	CHECK_OK(rc2, &err);
	CHECK_INT(all.n_localities, 3);
	CHECK_INT(all.n_unlocated, 1);
	CHECK_NEAR(all.mst_km, 2 * 111319.490793 / 1000, 1e-9);
	CHECK_OK(rc3, &err);
	CHECK_INT(some.n_localities, 2);
	CHECK_NEAR(some.mst_km, 2 * 111319.490793 / 1000, 1e-9);
	CHECK_INT(rc4, BC_ENOTFOUND);
}

/* One prepared set, many subsets (as shift does per bin): each subset's
 * coverage equals the coverage of the same points given on their own,
 * whatever the subsets before it were (the marks are reused). */
TEST(coverage_set_subsets_match_points)
{
	bc_err err = {0};
	enum { N = 400 };
	double lon[N], lat[N], sl[N], sb[N];
	size_t idx[N];
	unsigned r = 12345;
	for (size_t i = 0; i < N; i++) {
		r = r * 1103515245u + 12345u;
		lon[i] = (double)((r >> 8) % 3600) / 10.0 - 180.0;
		r = r * 1103515245u + 12345u;
		lat[i] = (double)((r >> 8) % 1800) / 10.0 - 90.0;
		if (i % 7 == 3) { /* repeated positions */
			lon[i] = lon[i - 1];
			lat[i] = lat[i - 1];
		}
	}
	bc_coverage_options o = {250, 150};
	bc_coverage__set *set = NULL;
	int capped = 0, full = 0;
	CHECK_OK(bc_coverage__set_new(&set, NULL, lon, lat, N, &o, &err), &err);
	for (int round = 0; round < 30; round++) {
		size_t m = 0;
		for (size_t i = 0; i < N; i++) {
			r = r * 1103515245u + 12345u;
			if ((r >> 16) % 5 < (unsigned)(round % 5)) {
				idx[m] = i;
				sl[m] = lon[i];
				sb[m] = lat[i];
				m++;
			}
		}
		bc_coverage a, b;
		CHECK_OK(bc_coverage__set_of(&a, set, idx, m, &err), &err);
		CHECK_OK(bc_coverage_points(&b, sl, sb, m, &o, &err), &err);
		CHECK_INT(a.n_localities, m);
		CHECK_INT(a.n_cells, b.n_cells);
		CHECK((isnan(a.lat_range) && isnan(b.lat_range)) || a.lat_range == b.lat_range);
		CHECK((isnan(a.mst_km) && isnan(b.mst_km)) || a.mst_km == b.mst_km);
		capped += isnan(a.mst_km) && m > 150; /* above the limit on the tree */
		full += !isnan(a.mst_km) && a.mst_km > 0;
	}
	CHECK(capped > 0 && full > 0); /* both kinds of subset were tried */
	bc_coverage__set_free(set);
	/* a point off the globe is refused when a subset uses it, not before */
	double blon[] = {10, 500}, blat[] = {10, 10};
	size_t first = 0, both[] = {0, 1};
	bc_coverage cv;
	CHECK_OK(bc_coverage__set_new(&set, NULL, blon, blat, 2, NULL, &err), &err);
	CHECK_OK(bc_coverage__set_of(&cv, set, &first, 1, &err), &err);
	CHECK_INT(cv.n_cells, 1);
	CHECK_INT(bc_coverage__set_of(&cv, set, both, 2, &err), BC_EINVALID);
	bc_coverage__set_free(set);
}
