/*
 * test_ranges.c - per-taxon depth ranges: the range-extension factor, the
 * relation rule at its edges, and a hand-checked data set
 * (tests/fixtures/ranges/hand.sql) computed field by field.
 */
#include "test.h"
#include "db.h"
#include "internal.h"
#include "ranges.h"

#include <stdlib.h>

static bc_db *hand_db(void)
{
	char path[512];
	char *sql = NULL;
	size_t len;
	bc_db *db = NULL;
	snprintf(path, sizeof path, "%s/r.gpkg", test_tmpdir());
	remove(path);
	if (bc_db_create(&db, path, NULL) || bc__read_file(test_path("fixtures/ranges/hand.sql"), &sql, &len, NULL)) {
		bc_db_close(db);
		return NULL;
	}
	if (sqlite3_exec(bc_db__sqlite(db), sql, NULL, NULL, NULL) != SQLITE_OK) {
		bc_db_close(db);
		db = NULL;
	}
	free(sql);
	return db;
}

static const bc_range_taxon *find(const bc_ranges *r, const char *name)
{
	for (size_t i = 0; i < bc_ranges_count(r); i++)
		if (strcmp(bc_ranges_taxon_at(r, i)->taxon, name) == 0)
			return bc_ranges_taxon_at(r, i);
	return NULL;
}

/* r = (1 - C)^(-1/(H-1)) - 1 (Strauss & Sadler 1989; Marshall 1990, eq. 1),
 * values worked by hand: H = 2, C = 0.95: 1/0.05 - 1 = 19; H = 3, C = 0.5:
 * sqrt(2) - 1; H = 10, C = 0.95: 20^(1/9) - 1 = 0.394951 (e^(ln 20 / 9) - 1). */
TEST(ranges_extension_factor)
{
	CHECK_NEAR(bc_ranges__extension(2, 0.95), 19.0, 1e-12);
	CHECK_NEAR(bc_ranges__extension(3, 0.5), sqrt(2.0) - 1.0, 1e-12);
	CHECK_NEAR(bc_ranges__extension(10, 0.95), pow(20.0, 1.0 / 9.0) - 1.0, 1e-12);
	CHECK_NEAR(bc_ranges__extension(10, 0.95), 0.3949508, 1e-6);
	CHECK(isnan(bc_ranges__extension(1, 0.95)));
	CHECK(isnan(bc_ranges__extension(0, 0.95)));
	CHECK(isnan(bc_ranges__extension(5, 1.0)));
	/* more horizons, shorter extension */
	CHECK(bc_ranges__extension(20, 0.95) < bc_ranges__extension(10, 0.95));
}

TEST(ranges_relation_edges)
{
	/* shallow ends in the Campanian, deep begins in the Maastrichtian: bounds touch only */
	CHECK_INT(bc_ranges__relation(72.2, 83.6, 66.0, 72.2, 61.66, 66.0), BC_RANGE_ENDS_BEFORE);
	/* shallow ends inside the deep range */
	CHECK_INT(bc_ranges__relation(81, 82, 89, 90, 59, 60), BC_RANGE_OVERLAPS);
	/* shallow ends after the deep one */
	CHECK_INT(bc_ranges__relation(59, 60, 89, 90, 89, 90), BC_RANGE_OUTLASTS);
	/* long age ranges allow all three */
	CHECK_INT(bc_ranges__relation(70, 80, 65, 75, 65, 75), BC_RANGE_ENDS_BEFORE | BC_RANGE_OVERLAPS | BC_RANGE_OUTLASTS);
	/* identical point ages: the ends coincide */
	CHECK_INT(bc_ranges__relation(70, 70, 70, 70, 70, 70), BC_RANGE_OVERLAPS);
}

