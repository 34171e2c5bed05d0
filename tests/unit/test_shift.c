/*
 * test_shift.c - the shift table on hand-made occurrences: zoning
 * boundary cases, span rules, empty bins, selection, column order, and
 * the statistics wired to the right counts.
 */
#include "test.h"
#include "db.h"
#include "shift.h"

#include <stdlib.h>

/* A three-stage chart with the ICS 2024-12 bounds of these stages. */
static bc_chart *small_chart(void)
{
	bc_chart *c = NULL;
	if (bc_chart_new(&c, "test-chart", NULL))
		return NULL;
	static const struct { const char *n; bc_rank r; double o, y; } iv[] = {
		{"Late Cretaceous", BC_RANK_EPOCH, 100.5, 66.0}, {"Paleocene", BC_RANK_EPOCH, 66.0, 56.0},
		{"Campanian", BC_RANK_AGE, 83.6, 72.1}, {"Maastrichtian", BC_RANK_AGE, 72.1, 66.0},
		{"Danian", BC_RANK_AGE, 66.0, 61.6},
	};
	for (size_t i = 0; i < sizeof iv / sizeof iv[0]; i++) {
		bc_interval x = {iv[i].n, "", iv[i].r, -1, iv[i].o, NAN, iv[i].y, NAN, 0, 0, ""};
		if (bc_chart_add_interval(c, &x, NULL) < 0) {
			bc_chart_free(c);
			return NULL;
		}
	}
	return c;
}

static bc_db *new_db(void)
{
	char path[512];
	bc_db *db = NULL;
	snprintf(path, sizeof path, "%s/s.gpkg", test_tmpdir());
	if (bc_db_create(&db, path, NULL))
		return NULL;
	if (sqlite3_exec(bc_db__sqlite(db), "INSERT INTO import_batches(kind, file, sha256, tool_version) VALUES ('occurrences', 't.csv', 'x', 'test');"
		"INSERT INTO localities(fid, name, longitude, latitude) VALUES (1, 'Loc A', 10, 50), (2, 'Loc B', -120, 35), (3, 'Loc C', NULL, NULL);",
		NULL, NULL, NULL) != SQLITE_OK) {
		bc_db_close(db);
		return NULL;
	}
	return db;
}

/* One occurrence; NAN depth binds NULL, loc 0 binds NULL. */
static int add(bc_db *db, const char *name, const char *group, double older, double younger,
	       double dmin, double dmax, const char *artic, const char *ref, int loc)
{
	sqlite3_stmt *st = NULL;
	int rc = sqlite3_prepare_v2(bc_db__sqlite(db),
		"INSERT INTO occurrences(batch_id, line, scientific_name, taxon_group, older_ma, younger_ma, age_status, timescale,"
		" min_depth_m, max_depth_m, articulation, reference_key, locality_id)"
		" VALUES (1, 2, :name, :grp, :o, :y, 'numeric', 'test-chart', :dmin, :dmax, :art, :ref, :loc)", -1, &st, NULL);
	if (rc != SQLITE_OK)
		return -1;
	bc_db__bind_text(st, ":name", name);
	bc_db__bind_text(st, ":grp", group);
	bc_db__bind_double(st, ":o", older);
	bc_db__bind_double(st, ":y", younger);
	bc_db__bind_double(st, ":dmin", dmin);
	bc_db__bind_double(st, ":dmax", dmax);
	bc_db__bind_text(st, ":art", artic);
	bc_db__bind_text(st, ":ref", ref);
	if (loc)
		bc_db__bind_int64(st, ":loc", loc);
	rc = sqlite3_step(st) == SQLITE_DONE ? 0 : -1;
	sqlite3_finalize(st);
	return rc;
}

