/*
 * test_vocab.c - shipped vocabularies: every row sourced, matching,
 * overriding from a user file, seeding into a new database.
 */
#include "test.h"
#include "vocab.h"

#include <stdlib.h>

TEST(vocab_builtin_terms_have_sources)
{
	bc_err err = {0};
	for (int k = BC_VOCAB_ENVIRONMENTS; k <= BC_VOCAB_UNITS; k++) {
		bc_vocab *v = NULL;
		CHECK_OK(bc_vocab__builtin(&v, (bc_vocab_kind)k, &err), &err);
		CHECK(bc_vocab__count(v) > 5);
		for (size_t i = 0; i < bc_vocab__count(v); i++)
			CHECK_MSG(bc_vocab__term(v, i)->source[0], "term %s has no source", bc_vocab__term(v, i)->term);
		bc_vocab__free(v);
	}
}

/* Shelf edge at about 200 m and bathyal below it: standard bathymetric
 * zonation, Hedgpeth (1957) GSA Memoir 67 (from memory). */
TEST(vocab_environment_ranges_and_matching)
{
	bc_err err = {0};
	bc_vocab *v = NULL;
	CHECK_OK(bc_vocab__builtin(&v, BC_VOCAB_ENVIRONMENTS, &err), &err);
	const bc_vocab_term *t = bc_vocab__find(v, "  Outer-Shelf ");
	CHECK(t);
	CHECK_STR(t->term, "outer shelf");
	CHECK_NEAR(t->max_m, 200, 0);
	t = bc_vocab__find(v, "upper_bathyal");
	CHECK(t && t->min_m == 200);
	t = bc_vocab__find(v, "shelf");
	CHECK(t && t->min_m == 0 && t->max_m == 200);
	CHECK(!bc_vocab__find(v, "moon pool"));
	bc_vocab__free(v);
	bc_vocab *p = NULL;
	CHECK_OK(bc_vocab__builtin(&p, BC_VOCAB_PRESERVATION, &err), &err);
	static const char *const want[][2] = {{"crown", "articulated"}, {"calyx", "articulated"}, {"arm", "partly articulated"},
		{"pluricolumnal", "partly articulated"}, {"columnal", "disarticulated"}, {"holdfast", "partly articulated"}, {"unknown", "unknown"}};
	for (size_t i = 0; i < sizeof want / sizeof want[0]; i++) {
		t = bc_vocab__find(p, want[i][0]);
		CHECK_MSG(t, "%s missing", want[i][0]);
		CHECK_STR(t->cls, want[i][1]);
	}
	bc_vocab__free(p);
}

TEST(vocab_user_file_overrides_and_errors)
{
	bc_err err = {0};
	char path[512];
	snprintf(path, sizeof path, "%s/env.tsv", test_tmpdir());
	FILE *f = fopen(path, "w");
	CHECK(f);
	fputs("term\tmin_m\tmax_m\tnote\tsource\nouter shelf\t120\t180\t\tour lab's convention\ncarbonate ramp\t0\t60\t\tfrom memory\n", f);
	fclose(f);
	bc_vocab *v = NULL;
	CHECK_OK(bc_vocab__builtin(&v, BC_VOCAB_ENVIRONMENTS, &err), &err);
	size_t n = bc_vocab__count(v);
	char sha[65];
	snprintf(sha, sizeof sha, "%s", bc_vocab__sha256(v));
	CHECK_OK(bc_vocab__merge_file(v, path, &err), &err);
	CHECK_INT(bc_vocab__count(v), n + 1);
	CHECK(bc_vocab__find(v, "outer shelf")->min_m == 120);
	CHECK(bc_vocab__find(v, "Carbonate ramp")->max_m == 60);
	CHECK(strcmp(sha, bc_vocab__sha256(v)) != 0);
	f = fopen(path, "w");
	fputs("term\tmin_m\tmax_m\tnote\tsource\nreef\t0\t30\t\t\n", f);
	fclose(f);
	CHECK_INT(bc_vocab__merge_file(v, path, &err), BC_EINVALID);
	char want[700];
	snprintf(want, sizeof want, "%s:2: source: empty; every row needs a source (write \"common practice, no source\" or \"from memory\" if that is the truth)", path);
	CHECK_STR(err.msg, want);
	f = fopen(path, "w");
	fputs("term\tmin_m\tmax_m\tnote\tsource\nreef\t0\tdeep\t\tx\n", f);
	fclose(f);
	CHECK_INT(bc_vocab__merge_file(v, path, &err), BC_EINVALID);
	snprintf(want, sizeof want, "%s:2: max_m: 'deep' is not a depth in metres >= min_m", path);
	CHECK_STR(err.msg, want);
	bc_vocab__free(v);
}

TEST(vocab_seeded_into_new_database)
{
	bc_err err = {0};
	bc_db *db = NULL;
	char path[512];
	snprintf(path, sizeof path, "%s/v.gpkg", test_tmpdir());
	CHECK_OK(bc_db_create(&db, path, &err), &err);
	sqlite3_stmt *st = NULL;
	CHECK(sqlite3_prepare_v2(bc_db__sqlite(db),
		"SELECT count(*) FROM vocabulary_terms t JOIN vocabularies v USING (vocabulary_id) "
		"WHERE v.kind = 'environments' AND t.term = 'bathyal' AND t.min_m = 200 AND t.source <> ''", -1, &st, NULL) == SQLITE_OK);
	CHECK(sqlite3_step(st) == SQLITE_ROW);
	int n = sqlite3_column_int(st, 0);
	sqlite3_finalize(st);
	bc_db_close(db);
	CHECK_INT(n, 1);
}