/* The hand-checked set (doc/ranges.md, "A worked example"). */
TEST(ranges_hand_checked_set)
{
	bc_err err = {0};
	bc_db *db = hand_db();
	CHECK(db);
	bc_ranges_options o = BC_RANGES_OPTIONS_INIT;
	o.sel.group = "crinoids";
	bc_ranges *r = NULL;
	int rc = bc_ranges_compute(&r, db, &o, &err);
	bc_db_close(db);
	CHECK_OK(rc, &err);
	const bc_ranges_summary *u = bc_ranges_summary_get(r);
	CHECK_INT(u->n_selected, 28);
	CHECK_INT(u->n_no_name, 1);
	CHECK_INT(u->n_no_depth, 1);
	CHECK_INT(u->n_used, 26);
	CHECK_INT(bc_ranges_count(r), 6);
	CHECK_STR(bc_ranges_taxon_at(r, 0)->taxon, "Alphacrinus"); /* name order */

	/* Alphacrinus: shallow horizons at midpoints 99.5, 97.5 ... 81.5 (H = 10,
	 * R = 18); r = 20^(1/9) - 1; last limit 81.5 - 18 r = 74.3909 Ma. */
	const bc_range_taxon *a = find(r, "Alphacrinus");
	CHECK(a);
	CHECK_INT(a->n, 15);
	CHECK_INT(a->n_straddle, 1);
	CHECK_INT(a->shallow.n, 10);
	CHECK_INT(a->shallow.n_horizons, 10);
	CHECK_INT(a->shallow.n_references, 3);
	CHECK_INT(a->shallow.n_localities, 2);
	CHECK_NEAR(a->shallow.first_older_ma, 100, 1e-12);
	CHECK_NEAR(a->shallow.first_younger_ma, 99, 1e-12);
	CHECK_NEAR(a->shallow.last_older_ma, 82, 1e-12);
	CHECK_NEAR(a->shallow.last_younger_ma, 81, 1e-12);
	CHECK_STR(a->shallow.first_interval, "Cenomanian");
	CHECK_STR(a->shallow.last_interval, "Campanian");
	double rr = pow(20.0, 1.0 / 9.0) - 1.0;
	CHECK_NEAR(a->shallow.ci_extension, rr, 1e-12);
	CHECK_NEAR(a->shallow.last_ci_ma, 81.5 - 18 * rr, 1e-9);
	CHECK_NEAR(a->shallow.last_ci_ma, 74.39088571, 1e-6);
	CHECK_NEAR(a->shallow.first_ci_ma, 99.5 + 18 * rr, 1e-9);
	/* deep: 90-89, 80-79, 70-69 (a single depth of 250 m) and 60-59 (min 200, no max) */
	CHECK_INT(a->deep.n, 4);
	CHECK_INT(a->deep.n_references, 1);
	CHECK_INT(a->deep.n_localities, 1);
	CHECK_NEAR(a->deep.last_older_ma, 60, 1e-12);
	CHECK_INT(a->relation, BC_RANGE_OVERLAPS);
	CHECK_INT(a->retreat_supported, 1); /* 74.39 >= 60 */

	/* Betacrinus: two shallow horizons (r = 19, R = 2): limit 97.5 - 38 = 59.5,
	 * younger than the deep range's end (70-69): the early end is weak. */
	const bc_range_taxon *b = find(r, "Betacrinus");
	CHECK(b);
	CHECK_INT(b->relation, BC_RANGE_ENDS_BEFORE);
	CHECK_NEAR(b->shallow.last_ci_ma, 59.5, 1e-9);
	CHECK_NEAR(b->shallow.first_ci_ma, 137.5, 1e-9);
	CHECK_INT(b->retreat_supported, 0);

	const bc_range_taxon *g = find(r, "Gammacrinus");
	CHECK(g);
	CHECK_INT(g->shallow.n, 1);
	CHECK_INT(g->deep.n, 0);
	CHECK_INT(g->relation, 0);
	CHECK_INT(g->retreat_supported, -1);
	CHECK_STR(g->shallow.first_interval, "Campanian");
	CHECK(isnan(g->shallow.last_ci_ma));
	CHECK(isnan(g->deep.first_older_ma));

	const bc_range_taxon *d = find(r, "Deltacrinus");
	CHECK(d);
	CHECK_INT(d->relation, BC_RANGE_ENDS_BEFORE | BC_RANGE_OVERLAPS | BC_RANGE_OUTLASTS);
	CHECK_INT(d->retreat_supported, -1);
	CHECK_STR(d->shallow.last_interval, "Campanian-Maastrichtian");

	const bc_range_taxon *e = find(r, "Epsiloncrinus");
	CHECK(e);
	CHECK_INT(e->relation, BC_RANGE_OUTLASTS);
	CHECK_STR(e->shallow.first_interval, "Turonian-Coniacian");
	CHECK_NEAR(e->shallow.last_ci_ma, 0.0, 0); /* 59.5 - 19 * 30 < 0: held at the present */
	/* 89.5 + 19 * 30 = 659.5 Ma reaches beyond the Phanerozoic, the eon of
	 * the oldest horizon: held at its base, 538.8 Ma in ICS 2024-12 */
	CHECK_NEAR(e->shallow.first_ci_ma, 538.8, 1e-9);
	CHECK_INT(e->shallow.ci_capped, BC_RANGE_CAPPED_FIRST | BC_RANGE_CAPPED_LAST);
	CHECK_INT(b->shallow.ci_capped, 0);
	CHECK_INT(a->deep.ci_capped, 0);
	CHECK(!b->has_draws && isnan(b->p_ends_before));

	const bc_range_taxon *z = find(r, "Zetacrinus"); /* genus from 'Zetacrinus sp.' */
	CHECK(z);
	CHECK_INT(z->deep.n, 1);
	CHECK_INT(z->deep.n_localities, 0);

	CHECK_INT(u->n_shallow_only, 1);
	CHECK_INT(u->n_deep_only, 1);
	CHECK_INT(u->n_ends_before, 1);
	CHECK_INT(u->n_overlaps, 1);
	CHECK_INT(u->n_outlasts, 1);
	CHECK_INT(u->n_unresolved, 1);
	CHECK_INT(u->n_retreat_supported, 1);
	CHECK_INT(u->n_retreat_weak, 1);
	bc_ranges_free(r);
}