/* `n` copies of one occurrence via a recursive CTE. */
static int add_many(bc_db *db, int n, double older, double younger, double depth)
{
	sqlite3_stmt *st = NULL;
	int rc = sqlite3_prepare_v2(bc_db__sqlite(db),
		"WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < :n)"
		" INSERT INTO occurrences(batch_id, line, scientific_name, taxon_group, older_ma, younger_ma, age_status, timescale,"
		" min_depth_m, max_depth_m) SELECT 1, i, 'Aus bus', 'crinoids', :o, :y, 'numeric', 't', :d, :d FROM c", -1, &st, NULL);
	if (rc != SQLITE_OK)
		return -1;
	bc_db__bind_int64(st, ":n", n);
	bc_db__bind_double(st, ":o", older);
	bc_db__bind_double(st, ":y", younger);
	bc_db__bind_double(st, ":d", depth);
	rc = sqlite3_step(st) == SQLITE_DONE ? 0 : -1;
	sqlite3_finalize(st);
	return rc;
}

/* design.md's straddle rule at a boundary S: shallow when max <= S and
 * min < S, deep when min >= S, otherwise straddle; d alone is [d, d]. */
TEST(shift_zone_boundary_cases)
{
	const double s[] = {200};
	CHECK_INT(bc_shift__zone(100, 200, s, 1), 0);   /* max == S: shallow */
	CHECK_INT(bc_shift__zone(200, 300, s, 1), 1);   /* min == S: deep */
	CHECK_INT(bc_shift__zone(200, 200, s, 1), 1);   /* single depth at S: deep */
	CHECK_INT(bc_shift__zone(199.9, 199.9, s, 1), 0);
	CHECK_INT(bc_shift__zone(150, 250, s, 1), -1);  /* straddle */
	CHECK_INT(bc_shift__zone(0, 0, s, 1), 0);
	const double z[] = {200, 1000};
	CHECK_INT(bc_shift__zone(50, 200, z, 2), 0);
	CHECK_INT(bc_shift__zone(200, 1000, z, 2), 1);
	CHECK_INT(bc_shift__zone(1000, 1000, z, 2), 2);
	CHECK_INT(bc_shift__zone(500, 1500, z, 2), -1);
	CHECK_INT(bc_shift__zone(100, 1500, z, 2), -1);
	CHECK_INT(bc_shift__zone(3000, 4000, z, 2), 2);
}

/* Hand-counted span rules over Campanian (83.6-72.1), Maastrichtian
 * (72.1-66), Danian (66-61.6). */
