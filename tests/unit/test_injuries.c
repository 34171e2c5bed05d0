/*
 * test_injuries.c - importing injury samples (validation, quarantine,
 * batches, durations) and the grouped encounter report built on them.
 */
#include "test.h"
#include "test_sql.h"
#include "db.h"

#include <stdlib.h>
#include <unistd.h>

static const char *write_file(const char *dir, const char *name, const char *text)
{
	static char path[8][512];
	static int k;
	char *p = path[k++ % 8];
	snprintf(p, sizeof path[0], "%s/%s", dir, name);
	FILE *f = fopen(p, "w");
	if (!f)
		return NULL;
	fputs(text, f);
	fclose(f);
	return p;
}

static char query_buf[2048];
static const char *query_text(bc_db *db, const char *sql)
{
	sqlite3_stmt *st = NULL;
	snprintf(query_buf, sizeof query_buf, "(none)");
	if (sqlite3_prepare_v2(bc_db__sqlite(db), sql, -1, &st, NULL) == SQLITE_OK && sqlite3_step(st) == SQLITE_ROW)
		snprintf(query_buf, sizeof query_buf, "%s", (const char *)sqlite3_column_text(st, 0));
	sqlite3_finalize(st);
	return query_buf;
}

typedef struct { int n; char last[1024]; } problems;
static void on_problem(void *ctx, const char *msg)
{
	problems *p = ctx;
	p->n++;
	snprintf(p->last, sizeof p->last, "%s", msg);
}

static const char GOOD_AND_BAD[] =
	"locality,minimumDepthInMeters,maximumDepthInMeters,age,scientificName,individualsExamined,individualsRegenerating,armsExamined,armsRegenerating,regenerationDays,regenerateLengthMm,regenerationRateMmPerDay,recordedBy,stationNote\n"
	"Site A,40,60,Recent,Somnicrinus testus,50,10,500,14,80-120,,,Observer One,calm\n"      /* 2 stored */
	"Site B,300,,Recent,Somnicrinus testus,40,4,,,,20,0.1-0.25,Observer Two,\n"              /* 3 stored: 80-200 days */
	"Site C,1200,1300,Recent,Somnicrinus testus,,,10,2,100,,,Observer Two,\n"                /* 4 one individual */
	"Site D,50,40,Recent,Somnicrinus testus,10,1,,,100,,,,\n"                                /* 5 max < min */
	"Site E,50,60,Recent,Somnicrinus testus,10,11,,,100,,,,\n"                               /* 6 regen > examined */
	"Site F,50,60,Recent,Somnicrinus testus,10,1,,,,,,,\n"                                   /* 7 no duration */
	"Site G,50,60,Recent,Somnicrinus testus,10,1,,,100,20,0.2,,\n"                           /* 8 two durations */
	",50,60,Recent,Somnicrinus testus,10,1,,,100,,,,\n"                                      /* 9 no site */
	"Site H,50,60,,Somnicrinus testus,10,1,,,100,,,,\n"                                      /* 10 no age */
	"Site I,50,60,Recent,Somnicrinus testus,10,2,30,1,100,,,,\n"                             /* 11 arms < individuals */
	"Site J,50,60,Recent,Somnicrinus testus,10,x,,,100,,,,\n"                                /* 12 not a count */
	"Site K,50,60,Recent,Somnicrinus testus,,,10,0,100,,,,\n";                               /* 13 stored: intact individual */