/* The cap on a first-occurrence limit: the older bound of the eon holding
 * the oldest horizon (ICS 2024-12: Phanerozoic 538.8 Ma, Proterozoic
 * 2500 Ma), an older bound belonging to the interval below it; beyond the
 * chart, none. */
TEST(ranges_first_cap)
{
	bc_err err = {0};
	bc_chart *c = NULL;
	CHECK_OK(bc_chart_builtin(&c, "ics-2024-12", &err), &err);
	double a = bc_ranges__first_cap(c, 89.5), b = bc_ranges__first_cap(c, 538.8), d = bc_ranges__first_cap(c, 600);
	double e = bc_ranges__first_cap(c, 1e6), f = bc_ranges__first_cap(NULL, 89.5);
	bc_chart_free(c);
	CHECK_NEAR(a, 538.8, 1e-9);
	CHECK_NEAR(b, 538.8, 1e-9);
	CHECK_NEAR(d, 2500, 1e-9);
	CHECK(isinf(e) && isinf(f));
}

static bc_ranges *drawn(bc_db *db, const char *draws, const char *seed, const char *threads, const char *resample, bc_err *err)
{
	bc_ranges_options o = BC_RANGES_OPTIONS_INIT;
	bc_ranges *r = NULL;
	o.sel.group = "crinoids";
	if (bc_ranges_option_set(&o, "draws", draws, err) || bc_ranges_option_set(&o, "seed", seed, err) ||
	    bc_ranges_option_set(&o, "threads", threads, err) || bc_ranges_option_set(&o, "resample", resample, err) ||
	    bc_ranges_compute(&r, db, &o, err))
		return NULL;
	return r;
}

/* How often each relation occurs when ages are drawn within their ranges.
 * Deltacrinus (hand-derived): the last shallow age s ~ U(70, 80) and the one
 * deep age t ~ U(65, 75); outlasts when s < t: P = integral over t in
 * (70, 75) of (t - 70)/10 dt/10 = 12.5/100 = 0.125; ends before otherwise
 * (s = t has probability 0). The other taxa have one relation whatever the
 * draw. Binomial tolerance: 5 standard errors at 20000 draws. */