TEST(shift_count_span_rules)
{
	char n1[] = "Campanian", n2[] = "Maastrichtian", n3[] = "Danian";
	bc_shift__bin bins[] = {{n1, 83.6, 72.1}, {n2, 72.1, 66.0}, {n3, 66.0, 61.6}};
	bc_shift__occ occ[] = {
		/* 80-70: 7.9 Myr in Campanian, 2.1 in Maastrichtian */
		{1, 80, 70, 10, 10, -1, -1, 0, BC_SHIFT__SHALLOW, 0},
		/* point 72.1 Ma: a bin holds its older bound -> Maastrichtian */
		{2, 72.1, 72.1, 300, 300, -1, -1, 0, BC_SHIFT__DEEP, 0},
		/* point 66 -> Danian */
		{3, 66, 66, 300, 300, -1, -1, 0, BC_SHIFT__DEEP, 0},
		/* 74.1-70.1: 2.0 and 2.0 -> tie goes to the older bin */
		{4, 74.1, 70.1, 100, 300, -1, -1, 0, BC_SHIFT__STRADDLE, 0},
		/* 90-85: outside every bin */
		{5, 90, 85, 10, 10, -1, -1, 0, BC_SHIFT__SHALLOW, 0},
		/* 75-62: 2.9 / 6.1 / 4.0 -> Maastrichtian */
		{6, 75, 62, 300, 300, -1, -1, 0, BC_SHIFT__DEEP, 0},
	};
	size_t st = bc_shift__stride(0);
	double c[3 * 8 + 3];
	bc_shift__tally t;
	bc_err err = {0};
	CHECK_INT(st, 9);
	CHECK_OK(bc_shift__count(c, NULL, NULL, &t, occ, 6, bins, 3, BC_SPAN_MAJORITY, 0, 0, 0, 0, &err), &err);
	CHECK_INT(t.n_used, 5);
	CHECK_INT(t.n_outside, 1);
	CHECK_INT(t.n_multi, 3);
	CHECK_NEAR(c[0 * st + BC_SHIFT__C_SHALLOW], 1, 0);
	CHECK_NEAR(c[0 * st + BC_SHIFT__C_STRADDLE], 1, 0);
	CHECK_NEAR(c[0 * st + BC_SHIFT__C_DEEP], 0, 0);
	CHECK_NEAR(c[1 * st + BC_SHIFT__C_DEEP], 2, 0);
	CHECK_NEAR(c[2 * st + BC_SHIFT__C_DEEP], 1, 0);

	CHECK_OK(bc_shift__count(c, NULL, NULL, &t, occ, 6, bins, 3, BC_SPAN_ALL, 0, 0, 0, 0, &err), &err);
	CHECK_NEAR(c[0 * st + BC_SHIFT__C_SHALLOW], 1, 0);
	CHECK_NEAR(c[1 * st + BC_SHIFT__C_SHALLOW], 1, 0);
	CHECK_NEAR(c[0 * st + BC_SHIFT__C_DEEP], 1, 0);   /* occurrence 6 */
	CHECK_NEAR(c[1 * st + BC_SHIFT__C_DEEP], 2, 0);
	CHECK_NEAR(c[2 * st + BC_SHIFT__C_DEEP], 2, 0);
	CHECK_NEAR(c[1 * st + BC_SHIFT__C_STRADDLE], 1, 0);

	CHECK_OK(bc_shift__count(c, NULL, NULL, &t, occ, 6, bins, 3, BC_SPAN_SPLIT, 0, 0, 0, 0, &err), &err);
	CHECK_NEAR(c[0 * st + BC_SHIFT__C_SHALLOW], 7.9 / 10, 1e-12);
	CHECK_NEAR(c[1 * st + BC_SHIFT__C_SHALLOW], 2.1 / 10, 1e-12);
	CHECK_NEAR(c[0 * st + BC_SHIFT__C_DEEP], 2.9 / 13, 1e-12);
	CHECK_NEAR(c[1 * st + BC_SHIFT__C_DEEP], 1 + 6.1 / 13, 1e-12);
	CHECK_NEAR(c[2 * st + BC_SHIFT__C_DEEP], 1 + 4.0 / 13, 1e-12);
	CHECK_NEAR(c[0 * st + BC_SHIFT__C_STRADDLE], 0.5, 1e-12);

	/* max:5 leaves out 80-70 (10 Myr) and 75-62 (13 Myr). */
	CHECK_OK(bc_shift__count(c, NULL, NULL, &t, occ, 6, bins, 3, BC_SPAN_MAX, 5, 0, 0, 0, &err), &err);
	CHECK_INT(t.n_too_long, 2);
	CHECK_INT(t.n_used, 3);
	CHECK_NEAR(c[0 * st + BC_SHIFT__C_SHALLOW], 0, 0);
	CHECK_NEAR(c[1 * st + BC_SHIFT__C_DEEP], 1, 0);
}

static bc_db *stage_db(void)
{
	bc_db *db = new_db();
	if (!db)
		return NULL;
	int bad = 0;
	/* Campanian: 2 shallow, 1 deep, 1 straddle; Maastrichtian: nothing; Danian: 1 shallow, 2 deep. */
	bad |= add(db, "Aus bus", "crinoids", 80, 78, 10, 50, "articulated", "Smith2001", 1);
	bad |= add(db, "Aus cus", "crinoids", 80, 78, 100, 200, "articulated", "Smith2001", 1);  /* max == 200: shallow */
	bad |= add(db, "Aus bus", "crinoids", 76, 75, 200, 400, "disarticulated", "Jones1999", 2); /* min == 200: deep */
	bad |= add(db, "Bus dus", "crinoids", 76, 75, 150, 250, "partly articulated", "Jones1999", 0);
	bad |= add(db, "Bus dus", "crinoids", 64, 63, 30, NAN, "", "", 3);      /* one depth: [30, 30] */
	bad |= add(db, "Bus dus", "crinoids", 64, 63, 500, 500, "disarticulated", "Lee2010", 2);
	bad |= add(db, "Cus eus", "crinoids", 63, 62, 800, 900, "articulated", "Lee2010", 2);
	bad |= add(db, "Cus eus", "crinoids", 63, 62, NAN, NAN, "articulated", "Lee2010", 2); /* no depth */
	bad |= add(db, "Dus fus", "echinoids", 63, 62, 800, 900, "articulated", "Lee2010", 2);
	if (bad) {
		bc_db_close(db);
		return NULL;
	}
	return db;
}