TEST(injuries_import_validates_and_quarantines)
{
	bc_err err = {0};
	bc_db *db = NULL;
	const char *dir = test_tmpdir();
	char dbp[512];
	snprintf(dbp, sizeof dbp, "%s/i.gpkg", dir);
	const char *csv = write_file(dir, "s.csv", GOOD_AND_BAD);
	CHECK(csv != NULL);
	CHECK_OK(bc_db_create(&db, dbp, &err), &err);
	problems pr = {0};
	bc_injuries_import_options o = BC_INJURIES_IMPORT_OPTIONS_INIT;
	o.on_problem = on_problem;
	o.ctx = &pr;
	bc_injuries_import_result res;
	int rc = bc_injuries_import(&res, db, csv, &o, &err);
	if (rc) {
		bc_db_close(db);
		CHECK_OK(rc, &err);
	}
	CHECK_INT(res.n_read, 12);
	CHECK_INT(res.n_stored, 4);
	CHECK_INT(res.n_quarantined, 8);
	CHECK_INT(pr.n, 8);
	CHECK_INT(res.n_individuals, 50 + 40 + 1 + 1);
	CHECK_INT(res.n_regenerating, 10 + 4 + 1 + 0);
	CHECK_INT(test_query_num(db, "SELECT count(*) FROM import_batches WHERE kind = 'injuries' AND n_read = 12 AND n_stored = 4 AND n_quarantined = 8"), 1);
	CHECK_INT(test_query_num(db, "SELECT count(*) FROM injury_samples"), 4);
	/* Quarantine rows carry file, line, field, reason and the raw row. */
	CHECK_INT(test_query_num(db, "SELECT count(*) FROM quarantine"), 8);
	CHECK_STR(query_text(db, "SELECT field || ': ' || reason FROM quarantine WHERE line = 5"),
		  "maximumDepthInMeters: maximum depth 40 m is shallower than the minimum 50 m");
	CHECK_STR(query_text(db, "SELECT field FROM quarantine WHERE line = 6"), "individualsRegenerating");
	CHECK_STR(query_text(db, "SELECT field FROM quarantine WHERE line = 7"), "regenerationDays");
	CHECK_STR(query_text(db, "SELECT field FROM quarantine WHERE line = 8"), "regenerationDays");
	CHECK_STR(query_text(db, "SELECT field FROM quarantine WHERE line = 9"), "locality");
	CHECK_STR(query_text(db, "SELECT field FROM quarantine WHERE line = 10"), "age");
	CHECK_STR(query_text(db, "SELECT field FROM quarantine WHERE line = 11"), "armsRegenerating");
	CHECK_STR(query_text(db, "SELECT reason FROM quarantine WHERE line = 12"), "'x' is not a whole number of 0 or more");
	CHECK_STR(query_text(db, "SELECT json_extract(raw_row, '$.locality') FROM quarantine WHERE line = 12"), "Site J");
	CHECK(strstr(pr.last, "s.csv:12: individualsRegenerating: 'x' is not a whole number") != NULL);
	/* Stored values: single depth, duration from length / rate, one individual, extra columns. */
	CHECK_NEAR(test_query_num(db, "SELECT max_depth_m FROM injury_samples WHERE site = 'Site B'"), 300, 0);
	CHECK_NEAR(test_query_num(db, "SELECT duration_min_days FROM injury_samples WHERE site = 'Site B'"), 80, 1e-12);
	CHECK_NEAR(test_query_num(db, "SELECT duration_max_days FROM injury_samples WHERE site = 'Site B'"), 200, 1e-12);
	CHECK_STR(query_text(db, "SELECT duration_source FROM injury_samples WHERE site = 'Site B'"), "length/rate");
	CHECK_STR(query_text(db, "SELECT record_kind || individuals_examined || individuals_regenerating FROM injury_samples WHERE site = 'Site C'"), "individual11");
	CHECK_STR(query_text(db, "SELECT age_status || older_ma FROM injury_samples WHERE site = 'Site A'"), "recent0.0");
	CHECK_STR(query_text(db, "SELECT json_extract(extra, '$.stationNote') FROM injury_samples WHERE site = 'Site A'"), "calm");
	CHECK(isnan(test_query_num(db, "SELECT arms_examined FROM injury_samples WHERE site = 'Site B'")));

	/* Identical content is refused and changes nothing. */
	CHECK_INT(bc_injuries_import(&res, db, csv, &o, &err), BC_EEXISTS);
	CHECK(strstr(err.msg, "already imported as batch 1") != NULL);
	CHECK_INT(test_query_num(db, "SELECT count(*) FROM import_batches"), 1);
	CHECK_INT(test_query_num(db, "SELECT count(*) FROM injury_samples"), 4);
	bc_db_close(db);
}

