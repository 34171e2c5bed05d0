/*
 * test_bib.c - BibTeX: TeX accents to UTF-8, macros and concatenation,
 * bad entries with their line, reloading a key.
 */
#include "test.h"
#include "bib.h"
#include "db.h"

#include <stdlib.h>

static int tex_is(const char *tex, const char *want)
{
	char *got = bc_bib__tex_to_utf8(tex);
	int ok = got && strcmp(got, want) == 0;
	if (!ok)
		test__fail(__FILE__, __LINE__, "'%s' -> '%s', expected '%s'", tex, got ? got : "(null)", want);
	free(got);
	return ok;
}

/* The accent commands of the TeXbook ch. 9 (from memory) and their
 * precomposed Unicode letters (NFC). */
TEST(bib_tex_accents_to_utf8)
{
	CHECK(tex_is("M{\\\"u}ller", "M\xc3\xbcller"));
	CHECK(tex_is("Jos\\'e", "Jos\xc3\xa9"));
	CHECK(tex_is("Fran\\c{c}ois", "Fran\xc3\xa7ois"));
	CHECK(tex_is("Fran{\\c c}ois", "Fran\xc3\xa7ois"));
	CHECK(tex_is("Stra\\ss{}e", "Stra\xc3\x9f" "e"));
	CHECK(tex_is("L\\'{\\i}a", "L\xc3\xad" "a"));
	CHECK(tex_is("{\\AA}ngstr{\\\"o}m", "\xc3\x85ngstr\xc3\xb6m"));
	CHECK(tex_is("\\v{S}koda \\o{} \\l{}", "\xc5\xa0koda \xc3\xb8 \xc5\x82"));
	CHECK(tex_is("pp.~101--120", "pp. 101\xe2\x80\x93" "120"));
	CHECK(tex_is("  {The}   {Vell}\n quarry ", "The Vell quarry"));
	CHECK(tex_is("50\\% \\& more", "50% & more"));
}

typedef struct got {
	int n, bad;
	char keys[8][64], titles[8][128], journal[8][128], pages[8][64];
	char badmsg[512];
} got;

static int on_entry(void *ctx, const bc_bib_entry *e, bc_err *err)
{
	(void)err;
	got *g = ctx;
	if (g->n < 8) {
		snprintf(g->keys[g->n], 64, "%s", e->key);
		snprintf(g->titles[g->n], 128, "%s", e->title ? e->title : "");
		snprintf(g->journal[g->n], 128, "%s", e->journal ? e->journal : "");
		snprintf(g->pages[g->n], 64, "%s", e->pages ? e->pages : "");
	}
	g->n++;
	return 0;
}

static void on_bad(void *ctx, const char *msg)
{
	got *g = ctx;
	if (!g->bad++)
		snprintf(g->badmsg, sizeof g->badmsg, "%s", msg);
}

TEST(bib_macros_concatenation_and_bad_entries)
{
	const char *text =
		"@STRING{ jfp = \"J. Fict. Pal.\" }\n"
		"@comment{skip {nested} @article{no, } }\n"
		"@preamble{\"x\"}\n"
		"@article{A1, title = \"Depth \" # {and} # \" time\", journal = jfp # \" B\", pages = 3 # \"--\" # 9, year = 2001}\n"
		"@article{Bad1,\n  title = {ok},\n  journal = undefinedmacro\n}\n"
		"@book(B2, title = {Paren {form}}, month = jan)\n";
	got g;
	memset(&g, 0, sizeof g);
	bc_err err = {0};
	CHECK_OK(bc_bib__parse("r.bib", text, strlen(text), on_entry, on_bad, &g, &err), &err);
	CHECK_INT(g.n, 2);
	CHECK_INT(g.bad, 1);
	CHECK_STR(g.keys[0], "A1");
	CHECK_STR(g.titles[0], "Depth and time");
	CHECK_STR(g.journal[0], "J. Fict. Pal. B");
	CHECK_STR(g.pages[0], "3\xe2\x80\x93" "9");
	CHECK_STR(g.keys[1], "B2");
	CHECK_STR(g.titles[1], "Paren form");
	CHECK_STR(g.badmsg, "r.bib:5: Bad1: undefined @string macro 'undefinedmacro'");
	const char *latin1 = "@article{X, title = {M\xfcller}}\n";
	CHECK_INT(bc_bib__parse("l.bib", latin1, strlen(latin1), on_entry, on_bad, &g, &err), BC_EINVALID);
	CHECK_STR(err.msg, "l.bib:1: encoding: not UTF-8 (looks like Latin-1/Windows-1252); save the file as UTF-8");
}

static void count_bad(void *ctx, const char *msg)
{
	(void)msg;
	(*(int *)ctx)++;
}

/* A key loaded again is updated in place and counted as updated. */
TEST(bib_refs_reload_updates_and_refuses_identical)
{
	bc_err err = {0};
	bc_db *db = NULL;
	char path[512], bib[512];
	snprintf(path, sizeof path, "%s/r.gpkg", test_tmpdir());
	CHECK_OK(bc_db_create(&db, path, &err), &err);
	bc_refs_result r;
	int bad = 0;
	CHECK_OK(bc_refs_load(&r, db, test_path("cli/fixtures/refs.bib"), count_bad, &bad, &err), &err);
	CHECK_INT(r.n_new, 3);
	CHECK_INT(r.n_bad, 1);
	CHECK_INT(bad, 1);
	CHECK_INT(bc_refs_load(&r, db, test_path("cli/fixtures/refs.bib"), count_bad, &bad, &err), BC_EEXISTS);
	snprintf(bib, sizeof bib, "%s/new.bib", test_tmpdir());
	FILE *f = fopen(bib, "w");
	CHECK(f);
	fputs("@article{Abel2001, author = {Abel, Ann}, title = {Revised title}, year = 2002}\n@misc{New1, title = {x}}\n@misc{New1, title = {y}}\n", f);
	fclose(f);
	CHECK_OK(bc_refs_load(&r, db, bib, count_bad, &bad, &err), &err);
	CHECK_INT(r.n_new, 1);
	CHECK_INT(r.n_updated, 1);
	CHECK_INT(r.n_bad, 1); /* the repeated key inside one file */
	sqlite3_stmt *st = NULL;
	CHECK(sqlite3_prepare_v2(bc_db__sqlite(db), "SELECT title || '|' || year FROM \"references\" WHERE citation_key = 'Abel2001'", -1, &st, NULL) == SQLITE_OK);
	CHECK(sqlite3_step(st) == SQLITE_ROW);
	char t[128];
	snprintf(t, sizeof t, "%s", sqlite3_column_text(st, 0));
	sqlite3_finalize(st);
	bc_db_close(db);
	CHECK_STR(t, "Revised title|2002");
}