TEST(shift_compute_stage_bins_with_empty_bin)
{
	bc_db *db = stage_db();
	bc_chart *chart = small_chart();
	CHECK(db && chart);
	bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
	bc_err err = {0};
	bc_shift *s = NULL;
	o.chart = chart;
	CHECK_OK(bc_shift_option_set(&o, "group", "CRINOIDS", &err), &err);
	CHECK_OK(bc_shift_compute(&s, db, &o, &err), &err);
	CHECK_INT(bc_shift_bin_count(s), 3);
	const bc_shift_bin *b = bc_shift_bin_at(s, 0);
	CHECK_STR(b->name, "Campanian");
	CHECK_NEAR(b->n, 4, 0);
	CHECK_NEAR(b->n_shallow, 2, 0);
	CHECK_NEAR(b->n_deep, 1, 0);
	CHECK_NEAR(b->n_straddle, 1, 0);
	CHECK_NEAR(b->frac_deep, 1.0 / 3, 1e-15);
	CHECK_INT(b->n_references, 2);
	CHECK_INT(b->n_localities, 2);
	CHECK_NEAR(b->n_articulated, 2, 0);
	CHECK_NEAR(b->n_partly_articulated, 1, 0);
	CHECK_NEAR(b->n_disarticulated, 1, 0);
	CHECK(isnan(b->diff));
	b = bc_shift_bin_at(s, 1);
	CHECK_STR(b->name, "Maastrichtian");
	CHECK_NEAR(b->n, 0, 0);
	CHECK(isnan(b->frac_deep) && isnan(b->frac_deep_lo) && isnan(b->frac_deep_hi));
	CHECK(isnan(b->diff) && isnan(b->fisher_p));
	b = bc_shift_bin_at(s, 2);
	CHECK_STR(b->name, "Danian");
	CHECK_NEAR(b->n_shallow, 1, 0);
	CHECK_NEAR(b->n_deep, 2, 0);
	CHECK_NEAR(b->n_articulation_unknown, 1, 0);
	CHECK_INT(b->n_references, 1); /* "" is not a reference */
	CHECK_INT(b->n_localities, 2);
	CHECK(isnan(b->diff)); /* the previous bin is empty */
	const bc_shift_summary *u = bc_shift_summary_get(s);
	CHECK_INT(u->n_selected, 8);
	CHECK_INT(u->n_no_depth, 1);
	CHECK_INT(u->n_used, 7);
	CHECK_INT(strlen(u->data_sha256), 64);
	const bc_shift_tests *t = bc_shift_tests_get(s);
	CHECK_INT(t->n_bins_tested, 2);
	CHECK_STR(t->break_before, "Campanian");
	CHECK_STR(t->break_after, "Danian");
	CHECK_NEAR(t->break_ma, 66.0, 0);
	CHECK(t->trend_z > 0); /* deeper toward the present */
	bc_shift_free(s);
	bc_chart_free(chart);
	bc_db_close(db);
}