TEST(injuries_import_dry_run_and_bad_files)
{
	bc_err err = {0};
	bc_db *db = NULL;
	const char *dir = test_tmpdir();
	char dbp[512];
	snprintf(dbp, sizeof dbp, "%s/i.gpkg", dir);
	CHECK_OK(bc_db_create(&db, dbp, &err), &err);
	bc_injuries_import_options o = BC_INJURIES_IMPORT_OPTIONS_INIT;
	o.dry_run = 1;
	bc_injuries_import_result res;
	const char *csv = write_file(dir, "d.csv", GOOD_AND_BAD);
	int rc = bc_injuries_import(&res, db, csv, &o, &err);
	if (rc) {
		bc_db_close(db);
		CHECK_OK(rc, &err);
	}
	CHECK_INT(res.n_stored, 4);
	CHECK_INT(res.batch_id, 0);
	CHECK_INT(test_query_num(db, "SELECT count(*) FROM injury_samples"), 0);
	CHECK_INT(test_query_num(db, "SELECT count(*) FROM import_batches"), 0);
	CHECK_INT(test_query_num(db, "SELECT count(*) FROM quarantine"), 0);

	const char *nocol = write_file(dir, "n.csv", "locality,depth,scientificName,individualsExamined,individualsRegenerating,regenerationDays\nA,10,S t,1,0,5\n");
	CHECK_INT(bc_injuries_import(&res, db, nocol, NULL, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "n.csv:1: header: no 'age' column") != NULL);
	const char *twice = write_file(dir, "t.csv", "locality,site,depth,age,taxon,individualsExamined,individualsRegenerating,regenerationDays\n");
	CHECK_INT(bc_injuries_import(&res, db, twice, NULL, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "'locality' and 'site' give the same thing") != NULL);
	CHECK_INT(test_query_num(db, "SELECT count(*) FROM import_batches"), 0);
	bc_db_close(db);
}

/* A survey built so every number is known: shallow 30 of 100 regenerating,
 * deep 10 of 100, both with D = 100 days exactly, one straddling sample. */
static const char SURVEY[] =
	"locality,depth,age,taxon,individualsExamined,individualsRegenerating,armsExamined,armsRegenerating,regenerationDays\n"
	"North,50,Recent,Somnicrinus testus,60,20,600,25,100\n"
	"South,120-150,Recent,Somnicrinus testus,40,10,,,100\n"
	"Deep1,500,Recent,Somnicrinus testus,100,10,1000,10,100\n"
	"Across,150-250,Recent,Somnicrinus testus,10,5,,,100\n"
	"Other,60,Recent,Fictocrinus alius,10,10,,,100\n";

