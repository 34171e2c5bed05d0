/*
 * test_colmap.c - column-map profiles: the shipped example, unit factors,
 * and FILE:LINE messages for bad profiles.
 */
#include "test.h"
#include "colmap.h"

static bc_vocab *units(void)
{
	bc_vocab *u = NULL;
	bc_err err = {0};
	bc_vocab__builtin(&u, BC_VOCAB_UNITS, &err);
	return u;
}

/* International foot 0.3048 m and fathom 1.8288 m, both exact: NIST SP 811
 * (2008) App. B; 1959 international yard and pound agreement (check-values.md §10). */
TEST(colmap_example_profile_and_exact_units)
{
	bc_err err = {0};
	bc_vocab *u = units();
	CHECK(u);
	bc_colmap *m = NULL;
	CHECK_OK(bc_colmap__load(&m, "example", u, &err), &err);
	const char *h[] = {"Taxon", "Stage", "Depth (ft)", "Lat", "Ref", "scientificname", "Collector"};
	bc_colplan p;
	/* "scientificname" is a term too, so it clashes with "Taxon" */
	CHECK_INT(bc_colmap__bind(&p, m, h, 7, "s.csv", 1, &err), BC_EINVALID);
	CHECK_STR(err.msg, "s.csv:1: header: columns 'Taxon' and 'scientificname' both give scientificName");
	h[5] = "Bed";
	CHECK_OK(bc_colmap__bind(&p, m, h, 7, "s.csv", 1, &err), &err);
	CHECK_INT(p.term_col[BC_T_SCIENTIFIC_NAME], 0);
	CHECK_INT(p.term_col[BC_T_EARLIEST_STAGE], 1);
	CHECK_INT(p.depth_col, 2);
	CHECK(p.depth_factor == 0.3048);
	CHECK_INT(p.term_col[BC_T_LAT], 3);
	CHECK_INT(p.term_col[BC_T_REFERENCES], 4);
	CHECK_INT(p.term_col[BC_T_BED], 5);
	CHECK_INT(p.col_term[6], -1);
	CHECK_STR(p.defaults[BC_T_TAXON_GROUP], "Crinoidea");
	bc_colplan__free(&p);
	const bc_vocab_term *f = bc_vocab__find(u, "fathom");
	CHECK(f && f->min_m == 1.8288);
	CHECK_NEAR(f->min_m, 6 * 0.3048, 1e-15);
	bc_colmap__free(m);
	bc_vocab__free(u);
}

static const char *parse_error(const char *text)
{
	static bc_err err;
	memset(&err, 0, sizeof err);
	bc_vocab *u = units();
	bc_colmap *m = NULL;
	int rc = bc_colmap__parse(&m, "lab.map", text, strlen(text), u, &err);
	bc_colmap__free(m);
	bc_vocab__free(u);
	return rc ? err.msg : "(accepted)";
}

TEST(colmap_bad_profiles_are_rejected_with_line)
{
	CHECK_STR(parse_error("# ok\ncolumn Stage -> earliestAgeOrLowestStage\n"),
		"lab.map:2: column: expected the header in double quotes: column \"Depth (m)\" -> depth");
	CHECK_STR(parse_error("column \"Stage\" earliestAgeOrLowestStage\n"), "lab.map:1: column: expected '->' after the header");
	CHECK_STR(parse_error("column \"Stage\" -> earliestStage\n"),
		"lab.map:1: term: 'earliestStage' is not an input column (did you mean earliestAgeOrLowestStage?)");
	CHECK_STR(parse_error("column \"D\" -> depth unit furlong\n"),
		"lab.map:1: unit: 'furlong' is not a known depth unit (known: m, metre, meter, km, ft, foot, feet, fathom, fm, us-survey-ft, us-survey-fathom)");
	CHECK_STR(parse_error("column \"Lat\" -> decimalLatitude unit ft\n"), "lab.map:1: unit: only depth columns take a unit, not decimalLatitude");
	CHECK_STR(parse_error("column \"A\" -> genus\n\ncolumn \"A\" -> family\n"), "lab.map:3: column: \"A\" is already mapped on line 1");
	CHECK_STR(parse_error("default taxonGroup Crinoidea\n"), "lab.map:1: default: expected the value in double quotes after taxonGroup");
	CHECK_STR(parse_error("rename \"A\" genus\n"), "lab.map:1: 'rename' is not a map statement (use 'column' or 'default')");
	CHECK_STR(parse_error("column \"unclosed -> genus\n"),
		"lab.map:1: column: expected the header in double quotes: column \"Depth (m)\" -> depth");
	CHECK_STR(parse_error("column \"Say \"\"x\"\"\" -> genus # comment\r\ndefault country \"Norland\"\n"), "(accepted)");
}

TEST(colmap_header_problems)
{
	bc_err err = {0};
	bc_colplan p;
	const char *dup[] = {"genus", "locality", " genus "};
	CHECK_INT(bc_colmap__bind(&p, NULL, dup, 3, "f.csv", 1, &err), BC_EINVALID);
	CHECK_STR(err.msg, "f.csv:1: header: 'genus' appears twice (columns 1 and 3)");
	const char *empty[] = {"genus", ""};
	CHECK_INT(bc_colmap__bind(&p, NULL, empty, 2, "f.csv", 1, &err), BC_EINVALID);
	CHECK_STR(err.msg, "f.csv:1: header: column 2 has no name; give every column a header");
	const char *ok[] = {"dwc:scientificName", "DecimalLatitude"};
	CHECK_OK(bc_colmap__bind(&p, NULL, ok, 2, "f.csv", 1, &err), &err);
	CHECK_INT(p.term_col[BC_T_SCIENTIFIC_NAME], 0);
	CHECK_INT(p.term_col[BC_T_LAT], 1);
	bc_colplan__free(&p);
}