TEST(shift_csv_first_ten_columns_in_order)
{
	bc_db *db = stage_db();
	bc_chart *chart = small_chart();
	CHECK(db && chart);
	bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
	bc_err err = {0};
	bc_shift *s = NULL;
	o.chart = chart;
	CHECK_OK(bc_shift_compute(&s, db, &o, &err), &err);
	char path[512], line[4096];
	snprintf(path, sizeof path, "%s/t.csv", test_tmpdir());
	FILE *f = fopen(path, "w+");
	CHECK(f);
	CHECK_OK(bc_shift_write(s, f, BC_FORMAT_CSV, &err), &err);
	rewind(f);
	CHECK(fgets(line, sizeof line, f));
	CHECK(strncmp(line, "bin,older_ma,younger_ma,n,n_shallow,n_deep,n_straddle,frac_deep,frac_deep_lo,frac_deep_hi,", 90) == 0);
	CHECK(fgets(line, sizeof line, f));
	CHECK(strncmp(line, "Campanian,83.6,72.1,4,2,1,1,0.3333333333,", 41) == 0);
	CHECK(fgets(line, sizeof line, f));
	CHECK(strncmp(line, "Maastrichtian,72.1,66,0,0,0,0,NA,NA,NA,", 39) == 0);
	fclose(f);
	bc_shift_free(s);
	bc_chart_free(chart);
	bc_db_close(db);
}

TEST(shift_selection_taxon_preservation_region)
{
	bc_db *db = stage_db();
	bc_chart *chart = small_chart();
	CHECK(db && chart);
	bc_err err = {0};
	bc_shift *s = NULL;
	bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
	o.chart = chart;
	/* a genus matches "Aus bus" and "Aus cus" through scientific_name */
	CHECK_OK(bc_shift_option_set(&o, "taxon", "aus", &err), &err);
	CHECK_OK(bc_shift_compute(&s, db, &o, &err), &err);
	CHECK_INT(bc_shift_summary_get(s)->n_selected, 3);
	bc_shift_free(s);
	s = NULL;

	bc_shift_options p = BC_SHIFT_OPTIONS_INIT;
	p.chart = chart;
	CHECK_OK(bc_shift_option_set(&p, "preservation", "disarticulated", &err), &err);
	CHECK_OK(bc_shift_compute(&s, db, &p, &err), &err);
	CHECK_INT(bc_shift_summary_get(s)->n_selected, 2);
	bc_shift_free(s);
	s = NULL;

	/* Europe: locality 1 only; locality 3 has no coordinates, none for 1 row */
	bc_shift_options r = BC_SHIFT_OPTIONS_INIT;
	r.chart = chart;
	CHECK_OK(bc_shift_option_set(&r, "region", "-10,30,30,70", &err), &err);
	CHECK_OK(bc_shift_compute(&s, db, &r, &err), &err);
	const bc_shift_summary *u = bc_shift_summary_get(s);
	CHECK_INT(u->n_selected, 9);
	CHECK_INT(u->n_no_coordinates, 2);
	CHECK_INT(u->n_outside_region, 5);
	CHECK_INT(u->n_used, 2);
	bc_shift_free(s);
	bc_chart_free(chart);
	bc_db_close(db);
}

TEST(shift_empty_selection_is_a_data_error)
{
	bc_db *db = stage_db();
	bc_chart *chart = small_chart();
	CHECK(db && chart);
	bc_err err = {0};
	bc_shift *s = NULL;
	bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
	o.chart = chart;
	o.group = "sponges";
	CHECK_INT(bc_shift_compute(&s, db, &o, &err), BC_EINVALID);
	CHECK(s == NULL);
	CHECK(strstr(err.msg, "no occurrences match the selection (group sponges)") != NULL);
	bc_shift_options p = BC_SHIFT_OPTIONS_INIT;
	p.chart = chart;
	p.taxon = "Cus eus";
	p.span = BC_SPAN_MAX;
	p.span_max_myr = 0.5;
	CHECK_INT(bc_shift_compute(&s, db, &p, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "none is left to count: 1 no palaeodepth, 1 age range longer than --span max") != NULL);
	bc_chart_free(chart);
	bc_db_close(db);
}

/* Wiring of the statistics to the counts. Expected values:
 * check-values.md §1 (Wilson 81/263: Newcombe 1998a, statsmodels) and §2
 * (56/70 - 48/80: Newcombe 1998b method 10, statsmodels). */