TEST(ranges_draws_relation_shares)
{
	bc_err err = {0};
	bc_db *db = hand_db();
	CHECK(db);
	bc_ranges *r = drawn(db, "20000", "7", "2", "age,depth", &err);
	bc_ranges *r1 = drawn(db, "20000", "7", "1", "age,depth", &err);
	bc_ranges *r2 = drawn(db, "20000", "8", "3", "age,depth", &err);
	bc_ranges *ra = drawn(db, "100", "7", "0", "age", &err);
	bc_db_close(db);
	CHECK_MSG(r && r1 && r2 && ra, "%s", err.msg);
	const bc_range_taxon *d = find(r, "Deltacrinus");
	double se = sqrt(0.125 * 0.875 / 20000);
	int ok = d->has_draws && fabs(d->p_outlasts - 0.125) < 5 * se && fabs(d->p_ends_before - 0.875) < 5 * se &&
		 d->p_overlaps == 0 && d->draws_both == 1;
	double pd = d->p_outlasts, p1 = find(r1, "Deltacrinus")->p_outlasts, p2 = find(r2, "Deltacrinus")->p_outlasts;
	int certain = find(r, "Alphacrinus")->p_overlaps == 1 && find(r, "Betacrinus")->p_ends_before == 1 &&
		      find(r, "Epsiloncrinus")->p_outlasts == 1;
	const bc_range_taxon *g = find(r, "Gammacrinus");
	int gamma = g->has_draws && g->draws_both == 0 && isnan(g->p_ends_before);
	const bc_ranges_summary *u = bc_ranges_summary_get(r), *ua = bc_ranges_summary_get(ra);
	size_t n_draws = u->n_draws, depths = u->n_depth_drawn, depths_a = ua->n_depth_drawn, ages = u->n_age_drawn;
	bc_ranges_free(r);
	bc_ranges_free(r1);
	bc_ranges_free(r2);
	bc_ranges_free(ra);
	CHECK_MSG(ok, "Deltacrinus %g %g %g", pd, 1 - pd, se);
	CHECK(certain);
	CHECK(gamma);
	CHECK(pd == p1); /* the same seed on 2 and 1 threads */
	CHECK(pd != p2); /* another seed */
	CHECK_INT(n_draws, 20000);
	CHECK_INT(depths, 1);   /* Alphacrinus' 150-250 m occurrence */
	CHECK_INT(depths_a, 0); /* --resample age */
	CHECK_INT(ages, 26);    /* every used age range is wider than a point */
}

TEST(ranges_draws_options_refused)
{
	bc_err err = {0};
	bc_db *db = hand_db();
	CHECK(db);
	bc_ranges_options o = BC_RANGES_OPTIONS_INIT;
	bc_ranges *r = NULL;
	o.sel.draws = 10;
	o.sel.bootstrap = 1;
	int rc1 = bc_ranges_compute(&r, db, &o, &err);
	char m1[sizeof err.msg];
	snprintf(m1, sizeof m1, "%s", err.msg);
	o.sel.bootstrap = 0;
	o.sel.resample = 0;
	int rc2 = bc_ranges_compute(&r, db, &o, &err);
	bc_db_close(db);
	CHECK_INT(rc1, BC_EUSAGE);
	CHECK_STR(m1, "--bootstrap: a shift table option; ranges take --draws, --seed, --threads and --resample only");
	CHECK_INT(rc2, BC_EUSAGE);
	CHECK(r == NULL);
}

