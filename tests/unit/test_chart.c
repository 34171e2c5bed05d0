/*
 * test_chart.c - charts: the SKOS reader (both ways of stating bounds),
 * hostile XML, the chart TSV round trip, built-in charts, and charts in
 * the database.
 */
#include "test.h"
#include "db.h"

#include <stdlib.h>

static const char *fixture(const char *name)
{
	static char buf[4][1024];
	static int k;
	char *b = buf[k++ % 4];
	snprintf(b, sizeof buf[0], "%s", test_path(name));
	return b;
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

static int has_label(const bc_chart *c, const char *interval, const char *text, const char *lang)
{
	int idx = bc_chart_find(c, interval);
	for (size_t i = 0; i < bc_chart_label_count(c); i++) {
		const bc_label *l = bc_chart_label(c, i);
		if (l->interval == idx && strcmp(l->text, text) == 0 && strcmp(l->lang, lang) == 0)
			return 1;
	}
	return 0;
}

static int same_number(double a, double b)
{
	return (isnan(a) && isnan(b)) || a == b;
}

/* Every field of every interval and label equal, in order. */
static int charts_equal(const bc_chart *a, const bc_chart *b, char *why, size_t n)
{
	if (strcmp(bc_chart_name(a), bc_chart_name(b)) || strcmp(bc_chart_source(a), bc_chart_source(b)) ||
	    strcmp(bc_chart_licence(a), bc_chart_licence(b)))
		return snprintf(why, n, "name/source/licence differ"), 0;
	if (bc_chart_count(a) != bc_chart_count(b) || bc_chart_label_count(a) != bc_chart_label_count(b))
		return snprintf(why, n, "counts differ: %zu/%zu intervals, %zu/%zu labels", bc_chart_count(a), bc_chart_count(b),
			       bc_chart_label_count(a), bc_chart_label_count(b)), 0;
	for (size_t i = 0; i < bc_chart_count(a); i++) {
		const bc_interval *x = bc_chart_interval(a, i), *y = bc_chart_interval(b, i);
		if (strcmp(x->name, y->name) || strcmp(x->iri, y->iri) || x->rank != y->rank || x->parent != y->parent ||
		    !same_number(x->older_ma, y->older_ma) || !same_number(x->older_unc, y->older_unc) ||
		    !same_number(x->younger_ma, y->younger_ma) || !same_number(x->younger_unc, y->younger_unc) ||
		    x->has_colour != y->has_colour || (x->has_colour && x->colour != y->colour) ||
		    strcmp(x->colour_source, y->colour_source))
			return snprintf(why, n, "interval %zu (%s) differs", i, x->name), 0;
	}
	for (size_t i = 0; i < bc_chart_label_count(a); i++) {
		const bc_label *x = bc_chart_label(a, i), *y = bc_chart_label(b, i);
		if (x->interval != y->interval || strcmp(x->text, y->text) || strcmp(x->lang, y->lang))
			return snprintf(why, n, "label %zu (%s) differs", i, x->text), 0;
	}
	return 1;
}

/* tests/fixtures/charts/mini.skos.rdf states bounds inline (2024-12 style)
 * and on boundary resources (2020 style); the numbers are the file's own. */
TEST(chart_skos_both_bound_styles)
{
	bc_err err = {0};
	bc_chart *c = NULL;
	CHECK_OK(bc_chart_load_skos(&c, fixture("fixtures/charts/mini.skos.rdf"), NULL, &err), &err);
	CHECK_STR(bc_chart_name(c), "mini");
	CHECK_INT(bc_chart_count(c), 5); /* the citation and the deprecated concept are not intervals */
	CHECK_INT(bc_chart_find(c, "Old name"), -1);
	CHECK_STR(bc_chart_licence(c), "https://creativecommons.org/publicdomain/zero/1.0/");

	const bc_interval *a = bc_chart_interval(c, (size_t)bc_chart_find(c, "Alphazoic"));
	CHECK(a != NULL);
	CHECK_INT(a->rank, BC_RANK_ERA);
	CHECK_INT(a->parent, -1);
	CHECK_NEAR(a->older_ma, 300.5, 0);
	CHECK_NEAR(a->older_unc, 0.7, 0);
	CHECK_NEAR(a->younger_ma, 100, 0);
	CHECK(isnan(a->younger_unc));
	CHECK(a->has_colour);
	CHECK_INT(a->colour, 0x12AB3C);
	CHECK_STR(a->iri, "http://example.org/mini/Alphazoic");

	/* boundary resources: Ma position with uncertainty, and a BP position (201300000 a = 201.3 Ma) */
	const bc_interval *b = bc_chart_interval(c, (size_t)bc_chart_find(c, "Betan"));
	CHECK_INT(b->rank, BC_RANK_PERIOD);
	CHECK_STR(bc_chart_interval(c, (size_t)b->parent)->name, "Alphazoic");
	CHECK_NEAR(b->older_ma, 300.5, 0);
	CHECK_NEAR(b->older_unc, 0.7, 0);
	CHECK_NEAR(b->younger_ma, 201.3, 0);
	CHECK(!b->has_colour);

	/* named from its parent; rank by rdf:type (2017 style); uncertainty on the boundary */
	const bc_interval *u = bc_chart_interval(c, (size_t)bc_chart_find(c, "Late Betan"));
	CHECK(u != NULL);
	CHECK_INT(u->rank, BC_RANK_EPOCH);
	const bc_interval *d = bc_chart_interval(c, (size_t)bc_chart_find(c, "Deltian"));
	CHECK_INT(d->rank, BC_RANK_AGE);
	CHECK_NEAR(d->older_ma, 230, 0);
	CHECK_NEAR(d->older_unc, 1.5, 0);
	CHECK_STR(bc_chart_interval(c, (size_t)d->parent)->name, "Late Betan");

	/* chart order: parents first, siblings oldest first */
	CHECK_STR(bc_chart_interval(c, 0)->name, "Alphazoic");
	CHECK_STR(bc_chart_interval(c, 4)->name, "Gamman");

	CHECK(has_label(c, "Alphazoic", "Alphazoïque", "fr"));
	CHECK(has_label(c, "Alphazoic", "Alphazoikum", "de"));
	CHECK(has_label(c, "Betan", "Beta Period", "en"));
	CHECK(has_label(c, "Late Betan", "Upper Betan", "en"));
	CHECK(has_label(c, "Deltian", "Deltien", "fr"));
	bc_chart_free(c);
}

TEST(chart_skos_malformed_has_line)
{
	bc_err err = {0};
	bc_chart *c = NULL;
	const char *p = fixture("fixtures/charts/malformed.rdf");
	CHECK_INT(bc_chart_load_skos(&c, p, NULL, &err), BC_EINVALID);
	CHECK(c == NULL);
	char want[1200];
	snprintf(want, sizeof want, "%s:6: XML: not well-formed: Opening and ending tag mismatch: prefLabel line 5 and Concept", p);
	CHECK_STR(err.msg, want);
}

TEST(chart_skos_refuses_entities)
{
	bc_err err = {0};
	bc_chart *c = NULL;
	const char *p = fixture("fixtures/charts/billion-laughs.rdf");
	CHECK_INT(bc_chart_load_skos(&c, p, NULL, &err), BC_EINVALID);
	CHECK(c == NULL);
	char want[1200];
	snprintf(want, sizeof want, "%s:3: DOCTYPE: refused: the document type declaration declares entity 'lol' "
		"(entities are never expanded; a chart file needs no DTD)", p);
	CHECK_STR(err.msg, want);

	p = fixture("fixtures/charts/external-entity.rdf");
	CHECK_INT(bc_chart_load_skos(&c, p, NULL, &err), BC_EINVALID);
	snprintf(want, sizeof want, "%s:3: DOCTYPE: refused: the document type declaration declares external entity 'xxe' "
		"(file:///etc/passwd) (entities are never expanded; a chart file needs no DTD)", p);
	CHECK_STR(err.msg, want);
	CHECK(strstr(err.msg, "root:") == NULL);
}

TEST(chart_skos_missing_file_and_not_rdf)
{
	bc_err err = {0};
	bc_chart *c = NULL;
	CHECK_INT(bc_chart_load_skos(&c, fixture("fixtures/charts/none.rdf"), NULL, &err), BC_ENOTFOUND);
	char p[600];
	snprintf(p, sizeof p, "%s/x.rdf", test_tmpdir());
	FILE *f = fopen(p, "w");
	CHECK(f != NULL);
	fputs("<?xml version=\"1.0\"?>\n<html><body/></html>\n", f);
	fclose(f);
	CHECK_INT(bc_chart_load_skos(&c, p, NULL, &err), BC_EINVALID);
	CHECK(strstr(err.msg, ":2: XML: the root element is not rdf:RDF") != NULL);
}

TEST(chart_tsv_round_trip_is_lossless)
{
	bc_err err = {0};
	bc_chart *a = NULL, *b = NULL, *m = NULL, *m2 = NULL;
	char why[256], p[600];
	CHECK_OK(bc_chart_builtin(&a, NULL, &err), &err);
	snprintf(p, sizeof p, "%s/chart.tsv", test_tmpdir());
	FILE *f = fopen(p, "w");
	CHECK(f != NULL);
	CHECK_OK(bc_chart_write_tsv(a, f, &err), &err);
	fclose(f);
	CHECK_OK(bc_chart_load_tsv(&b, p, NULL, &err), &err);
	CHECK_MSG(charts_equal(a, b, why, sizeof why), "%s", why);

	/* escapes: a tab and a newline in a label, a backslash in the source */
	CHECK_OK(bc_chart_load_skos(&m, fixture("fixtures/charts/mini.skos.rdf"), NULL, &err), &err);
	CHECK_OK(bc_chart_add_label(m, 0, "odd\tlabel\nwith \\ escapes", "x-test", &err), &err);
	CHECK_OK(bc_chart_set_source(m, "a \\ source", "a\tlicence", &err), &err);
	f = fopen(p, "w");
	CHECK(f != NULL);
	CHECK_OK(bc_chart_write_tsv(m, f, &err), &err);
	fclose(f);
	CHECK_OK(bc_chart_load_tsv(&m2, p, NULL, &err), &err);
	CHECK_MSG(charts_equal(m, m2, why, sizeof why), "%s", why);
	bc_chart_free(a);
	bc_chart_free(b);
	bc_chart_free(m);
	bc_chart_free(m2);
}

TEST(chart_tsv_errors_name_line_and_field)
{
	bc_err err = {0};
	bc_chart *c = NULL;
	char p[600], want[800];
	snprintf(p, sizeof p, "%s/bad.tsv", test_tmpdir());
	FILE *f = fopen(p, "w");
	CHECK(f != NULL);
	fputs("# chart: bad\n"
	      "name\trank\tparent\tolder_ma\tolder_unc\tyounger_ma\tyounger_unc\tcolour\tcolour_source\tiri\n"
	      "A\tera\t\t10\t\t5\t\t\t\t\n"
	      "B\tage\tA\tten\t\t5\t\t\t\t\n", f);
	fclose(f);
	CHECK_INT(bc_chart_load_tsv(&c, p, NULL, &err), BC_EINVALID);
	snprintf(want, sizeof want, "%s:4: older_ma: 'ten' is not a number", p);
	CHECK_STR(err.msg, want);
	f = fopen(p, "w");
	fputs("# chart: bad\n"
	      "name\trank\tparent\tolder_ma\tolder_unc\tyounger_ma\tyounger_unc\tcolour\tcolour_source\tiri\n"
	      "B\tage\tA\t10\t\t5\t\t\t\t\n", f);
	fclose(f);
	CHECK_INT(bc_chart_load_tsv(&c, p, NULL, &err), BC_EINVALID);
	snprintf(want, sizeof want, "%s:3: parent: 'A' is not an interval listed above", p);
	CHECK_STR(err.msg, want);
	CHECK(c == NULL);
}

/* Both shipped charts: 2024-12 is the default; 2020 takes its colours
 * from 2024-12 (the 2020 release has none). Values from
 * ics-chart-2024-12.skos.rdf: Maastrichtian begins 72.2 +/- 0.2 Ma,
 * ends 66.00 Ma, colour #F2FA8C. */
TEST(chart_builtin_charts)
{
	bc_err err = {0};
	bc_chart *c = NULL, *old = NULL;
	CHECK_OK(bc_chart_builtin(&c, NULL, &err), &err);
	CHECK_STR(bc_chart_name(c), BC_DEFAULT_CHART);
	CHECK_INT(bc_chart_count(c), 178);
	const bc_interval *m = bc_chart_interval(c, (size_t)bc_chart_find(c, "Maastrichtian"));
	CHECK(m != NULL);
	CHECK_NEAR(m->older_ma, 72.2, 0);
	CHECK_NEAR(m->older_unc, 0.2, 0);
	CHECK_NEAR(m->younger_ma, 66.0, 0);
	CHECK_INT(m->colour, 0xF2FA8C);
	CHECK(strstr(bc_chart_source(c), "Episodes 36: 199-204") != NULL);
	CHECK(strstr(bc_chart_licence(c), "CC BY 4.0") != NULL);

	CHECK_OK(bc_chart_builtin(&old, "ics-2020", &err), &err);
	const bc_interval *m20 = bc_chart_interval(old, (size_t)bc_chart_find(old, "Maastrichtian"));
	CHECK(m20 != NULL);
	CHECK_NEAR(m20->older_ma, 72.1, 0); /* ics-chart-2020.skos.rdf: BaseMaastrichtianTime 72.1 */
	CHECK(m20->has_colour);
	CHECK_INT(m20->colour, 0xF2FA8C);
	CHECK_STR(m20->colour_source, "ICS 2024-12 chart colours");
	bc_chart_free(c);
	bc_chart_free(old);

	CHECK_INT(bc_chart_builtin(&c, "ics-1999", &err), BC_ENOTFOUND);
	CHECK(strstr(err.msg, "ics-2020") != NULL && strstr(err.msg, "ics-2024-12") != NULL);
}

TEST(chart_database_store_get_replace)
{
	bc_err err = {0};
	bc_db *db = NULL;
	bc_chart *def = NULL, *got = NULL, *b = NULL, *mini = NULL;
	char p[600], why[256];
	snprintf(p, sizeof p, "%s/c.gpkg", test_tmpdir());
	CHECK_OK(bc_db_create(&db, p, &err), &err);
	CHECK_INT(query_int(db, "SELECT count(*) FROM timescales"), 2);
	CHECK_INT(query_int(db, "SELECT count(*) FROM timescales WHERE is_default = 1 AND name = 'ics-2024-12'"), 1);
	CHECK_INT(query_int(db, "SELECT count(*) FROM intervals i JOIN timescales t USING (timescale_id) WHERE t.name = 'ics-2020' AND i.colour IS NULL"), 0);

	/* the stored chart reads back equal to the built-in one */
	CHECK_OK(bc_timescale_get(&def, db, NULL, &err), &err);
	CHECK_OK(bc_chart_builtin(&b, NULL, &err), &err);
	CHECK_MSG(charts_equal(def, b, why, sizeof why), "%s", why);
	bc_chart_free(b);
	b = NULL;
	CHECK_OK(bc_timescale_get(&got, db, "ics-2020", &err), &err);
	CHECK_OK(bc_chart_builtin(&b, "ics-2020", &err), &err);
	CHECK_MSG(charts_equal(got, b, why, sizeof why), "%s", why);
	bc_chart_free(got);
	got = NULL;

	CHECK_INT(bc_timescale_get(&got, db, "nope", &err), BC_ENOTFOUND);
	CHECK(strstr(err.msg, "no chart named 'nope' (loaded: ics-2024-12, ics-2020)") != NULL);

	/* a second chart of the same name is refused, and nothing changes */
	int before = query_int(db, "SELECT count(*) FROM intervals");
	CHECK_INT(bc_timescale_store(db, def, "again", 0, &err), BC_EEXISTS);
	CHECK(strstr(err.msg, "already loaded") != NULL);
	CHECK_INT(query_int(db, "SELECT count(*) FROM intervals"), before);

	/* a new chart made default; then the old default replaced stays a non-default chart */
	CHECK_OK(bc_chart_load_skos(&mini, fixture("fixtures/charts/mini.skos.rdf"), NULL, &err), &err);
	CHECK_OK(bc_timescale_store(db, mini, "mini.skos.rdf", 1, &err), &err);
	CHECK_INT(query_int(db, "SELECT count(*) FROM timescales WHERE is_default = 1 AND name = 'mini'"), 1);
	CHECK_INT(query_int(db, "SELECT count(*) FROM interval_aliases a JOIN timescales t USING (timescale_id) WHERE t.name = 'mini'"),
		(int)bc_chart_label_count(mini));
	CHECK_OK(bc_timescale_replace(db, def, "replaced", 0, &err), &err);
	CHECK_INT(query_int(db, "SELECT count(*) FROM intervals"), before + 5);
	CHECK_INT(query_int(db, "SELECT count(*) FROM timescales WHERE is_default = 1 AND name = 'mini'"), 1);
	/* replacing the default keeps it the default */
	CHECK_OK(bc_timescale_replace(db, mini, "again", 0, &err), &err);
	CHECK_INT(query_int(db, "SELECT count(*) FROM timescales WHERE is_default = 1 AND name = 'mini'"), 1);
	CHECK_INT(query_int(db, "SELECT count(*) FROM intervals"), before + 5);

	bc_timescale_info *v = NULL;
	size_t n = 0;
	CHECK_OK(bc_timescale_list(&v, &n, db, &err), &err);
	CHECK_INT(n, 3);
	CHECK_STR(v[0].name, "mini");
	CHECK_INT(v[0].n_intervals, 5);
	free(v);
	bc_chart_free(def);
	bc_chart_free(b);
	bc_chart_free(mini);
	bc_db_close(db);
}

/* Every allocation of a load failing in turn: a clean error, no crash or leak (run under ASan). */
TEST(chart_skos_allocation_failures)
{
	bc_err err = {0};
	bc_chart *c = NULL;
	const char *p = fixture("fixtures/charts/mini.skos.rdf");
	int failures = 0;
	for (long k = 1; k < 400; k++) {
		bc__alloc_fail_after(k);
		int rc = bc_chart_load_skos(&c, p, NULL, &err);
		bc__alloc_fail_after(0);
		if (rc == BC_OK) {
			bc_chart_free(c);
			break;
		}
		CHECK_INT(rc, BC_ENOMEM);
		CHECK(c == NULL);
		failures++;
	}
	CHECK(failures > 10);
}