TEST(shift_statistics_wired_to_bins)
{
	bc_db *db = new_db();
	CHECK(db);
	/* 60-55 Ma: 48 deep of 80; 55-50 Ma: 56 deep of 70; 50-45 Ma: 81 deep of 263 */
	CHECK(add_many(db, 48, 58, 57, 500) == 0 && add_many(db, 32, 58, 57, 50) == 0);
	CHECK(add_many(db, 56, 53, 52, 500) == 0 && add_many(db, 14, 53, 52, 50) == 0);
	CHECK(add_many(db, 81, 48, 47, 500) == 0 && add_many(db, 182, 48, 47, 50) == 0);
	bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
	bc_err err = {0};
	bc_shift *s = NULL;
	CHECK_OK(bc_shift_option_set(&o, "bins", "5", &err), &err);
	CHECK_OK(bc_shift_compute(&s, db, &o, &err), &err);
	CHECK_INT(bc_shift_bin_count(s), 3);
	const bc_shift_bin *b = bc_shift_bin_at(s, 1);
	CHECK_STR(b->name, "55-50 Ma");
	CHECK_NEAR(b->diff, 0.2, 1e-12);
	CHECK_NEAR(b->diff_lo, 0.0524314724, 1e-9);
	CHECK_NEAR(b->diff_hi, 0.3338726540, 1e-9);
	b = bc_shift_bin_at(s, 2);
	CHECK_NEAR(b->frac_deep_lo, 0.2552885199, 1e-9);
	CHECK_NEAR(b->frac_deep_hi, 0.3662095770, 1e-9);
	bc_shift_free(s);
	bc_db_close(db);
}

TEST(shift_zones_columns_and_fixed_columns_use_first_boundary)
{
	bc_db *db = stage_db();
	bc_chart *chart = small_chart();
	CHECK(db && chart);
	bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
	bc_err err = {0};
	bc_shift *s = NULL;
	o.chart = chart;
	o.group = "crinoids";
	CHECK_OK(bc_shift_option_set(&o, "zones", "200,600", &err), &err);
	CHECK_OK(bc_shift_compute(&s, db, &o, &err), &err);
	const bc_shift_bin *b = bc_shift_bin_at(s, 2); /* Danian: [30,30], [500,500], [800,900] */
	CHECK(b->n_zone != NULL);
	CHECK_NEAR(b->n_zone[0], 1, 0);
	CHECK_NEAR(b->n_zone[1], 1, 0);
	CHECK_NEAR(b->n_zone[2], 1, 0);
	CHECK_NEAR(b->n_deep, 2, 0);
	b = bc_shift_bin_at(s, 0); /* Campanian: [200,400] straddles 600? no: zone 2 is 200-600 */
	CHECK_NEAR(b->n_zone[1], 1, 0);
	CHECK_NEAR(b->n_zone_straddle, 1, 0); /* [150,250] */
	bc_shift_free(s);
	bc_chart_free(chart);
	bc_db_close(db);
}

TEST(shift_bins_file)
{
	char path[512];
	snprintf(path, sizeof path, "%s/bins.tsv", test_tmpdir());
	FILE *f = fopen(path, "w");
	CHECK(f);
	fputs("name\tolder\tyounger\n# a comment\nlate\t70\t60\nearly\t80\t70\n", f);
	fclose(f);
	bc_shift__bin *bins = NULL;
	size_t n = 0;
	bc_err err = {0};
	CHECK_OK(bc_shift__bins_read(&bins, &n, path, &err), &err);
	CHECK_INT(n, 2);
	CHECK_STR(bins[0].name, "early");
	CHECK_NEAR(bins[1].younger, 60, 0);
	bc_shift__bins_free(bins, n);
	f = fopen(path, "w");
	CHECK(f);
	fputs("a,80,70\nb,75,x\n", f);
	fclose(f);
	CHECK_INT(bc_shift__bins_read(&bins, &n, path, &err), BC_EINVALID);
	char want[700];
	snprintf(want, sizeof want, "%s:2: younger bound: 'x' is not a number of Ma", path);
	CHECK_STR(err.msg, want);
	f = fopen(path, "w");
	CHECK(f);
	fputs("a,80,70\nb,75,65\n", f);
	fclose(f);
	CHECK_INT(bc_shift__bins_read(&bins, &n, path, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "overlap") != NULL);
}