TEST(ranges_rank_zones_and_output)
{
	bc_err err = {0};
	bc_db *db = hand_db();
	CHECK(db);
	bc_ranges_options o = BC_RANGES_OPTIONS_INIT;
	CHECK_OK(bc_ranges_option_set(&o, "rank", "scientificName", &err), &err);
	CHECK_OK(bc_ranges_option_set(&o, "zones", "200,1000", &err), &err);
	CHECK_OK(bc_ranges_option_set(&o, "group", "crinoids", &err), &err);
	bc_ranges *r = NULL;
	int rc = bc_ranges_compute(&r, db, &o, &err);
	bc_db_close(db);
	CHECK_OK(rc, &err);
	/* 'Alphacrinus secundus' is its own name at this rank; the nameless row stays out */
	const bc_range_taxon *s = find(r, "Alphacrinus secundus");
	CHECK(s);
	CHECK_INT(s->deep.n, 1);
	CHECK(s->zones);
	CHECK_INT(s->zones[1].n, 1);
	const bc_range_taxon *z = find(r, "Zetacrinus sp.");
	CHECK(z);
	CHECK_INT(z->deep.n, 1);     /* 900-1200 m: deep at the first boundary ... */
	CHECK_INT(z->zones[2].n, 0); /* ... but it crosses 1000 m: in none of the three zones */
	char path[600];
	snprintf(path, sizeof path, "%s/r.csv", test_tmpdir());
	FILE *f = fopen(path, "w");
	CHECK(f);
	rc = bc_ranges_write(r, f, BC_FORMAT_CSV, &err);
	fclose(f);
	bc_ranges_free(r);
	CHECK_OK(rc, &err);
	char *text = NULL;
	size_t len;
	CHECK_OK(bc__read_file(path, &text, &len, &err), &err);
	static const char want[] = "taxon,n,n_straddle,n_references,n_localities,relation,retreat_supported,shallow_n,";
	int head = strncmp(text, want, sizeof want - 1) == 0;
	int zone3 = strstr(text, ",zone3_n,") != NULL;
	int stamp = strstr(text, "# stamp.ci_method: Strauss & Sadler (1989) / Marshall (1990)") != NULL;
	free(text);
	CHECK(head);
	CHECK(zone3);
	CHECK(stamp);
}

TEST(ranges_errors)
{
	bc_err err = {0};
	bc_ranges_options o = BC_RANGES_OPTIONS_INIT;
	CHECK_INT(bc_ranges_option_set(&o, "rank", "class", &err), BC_EUSAGE);
	CHECK_STR(err.msg, "--rank: 'class' is not genus, family, order or scientificName");
	CHECK_INT(bc_ranges_option_set(&o, "bins", "stage", &err), BC_EUSAGE);
	CHECK_STR(err.msg, "--bins: ranges are not binned; every occurrence keeps its own age range");
	bc_db *db = hand_db();
	CHECK(db);
	bc_ranges *r = NULL;
	o.sel.group = "corals";
	CHECK_INT(bc_ranges_compute(&r, db, &o, &err), BC_EINVALID);
	CHECK(r == NULL);
	CHECK(strstr(err.msg, "no occurrences match the selection (group corals)") != NULL);
	/* a family rank with no family column filled: nothing left to compare */
	o.sel.group = "crinoids";
	o.rank = BC_RANGES_FAMILY;
	CHECK_INT(bc_ranges_compute(&r, db, &o, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "but none is left to compare: 28 no name at the rank") != NULL);
	bc_db_close(db);
}

/* Every allocation failure is reported as BC_ENOMEM and leaks nothing
 * (the sanitizer build checks the leaks). */
TEST(ranges_allocation_failures)
{
	bc_db *db = hand_db();
	CHECK(db);
	bc_ranges_options o = BC_RANGES_OPTIONS_INIT;
	o.sel.draws = 20; /* the draws' allocations too */
	int saw_oom = 0;
	for (long k = 1; k < 400; k++) {
		bc_err err = {0};
		bc_ranges *r = NULL;
		bc__alloc_fail_after(k);
		int rc = bc_ranges_compute(&r, db, &o, &err);
		bc__alloc_fail_after(0);
		if (rc == BC_OK) {
			bc_ranges_free(r);
			break;
		}
		CHECK_MSG(rc == BC_ENOMEM || rc == BC_EDB, "allocation %ld: rc %d: %s", k, rc, err.msg);
		saw_oom |= rc == BC_ENOMEM;
	}
	bc_db_close(db);
	CHECK(saw_oom);
}