TEST(injuries_encounter_report_by_zone)
{
	bc_err err = {0};
	bc_db *db = NULL;
	const char *dir = test_tmpdir();
	char dbp[512];
	snprintf(dbp, sizeof dbp, "%s/r.gpkg", dir);
	CHECK_OK(bc_db_create(&db, dbp, &err), &err);
	bc_injuries_import_result res;
	int rc = bc_injuries_import(&res, db, write_file(dir, "s.csv", SURVEY), NULL, &err);
	if (rc) {
		bc_db_close(db);
		CHECK_OK(rc, &err);
	}
	bc_encounter_options o = BC_ENCOUNTER_OPTIONS_INIT;
	o.taxon = "Somnicrinus";
	o.mc.draws = 2000;
	bc_encounter_report *r = NULL;
	rc = bc_encounter_report_build(&r, db, &o, &err);
	if (rc) {
		bc_db_close(db);
		CHECK_OK(rc, &err);
	}
	CHECK_INT(bc_encounter_report_count(r), 2);
	CHECK_INT(bc_encounter_report_straddling(r), 1);
	const bc_encounter_row *s = bc_encounter_report_row(r, 0), *d = bc_encounter_report_row(r, 1);
	CHECK_STR(s->zone, "shallow (<200 m)");
	CHECK_STR(d->zone, "deep (>=200 m)");
	CHECK_NEAR(s->individuals.n, 100, 0);
	CHECK_NEAR(s->individuals.prevalence, 0.30, 1e-15);
	CHECK_NEAR(s->individuals.incidence, 0.3 / (0.7 * 100), 1e-15);
	CHECK_NEAR(d->individuals.incidence, 0.1 / (0.9 * 100), 1e-15);
	CHECK_NEAR(d->individuals.ratio, (0.1 / 0.9) / (0.3 / 0.7), 1e-12);
	CHECK(d->individuals.ratio_hi < 1); /* clearly fewer injuries at depth */
	CHECK_NEAR(s->arms.n, 600, 0);      /* only the sample with arm counts */
	CHECK_NEAR(s->arms.prevalence, 25.0 / 600, 1e-15);
	CHECK_INT(d->ratio_to, 0);
	CHECK_NEAR(s->min_depth_m, 50, 0);
	CHECK_NEAR(s->max_depth_m, 150, 0);

	/* The written table is reproducible and carries the cautions. */
	char *a = NULL, *b = NULL;
	size_t na = 0, nb = 0;
	FILE *f = open_memstream(&a, &na);
	CHECK_OK(bc_encounter_report_write(r, f, BC_FORMAT_CSV, &err), &err);
	fclose(f);
	bc_encounter_report_free(r);
	r = NULL;
	CHECK_OK(bc_encounter_report_build(&r, db, &o, &err), &err);
	f = open_memstream(&b, &nb);
	CHECK_OK(bc_encounter_report_write(r, f, BC_FORMAT_CSV, &err), &err);
	fclose(f);
	CHECK(na == nb && memcmp(a, b, na) == 0);
	CHECK(strncmp(a, "bin,zone,site,min_depth_m,max_depth_m,n_samples,individuals,regenerating,prevalence,prevalence_lo,prevalence_hi,", 111) == 0);
	CHECK(strstr(a, "# stamp.caution_steady_state:") && strstr(a, "# stamp.caution_gear:") &&
	      strstr(a, "# stamp.caution_predation:") && strstr(a, "# stamp.caution_recognisable:"));
	free(a);
	free(b);
	bc_encounter_report_free(r);

	/* By site: one row per site and zone; the all-regenerating taxon has
	 * an unbounded upper rate. */
	o.by = BC_ENCOUNTER_BY_SITE;
	o.taxon = NULL;
	o.zones = (const double[]){100, 1000};
	o.n_zones = 2;
	CHECK_OK(bc_encounter_report_build(&r, db, &o, &err), &err);
	CHECK_INT(bc_encounter_report_count(r), 5);
	CHECK_INT(bc_encounter_report_straddling(r), 0);
	CHECK_STR(bc_encounter_report_row(r, 0)->site, "North");
	CHECK_STR(bc_encounter_report_row(r, 1)->site, "Other");
	CHECK(isinf(bc_encounter_report_row(r, 1)->individuals.incidence_hi));
	CHECK_STR(bc_encounter_report_row(r, 2)->zone, "100-1000 m");
	bc_encounter_report_free(r);

	o.taxon = "Nonexistent";
	CHECK_INT(bc_encounter_report_build(&r, db, &o, &err), BC_ENOTFOUND);
	CHECK(r == NULL);
	bc_db_close(db);
}

/* Every allocation of an import and a report can fail without a crash or a
 * leak (the sanitizer build checks the leaks); a failed import stores nothing. */
TEST(injuries_allocation_failures)
{
	bc_err err = {0};
	const char *dir = test_tmpdir();
	const char *csv = write_file(dir, "s.csv", SURVEY);
	int failures = 0;
	for (long k = 1; k < 400; k++) {
		bc_db *db = NULL;
		char dbp[512];
		snprintf(dbp, sizeof dbp, "%s/a%ld.gpkg", dir, k);
		CHECK_OK(bc_db_create(&db, dbp, &err), &err);
		bc_injuries_import_result res;
		bc__alloc_fail_after(k);
		int rc = bc_injuries_import(&res, db, csv, NULL, &err);
		bc_encounter_report *r = NULL;
		int rc2 = rc == BC_OK ? bc_encounter_report_build(&r, db, NULL, &err) : BC_ENOMEM;
		bc__alloc_fail_after(0);
		if (rc != BC_OK) {
			failures++;
			CHECK_INT(test_query_num(db, "SELECT count(*) FROM injury_samples"), 0);
		}
		CHECK(rc2 == BC_OK || r == NULL);
		bc_encounter_report_free(r);
		bc_db_close(db);
		unlink(dbp);
		if (rc == BC_OK && rc2 == BC_OK)
			break;
	}
	CHECK(failures > 0);
}