TEST(shift_option_errors)
{
	bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
	bc_err err = {0};
	CHECK_INT(bc_shift_option_set(&o, "span", "most", &err), BC_EUSAGE);
	CHECK_STR(err.msg, "--span: 'most' is not majority, all, split or max:MYR");
	CHECK_INT(bc_shift_option_set(&o, "zones", "1000,200", &err), BC_EUSAGE);
	CHECK_INT(bc_shift_option_set(&o, "level", "95", &err), BC_EUSAGE);
	CHECK_INT(bc_shift_option_set(&o, "region", "10,60,20,50", &err), BC_EUSAGE);
	CHECK_INT(bc_shift_option_set(&o, "bins", "-5", &err), BC_EUSAGE);
	CHECK_OK(bc_shift_option_set(&o, "span", "max:12.5", &err), &err);
	CHECK_INT(o.span, BC_SPAN_MAX);
	CHECK_NEAR(o.span_max_myr, 12.5, 0);
	CHECK_OK(bc_shift_option_set(&o, "bins", "series", &err), &err);
	CHECK_INT(o.bins, BC_BINS_EPOCH);
	CHECK_NEAR(o.cell_km, 100, 0);
	CHECK_INT(bc_shift_option_set(&o, "cell-km", "0", &err), BC_EUSAGE);
	CHECK_STR(err.msg, "--cell-km: '0' is not a cell size in km between 0 and 20000, e.g. 100");
	CHECK_OK(bc_shift_option_set(&o, "cell-km", "250", &err), &err);
	CHECK_NEAR(o.cell_km, 250, 0);
}

/* Spatial coverage per bin on hand-checked localities. Campanian: three
 * localities on the Greenwich meridian at 0, 1 and 2 degrees N (one of them
 * twice) and one without coordinates. GeographicLib's GeodSolve -i gives
 * 110574.388558 m (0-1 N) and 110575.064814 m (1-2 N), so the tree is
 * 221.149453 km; cs2cs EPSG:4326 EPSG:6933 puts them at y = 0, 127566.985
 * and 255096.152 m, so three 100 km cells and one 1000 km cell.
 * Maastrichtian: two localities at the same point: one cell, no length,
 * range 0. Danian: only a locality without coordinates. */
static bc_db *coverage_db(void)
{
	bc_db *db = new_db();
	if (!db)
		return NULL;
	if (sqlite3_exec(bc_db__sqlite(db),
		"INSERT INTO localities(fid, name, longitude, latitude) VALUES (10, 'E0', 0, 0), (11, 'E1', 0, 1), (12, 'E2', 0, 2),"
		" (13, 'Unmapped', NULL, NULL), (14, 'Twin A', 10, 20), (15, 'Twin B', 10, 20);",
		NULL, NULL, NULL) != SQLITE_OK) {
		bc_db_close(db);
		return NULL;
	}
	static const struct { double o, y; int loc; } occ[] = {
		{80, 79, 10}, {80, 79, 10}, {78, 77, 11}, {76, 75, 12}, {75, 74, 13},
		{70, 69, 14}, {69, 68, 15}, {64, 63, 3},
	};
	for (size_t i = 0; i < sizeof occ / sizeof occ[0]; i++)
		if (add(db, "Aus bus", "crinoids", occ[i].o, occ[i].y, 20, 50, "articulated", "R1", occ[i].loc)) {
			bc_db_close(db);
			return NULL;
		}
	return db;
}

TEST(shift_spatial_coverage_per_bin)
{
	bc_db *db = coverage_db();
	bc_chart *chart = small_chart();
	bc_shift *s = NULL, *s2 = NULL;
	bc_err err = {0};
	bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
	o.chart = chart;
	int rc = db && chart ? bc_shift_compute(&s, db, &o, &err) : -1;
	if (rc == BC_OK) {
		rc = bc_shift_option_set(&o, "cell-km", "1000", &err);
		if (rc == BC_OK)
			rc = bc_shift_compute(&s2, db, &o, &err);
	}
	bc_db_close(db);
	bc_chart_free(chart);
	if (rc) {
		bc_shift_free(s);
		bc_shift_free(s2);
	}
	CHECK_OK(rc, &err);
	const bc_shift_bin *c = bc_shift_bin_at(s, 0), *m = bc_shift_bin_at(s, 1), *d = bc_shift_bin_at(s, 2);
	const bc_shift_bin *c2 = bc_shift_bin_at(s2, 0);
	size_t c_loc = c->n_localities, c_unloc = c->n_unlocated, c_cells = c->n_cells, c2_cells = c2->n_cells;
	double c_lat = c->lat_range_deg, c_mst = c->mst_km, c2_mst = c2->mst_km;
	size_t m_loc = m->n_localities, m_cells = m->n_cells, d_cells = d->n_cells, d_unloc = d->n_unlocated;
	double m_lat = m->lat_range_deg, m_mst = m->mst_km, d_lat = d->lat_range_deg, d_mst = d->mst_km;
	size_t skipped = bc_shift_summary_get(s)->n_bins_mst_skipped;
	bc_shift_free(s);
	bc_shift_free(s2);
	CHECK_INT(c_loc, 4);
	CHECK_INT(c_unloc, 1);
	CHECK_INT(c_cells, 3);
	CHECK_INT(c2_cells, 1);
	CHECK_NEAR(c_lat, 2.0, 1e-12);
	CHECK_NEAR(c_mst, 221.149453372, 1e-6);
	CHECK_NEAR(c2_mst, c_mst, 0); /* the cell size changes only n_cells */
	CHECK_INT(m_loc, 2);
	CHECK_INT(m_cells, 1);
	CHECK_NEAR(m_lat, 0.0, 0);
	CHECK_NEAR(m_mst, 0.0, 0);
	CHECK_INT(d_cells, 0);
	CHECK_INT(d_unloc, 1);
	CHECK(isnan(d_lat));
	CHECK_NEAR(d_mst, 0.0, 0);
	CHECK_INT(skipped, 0);
}

/* More distinct points than BC_SHIFT_MST_MAX_POINTS in a bin: no tree
 * (NaN) and the summary counts the bin; cells and latitudes still come. */
TEST(shift_spatial_coverage_tree_cap)
{
	bc_db *db = new_db();
	bc_chart *chart = small_chart();
	bc_shift *s = NULL;
	bc_err err = {0};
	char sql[700];
	snprintf(sql, sizeof sql,
		"WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < %d)"
		" INSERT INTO localities(fid, name, longitude, latitude) SELECT 100 + i, 'P' || i, -15 + i * 0.005, 0 FROM c;"
		"WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < %d)"
		" INSERT INTO occurrences(batch_id, line, scientific_name, taxon_group, older_ma, younger_ma, age_status, timescale,"
		" min_depth_m, max_depth_m, locality_id) SELECT 1, i, 'Aus bus', 'crinoids', 80, 79, 'numeric', 'test-chart', 10, 20, 100 + i FROM c;",
		BC_SHIFT_MST_MAX_POINTS + 1, BC_SHIFT_MST_MAX_POINTS + 1);
	int rc = db && chart && sqlite3_exec(bc_db__sqlite(db), sql, NULL, NULL, NULL) == SQLITE_OK ? BC_OK : -1;
	bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
	o.chart = chart;
	if (rc == BC_OK)
		rc = bc_shift_compute(&s, db, &o, &err);
	bc_db_close(db);
	bc_chart_free(chart);
	CHECK_OK(rc, &err);
	const bc_shift_bin *b = bc_shift_bin_at(s, 0);
	int nan_tree = isnan(b->mst_km), cells = b->n_cells > 0, lat = b->lat_range_deg == 0;
	size_t skipped = bc_shift_summary_get(s)->n_bins_mst_skipped, nloc = b->n_localities;
	bc_shift_free(s);
	CHECK(nan_tree);
	CHECK(cells);
	CHECK(lat);
	CHECK_INT(nloc, BC_SHIFT_MST_MAX_POINTS + 1);
	CHECK_INT(skipped, 1);
}
