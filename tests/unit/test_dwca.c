/*
 * test_dwca.c - Darwin Core Archive reading and writing: hand-made archives
 * (folder and zip), the check-values §8 example, and hostile archives
 * (zip slip, absolute paths, zip bombs, DTDs and entities, symlinks).
 */
#include "test.h"
#include "dwca.h"

#include <stdlib.h>
#include <sys/stat.h>
#include <unistd.h>

static void put(const char *dir, const char *name, const char *text)
{
	char p[2048];
	if (snprintf(p, sizeof p, "%s/%s", dir, name) >= (int)sizeof p)
		return;
	FILE *fp = fopen(p, "wb");
	if (fp) {
		fputs(text, fp);
		fclose(fp);
	}
}

/* Zips every regular file of `dir` (flat) into `zip` with Python's zipfile. */
static int zip_dir(const char *dir, const char *zip)
{
	char cmd[2048];
	snprintf(cmd, sizeof cmd,
		"/usr/bin/python3 -c 'import sys,os,zipfile\n"
		"z=zipfile.ZipFile(sys.argv[2],\"w\",zipfile.ZIP_DEFLATED)\n"
		"[z.write(os.path.join(sys.argv[1],f),f) for f in sorted(os.listdir(sys.argv[1]))]\n"
		"z.close()' '%s' '%s'", dir, zip);
	return system(cmd);
}

/* Runs a Python snippet with the zip path as sys.argv[1]. */
static int python_zip(const char *zip, const char *code)
{
	char cmd[4096];
	snprintf(cmd, sizeof cmd, "/usr/bin/python3 -c 'import sys,zipfile\n%s' '%s'", code, zip);
	return system(cmd);
}

static int col(const bc_dwca *a, const char *name)
{
	for (size_t i = 0; i < bc_dwca__ncolumns(a); i++)
		if (strcmp(bc_dwca__column(a, i), name) == 0)
			return (int)i;
	return -1;
}

static const char *val(const bc_dwca *a, const char *name)
{
	int i = col(a, name);
	return i < 0 ? "(no such column)" : bc_dwca__value(a, (size_t)i);
}

static const char *META_FT =
	"<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
	"<archive xmlns=\"http://rs.tdwg.org/dwc/text/\" metadata=\"eml.xml\">\n"
	"  <core rowType=\"http://rs.tdwg.org/dwc/terms/Occurrence\" fieldsTerminatedBy=\"\\t\" fieldsEnclosedBy=\"\" ignoreHeaderLines=\"1\">\n"
	"    <files><location>occ.txt</location></files>\n"
	"    <id index=\"0\"/>\n"
	"    <field index=\"1\" term=\"http://rs.tdwg.org/dwc/terms/scientificName\"/>\n"
	"    <field index=\"2\" term=\"http://rs.tdwg.org/dwc/terms/earliestAgeOrLowestStage\"/>\n"
	"    <field index=\"3\" term=\"https://bathychron.invalid/terms/taxonGroup\" default=\"stalked\"/>\n"
	"    <field term=\"http://rs.tdwg.org/dwc/terms/country\" default=\"Dostrania\"/>\n"
	"  </core>\n"
	"  <extension rowType=\"http://rs.tdwg.org/dwc/terms/MeasurementOrFact\" ignoreHeaderLines=\"1\">\n"
	"    <files><location>mof.csv</location></files>\n"
	"    <coreid index=\"0\"/>\n"
	"    <field index=\"1\" term=\"http://rs.tdwg.org/dwc/terms/measurementType\"/>\n"
	"    <field index=\"2\" term=\"http://rs.tdwg.org/dwc/terms/measurementValue\"/>\n"
	"    <field index=\"3\" term=\"http://rs.tdwg.org/dwc/terms/measurementUnit\"/>\n"
	"  </extension>\n"
	"  <extension rowType=\"http://rs.tdwg.org/chrono/terms/ChronometricAge\" ignoreHeaderLines=\"1\">\n"
	"    <files><location>chrono.csv</location></files>\n"
	"    <coreid index=\"0\"/>\n"
	"    <field index=\"1\" term=\"http://rs.tdwg.org/chrono/terms/earliestChronometricAge\"/>\n"
	"    <field index=\"2\" term=\"http://rs.tdwg.org/chrono/terms/earliestChronometricAgeReferenceSystem\"/>\n"
	"    <field index=\"3\" term=\"http://rs.tdwg.org/chrono/terms/latestChronometricAge\"/>\n"
	"    <field index=\"4\" term=\"http://rs.tdwg.org/chrono/terms/latestChronometricAgeReferenceSystem\"/>\n"
	"  </extension>\n"
	"</archive>\n";

/* A small archive: two occurrences, palaeodepth in feet and fathoms,
 * preservation, ages in ka and Ma, one unmapped measurement, one orphan. */
static const char *make_small(void)
{
	const char *d = test_tmpdir();
	put(d, "meta.xml", META_FT);
	put(d, "eml.xml", "<?xml version=\"1.0\"?><eml:eml xmlns:eml=\"eml://ecoinformatics.org/eml-2.1.1\"><dataset><title>Invented</title></dataset></eml:eml>\n");
	put(d, "occ.txt", "id\tname\tstage\tgroup\n"
		"A1\tSomnicrinus fictilis\tToarcian\t\n"
		"A2\tVanitocrinus \"placidus\"\tAalenian\tfree\n");
	put(d, "mof.csv", "coreid,type,value,unit\n"
		"A1,minimum palaeodepth,100,ft\n"
		"A1,Maximum_Paleodepth,\"50\",fathoms\n"
		"A1,preservation mode,calyx,\n"
		"A1,stem length,\"12,5\",mm\n"
		"A2,palaeodepth,200-400,m\n"
		"ZZ,palaeodepth,5,m\n");
	put(d, "chrono.csv", "coreid,e,ers,l,lrs\n"
		"A1,182000,ka,181.5,Ma\n");
	return d;
}

static void check_small(bc_dwca *a, const char *where_core)
{
	bc_err err = {0};
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(bc_dwca__where(a), where_core);
	CHECK_INT(bc_dwca__line(a), 2);
	CHECK(bc_dwca__problem(a, NULL) == NULL);
	CHECK_STR(val(a, "occurrenceID"), "A1");
	CHECK_STR(val(a, "scientificName"), "Somnicrinus fictilis");
	CHECK_STR(val(a, "taxonGroup"), "stalked"); /* default for an empty cell */
	CHECK_STR(val(a, "country"), "Dostrania"); /* constant */
	/* 100 ft = 30.48 m; 50 fathoms = 91.44 m (1 ft = 0.3048 m exactly, 1 fathom = 6 ft; NIST HB 44 App. C) */
	CHECK_STR(val(a, "minimumPaleodepthInMeters"), "30.48");
	CHECK_STR(val(a, "maximumPaleodepthInMeters"), "91.44");
	CHECK_STR(val(a, "preservationMode"), "calyx");
	CHECK_STR(val(a, "earliestChronometricAge"), "182"); /* 182000 ka */
	CHECK_STR(val(a, "latestChronometricAge"), "181.5");
	CHECK_STR(val(a, "measurementOrFact"),
		"[{\"measurementType\":\"stem length\",\"measurementValue\":\"12,5\",\"measurementUnit\":\"mm\"}]");
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_INT(bc_dwca__line(a), 3);
	CHECK_STR(val(a, "scientificName"), "Vanitocrinus \"placidus\""); /* no quote character: quotes are data */
	CHECK_STR(val(a, "taxonGroup"), "free");
	CHECK_STR(val(a, "minimumPaleodepthInMeters"), "200");
	CHECK_STR(val(a, "maximumPaleodepthInMeters"), "400");
	CHECK_STR(val(a, "earliestChronometricAge"), "");
	/* the orphan extension row is a record with a problem, not lost */
	CHECK_INT(bc_dwca__next(a, &err), 1);
	const char *field = NULL;
	const char *p = bc_dwca__problem(a, &field);
	CHECK(p != NULL);
	CHECK_STR(field, "coreid");
	CHECK_STR(p, "'ZZ' matches no row of occ.txt");
	CHECK(strstr(bc_dwca__where(a), "/mof.csv") != NULL);
	CHECK_INT(bc_dwca__line(a), 7);
	CHECK(strstr(val(a, "measurementOrFact"), "\"ZZ\"") == NULL);
	CHECK(strstr(val(a, "measurementOrFact"), "palaeodepth") != NULL);
	CHECK_INT(bc_dwca__next(a, &err), 0);
}

TEST(dwca_folder_joins_extensions)
{
	bc_err err = {0};
	bc_dwca *a = NULL;
	const char *d = make_small();
	CHECK_OK(bc_dwca__open(&a, d, "small", NULL, &err), &err);
	CHECK(strstr(bc_dwca__metadata(a), "<title>Invented</title>") != NULL);
	CHECK_INT(strlen(bc_dwca__sha256(a)), 64);
	check_small(a, "small/occ.txt");
	bc_dwca__free(a);
}

TEST(dwca_zip_same_as_folder)
{
	bc_err err = {0};
	bc_dwca *a = NULL, *b = NULL;
	const char *d = make_small();
	char zip[1024];
	snprintf(zip, sizeof zip, "%s.zip", d);
	CHECK_INT(zip_dir(d, zip), 0);
	CHECK(bc_dwca__detect(zip));
	CHECK(bc_dwca__detect(d));
	CHECK_OK(bc_dwca__open(&a, zip, "small.zip", NULL, &err), &err);
	CHECK_OK(bc_dwca__open(&b, d, "small", NULL, &err), &err);
	/* the same content hashes the same, zipped or not */
	CHECK_STR(bc_dwca__sha256(a), bc_dwca__sha256(b));
	bc_dwca__free(b);
	check_small(a, "small.zip/occ.txt");
	bc_dwca__free(a);
}

TEST(dwca_zip_with_top_folder)
{
	bc_err err = {0};
	bc_dwca *a = NULL;
	const char *d = make_small();
	char zip[1024];
	snprintf(zip, sizeof zip, "%s/../nested.zip", d);
	char code[1024];
	snprintf(code, sizeof code,
		"import os\nz=zipfile.ZipFile(sys.argv[1],\"w\")\n"
		"[z.write(os.path.join(\"%s\",f),\"top/\"+f) for f in os.listdir(\"%s\")]\nz.close()", d, d);
	CHECK_INT(python_zip(zip, code), 0);
	CHECK_OK(bc_dwca__open(&a, zip, "nested.zip", NULL, &err), &err);
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(val(a, "minimumPaleodepthInMeters"), "30.48");
	bc_dwca__free(a);
}

/* The worked example of check-values §8d (tests/fixtures/dwca-example). */
TEST(dwca_check_values_example)
{
	bc_err err = {0};
	bc_dwca *a = NULL;
	CHECK_OK(bc_dwca__open(&a, test_path("fixtures/dwca-example"), "dwca-example", NULL, &err), &err);
	CHECK_STR(bc_dwca__metadata(a), ""); /* metadata="eml.xml" names a file the example does not ship */
	CHECK(col(a, "basisOfRecord") < 0); /* FossilSpecimen for every row is implied */
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(bc_dwca__where(a), "dwca-example/occurrence.txt");
	CHECK_INT(bc_dwca__line(a), 2);
	CHECK_STR(val(a, "occurrenceID"), "occ-1");
	CHECK_STR(val(a, "individualCount"), "3");
	CHECK_STR(val(a, "verbatimSRS"), "EPSG:4326");
	CHECK_STR(val(a, "geodeticDatum"), "EPSG:4326");
	CHECK_STR(val(a, "earliestAgeOrLowestStage"), "Toarcian");
	CHECK_STR(val(a, "minimumDepthInMeters"), "10"); /* present-day depth, kept as its own column */
	CHECK_STR(val(a, "associatedReferences"), "Author A (2000) Example. J. Test 1:1-2");
	CHECK_STR(val(a, "measurementOrFact"),
		"[{\"measurementType\":\"regenerating arms\",\"measurementValue\":\"1\",\"measurementUnit\":\"count\"}]");
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(val(a, "occurrenceID"), "occ-2");
	CHECK_STR(val(a, "verbatimCoordinates"), "577274.99 69740.50");
	CHECK_STR(val(a, "verbatimSRS"), "EPSG:27700");
	CHECK_STR(val(a, "latestAgeOrHighestStage"), "Bajocian");
	CHECK_STR(val(a, "decimalLatitude"), "");
	CHECK_INT(bc_dwca__next(a, &err), 0);
	bc_dwca__free(a);
}

TEST(dwca_problems_in_extensions)
{
	bc_err err = {0};
	bc_dwca *a = NULL;
	const char *d = test_tmpdir();
	put(d, "meta.xml", META_FT);
	put(d, "occ.txt", "id\tname\tstage\tgroup\nB1\tX\tToarcian\t\nB2\tY\tToarcian\t\nB3\tZ\tToarcian\t\n");
	put(d, "mof.csv", "coreid,type,value,unit\nB1,minimum palaeodepth,100,league\nB2,palaeodepth,deep,m\n"
		"B3,palaeodepth,10,m\nB3,minimum palaeodepth,20,m\n");
	put(d, "chrono.csv", "coreid,e,ers,l,lrs\nB1,3,,,\nB2,1000,AD,,\n");
	CHECK_OK(bc_dwca__open(&a, d, "p", NULL, &err), &err);
	const char *field = NULL;
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(bc_dwca__problem(a, &field), "unit 'league' of a palaeodepth is not known (m, ft or fathom) (p/mof.csv:2)");
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(bc_dwca__problem(a, &field), "palaeodepth 'deep' is not a number or a range A-B (p/mof.csv:3)");
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(bc_dwca__problem(a, &field), "'20' here disagrees with '10' given for the same occurrence (p/mof.csv:5)");
	CHECK_STR(field, "minimumPaleodepthInMeters");
	CHECK_INT(bc_dwca__next(a, &err), 0);
	bc_dwca__free(a);
	/* chrono reference systems */
	put(d, "mof.csv", "coreid,type,value,unit\n");
	CHECK_OK(bc_dwca__open(&a, d, "p", NULL, &err), &err);
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(bc_dwca__problem(a, &field), "missing: say in which units the age is given (Ma, ka or years BP) (p/chrono.csv:2)");
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(bc_dwca__problem(a, &field), "'AD' is not a reference system this tool converts (Ma, ka, years BP) (p/chrono.csv:3)");
	bc_dwca__free(a);
}

TEST(dwca_core_conflict_and_width)
{
	bc_err err = {0};
	bc_dwca *a = NULL;
	const char *d = test_tmpdir();
	put(d, "meta.xml",
		"<archive xmlns=\"http://rs.tdwg.org/dwc/text/\">"
		"<core rowType=\"http://rs.tdwg.org/dwc/terms/Occurrence\" ignoreHeaderLines=\"1\">"
		"<files><location>o.csv</location></files><id index=\"0\"/>"
		"<field index=\"1\" term=\"https://bathychron.invalid/terms/preservationMode\"/></core>"
		"<extension rowType=\"http://rs.iobis.org/obis/terms/ExtendedMeasurementOrFact\">"
		"<files><location>m.csv</location></files><coreid index=\"0\"/>"
		"<field index=\"1\" term=\"http://rs.tdwg.org/dwc/terms/measurementType\"/>"
		"<field index=\"2\" term=\"http://rs.tdwg.org/dwc/terms/measurementValue\"/></extension></archive>");
	put(d, "o.csv", "id,pres,notes\r\nC1,crown,\"kept,\r\nacross lines\"\r\nC2,calyx,x,surplus\r\nC1,crown,\r\n");
	put(d, "m.csv", "C1,preservation,columnal\nC2,preservation,calyx\n");
	CHECK_OK(bc_dwca__open(&a, d, "w", NULL, &err), &err);
	const char *field = NULL;
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(val(a, "notes"), "kept,\r\nacross lines"); /* an undescribed column, named by the header, kept */
	CHECK_STR(bc_dwca__problem(a, &field), "'columnal' here disagrees with 'crown' given for the same occurrence (w/m.csv:1)");
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_INT(bc_dwca__line(a), 4);
	CHECK_STR(bc_dwca__problem(a, &field), "4 fields, but meta.xml and the header describe 3");
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(bc_dwca__problem(a, &field), "'C1' is also the id of the row on line 2; extension rows cannot be told apart");
	CHECK_STR(field, "id");
	CHECK_INT(bc_dwca__next(a, &err), 0);
	bc_dwca__free(a);
}

TEST(dwca_latin1_encoding)
{
	bc_err err = {0};
	bc_dwca *a = NULL;
	const char *d = test_tmpdir();
	put(d, "meta.xml",
		"<archive xmlns=\"http://rs.tdwg.org/dwc/text/\">"
		"<core rowType=\"http://rs.tdwg.org/dwc/terms/Occurrence\" encoding=\"ISO-8859-1\" fieldsTerminatedBy=\";\">"
		"<files><location>o.csv</location></files>"
		"<field index=\"0\" term=\"http://rs.tdwg.org/dwc/terms/earliestAgeOrLowestStage\"/></core></archive>");
	put(d, "o.csv", "Aal\xe9nien;\n");
	CHECK_OK(bc_dwca__open(&a, d, "l", NULL, &err), &err);
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(val(a, "earliestAgeOrLowestStage"), "Aal\xc3\xa9nien");
	bc_dwca__free(a);
	/* the same bytes declared UTF-8 are refused with file and line */
	put(d, "meta.xml",
		"<archive xmlns=\"http://rs.tdwg.org/dwc/text/\">"
		"<core rowType=\"http://rs.tdwg.org/dwc/terms/Occurrence\">"
		"<files><location>o.csv</location></files>"
		"<field index=\"0\" term=\"http://rs.tdwg.org/dwc/terms/earliestAgeOrLowestStage\"/></core></archive>");
	put(d, "o.csv", "Toarcian\nAal\xe9nien\n");
	CHECK_INT(bc_dwca__open(&a, d, "l", NULL, &err), BC_EINVALID);
	CHECK_STR(err.msg, "l/o.csv:2: encoding: not valid UTF-8 (meta.xml declares UTF-8)");
}

TEST(dwca_meta_errors)
{
	bc_err err = {0};
	bc_dwca *a = NULL;
	const char *d = test_tmpdir();
	put(d, "o.csv", "x\n");
	put(d, "meta.xml", "<archive xmlns=\"http://rs.tdwg.org/dwc/text/\">\n<core>\n<files><location>o.csv</location></files></core></archive>");
	CHECK_INT(bc_dwca__open(&a, d, "m", NULL, &err), BC_EINVALID);
	CHECK_STR(err.msg, "m/meta.xml:2: core: attribute rowType is required");
	put(d, "meta.xml", "<archive xmlns=\"http://rs.tdwg.org/dwc/text/\">\n<core rowType=\"http://rs.tdwg.org/dwc/terms/Taxon\">"
		"<files><location>o.csv</location></files></core></archive>");
	CHECK_INT(bc_dwca__open(&a, d, "m", NULL, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "m/meta.xml:2: core: rowType 'http://rs.tdwg.org/dwc/terms/Taxon': only an Occurrence core") == err.msg);
	put(d, "meta.xml", "<archive xmlns=\"http://rs.tdwg.org/dwc/text/\">\n<core rowType=\"http://rs.tdwg.org/dwc/terms/Occurrence\">"
		"<files><location>o.csv</location></files>\n<field index=\"x\" term=\"t\"/></core></archive>");
	CHECK_INT(bc_dwca__open(&a, d, "m", NULL, &err), BC_EINVALID);
	CHECK_STR(err.msg, "m/meta.xml:3: field: index 'x' is not a column number");
	put(d, "meta.xml", "<archive xmlns=\"http://rs.tdwg.org/dwc/text/\">\n<core rowType=\"x\"\n</archive>");
	CHECK_INT(bc_dwca__open(&a, d, "m", NULL, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "m/meta.xml:3: XML: not well-formed") == err.msg);
	put(d, "meta.xml", "<archive xmlns=\"http://rs.tdwg.org/dwc/text/\"><core rowType=\"http://rs.tdwg.org/dwc/terms/Occurrence\">"
		"<files><location>missing.csv</location></files></core></archive>");
	CHECK_INT(bc_dwca__open(&a, d, "m", NULL, &err), BC_EINVALID);
	CHECK_STR(err.msg, "m/missing.csv: file named in meta.xml is missing");
	CHECK(a == NULL);
}

/* ---- hostile archives ---- */

TEST(dwca_refuses_doctype_and_entities)
{
	bc_err err = {0};
	bc_dwca *a = NULL;
	const char *d = test_tmpdir();
	put(d, "o.csv", "x\n");
	/* "billion laughs" entity expansion */
	put(d, "meta.xml", "<?xml version=\"1.0\"?>\n<!DOCTYPE archive [\n<!ENTITY a \"aaaaaaaaaa\">\n"
		"<!ENTITY b \"&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;\">]>\n"
		"<archive xmlns=\"http://rs.tdwg.org/dwc/text/\"><core rowType=\"&b;\"><files><location>o.csv</location></files></core></archive>");
	CHECK_INT(bc_dwca__open(&a, d, "h", NULL, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "h/meta.xml:2: DOCTYPE: refused") == err.msg);
	/* external entity */
	put(d, "meta.xml", "<?xml version=\"1.0\"?>\n<!DOCTYPE archive [<!ENTITY x SYSTEM \"file:///etc/passwd\">]>\n"
		"<archive xmlns=\"http://rs.tdwg.org/dwc/text/\"><core rowType=\"&x;\"><files><location>o.csv</location></files></core></archive>");
	CHECK_INT(bc_dwca__open(&a, d, "h", NULL, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "DOCTYPE: refused") != NULL);
	/* external DTD */
	put(d, "meta.xml", "<?xml version=\"1.0\"?>\n<!DOCTYPE archive SYSTEM \"http://example.invalid/x.dtd\">\n"
		"<archive xmlns=\"http://rs.tdwg.org/dwc/text/\"/>");
	CHECK_INT(bc_dwca__open(&a, d, "h", NULL, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "DOCTYPE: refused") != NULL);
	/* a hostile eml.xml refuses the archive too */
	put(d, "meta.xml", "<archive xmlns=\"http://rs.tdwg.org/dwc/text/\" metadata=\"eml.xml\"><core rowType=\"http://rs.tdwg.org/dwc/terms/Occurrence\">"
		"<files><location>o.csv</location></files><field index=\"0\" term=\"http://rs.tdwg.org/dwc/terms/bed\"/></core></archive>");
	put(d, "eml.xml", "<?xml version=\"1.0\"?>\n<!DOCTYPE eml [<!ENTITY x SYSTEM \"file:///etc/passwd\">]><eml>&x;</eml>");
	CHECK_INT(bc_dwca__open(&a, d, "h", NULL, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "h/eml.xml:2: DOCTYPE: refused") == err.msg);
	CHECK(a == NULL);
}

TEST(dwca_refuses_paths_leaving_folder)
{
	bc_err err = {0};
	bc_dwca *a = NULL;
	const char *d = test_tmpdir();
	char sub[1024];
	snprintf(sub, sizeof sub, "%s/arch", d);
	mkdir(sub, 0777);
	put(d, "secret.txt", "outside\n");
	static const char *locs[] = {"../secret.txt", "/etc/hostname", "http://example.invalid/o.csv", "a\\b.csv"};
	static const char *why[] = {"'..' leaves the archive folder", "an absolute path", "a URL", "a backslash"};
	for (int i = 0; i < 4; i++) {
		char meta[1024];
		snprintf(meta, sizeof meta, "<archive xmlns=\"http://rs.tdwg.org/dwc/text/\"><core rowType=\"http://rs.tdwg.org/dwc/terms/Occurrence\">"
			"<files><location>%s</location></files><field index=\"0\" term=\"http://rs.tdwg.org/dwc/terms/bed\"/></core></archive>", locs[i]);
		put(sub, "meta.xml", meta);
		CHECK_INT(bc_dwca__open(&a, sub, "arch", NULL, &err), BC_EINVALID);
		CHECK_MSG(strstr(err.msg, why[i]) != NULL, "%s: %s", locs[i], err.msg);
	}
	/* a symbolic link that leads out of the folder */
	char link[1100], target[1100];
	snprintf(link, sizeof link, "%s/o.csv", sub);
	snprintf(target, sizeof target, "%s/secret.txt", d);
	CHECK_INT(symlink(target, link), 0);
	put(sub, "meta.xml", "<archive xmlns=\"http://rs.tdwg.org/dwc/text/\"><core rowType=\"http://rs.tdwg.org/dwc/terms/Occurrence\">"
		"<files><location>o.csv</location></files><field index=\"0\" term=\"http://rs.tdwg.org/dwc/terms/bed\"/></core></archive>");
	CHECK_INT(bc_dwca__open(&a, sub, "arch", NULL, &err), BC_EINVALID);
	CHECK_STR(err.msg, "arch/o.csv: refused: a symbolic link leads out of the archive folder");
}

static const char *ZIP_META =
	"<archive xmlns=\"http://rs.tdwg.org/dwc/text/\"><core rowType=\"http://rs.tdwg.org/dwc/terms/Occurrence\">"
	"<files><location>o.csv</location></files><field index=\"0\" term=\"http://rs.tdwg.org/dwc/terms/bed\"/></core></archive>";

static int hostile_zip(const char *zip, const char *extra_code)
{
	char code[3000];
	snprintf(code, sizeof code,
		"z=zipfile.ZipFile(sys.argv[1],\"w\",zipfile.ZIP_DEFLATED)\n"
		"z.writestr(\"meta.xml\",%s%s%s)\nz.writestr(\"o.csv\",\"bed 1\\n\")\n%s\nz.close()",
		"'\"'\"'", ZIP_META, "'\"'\"'", extra_code);
	return python_zip(zip, code);
}

TEST(dwca_refuses_zip_slip)
{
	bc_err err = {0};
	bc_dwca *a = NULL;
	const char *d = test_tmpdir();
	char zip[1024];
	snprintf(zip, sizeof zip, "%s/slip.zip", d);
	CHECK_INT(hostile_zip(zip, "z.writestr(\"../evil\",\"x\")"), 0);
	CHECK_INT(bc_dwca__open(&a, zip, "slip.zip", NULL, &err), BC_EINVALID);
	CHECK_STR(err.msg, "slip.zip: entry '../evil': refused: '..' leaves the archive folder; nothing was imported");
	snprintf(zip, sizeof zip, "%s/abs.zip", d);
	CHECK_INT(hostile_zip(zip, "z.writestr(\"/etc/evil\",\"x\")"), 0);
	CHECK_INT(bc_dwca__open(&a, zip, "abs.zip", NULL, &err), BC_EINVALID);
	CHECK_STR(err.msg, "abs.zip: entry '/etc/evil': refused: an absolute path; nothing was imported");
	snprintf(zip, sizeof zip, "%s/link.zip", d);
	CHECK_INT(hostile_zip(zip, "i=zipfile.ZipInfo(\"l\")\ni.external_attr=(0o120777<<16)\nz.writestr(i,\"/etc/passwd\")"), 0);
	CHECK_INT(bc_dwca__open(&a, zip, "link.zip", NULL, &err), BC_EINVALID);
	CHECK_STR(err.msg, "link.zip: entry 'l': refused: a symbolic link; nothing was imported");
	/* the same archive without the hostile entry opens */
	snprintf(zip, sizeof zip, "%s/fine.zip", d);
	CHECK_INT(hostile_zip(zip, ""), 0);
	CHECK_OK(bc_dwca__open(&a, zip, "fine.zip", NULL, &err), &err);
	CHECK_INT(bc_dwca__next(a, &err), 1);
	CHECK_STR(val(a, "bed"), "bed 1");
	bc_dwca__free(a);
}

TEST(dwca_refuses_zip_bombs)
{
	bc_err err = {0};
	bc_dwca *a = NULL;
	const char *d = test_tmpdir();
	char zip[1024];
	/* 8 MiB of zeros deflate to about 8 KiB: a ratio near 1000:1 */
	snprintf(zip, sizeof zip, "%s/bomb.zip", d);
	CHECK_INT(hostile_zip(zip, "z.writestr(\"zeros.bin\",bytes(8<<20))"), 0);
	bc_dwca_limits lim = BC_DWCA_LIMITS_INIT;
	lim.max_ratio = 100;
	CHECK_INT(bc_dwca__open(&a, zip, "bomb.zip", &lim, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "bomb.zip/zeros.bin: refused: declared compression ratio") == err.msg);
	CHECK(strstr(err.msg, "possible zip bomb") != NULL);
	/* declared size over the per-entry limit */
	lim = (bc_dwca_limits)BC_DWCA_LIMITS_INIT;
	lim.max_entry = 1 << 20;
	CHECK_INT(bc_dwca__open(&a, zip, "bomb.zip", &lim, &err), BC_EINVALID);
	CHECK_STR(err.msg, "bomb.zip/zeros.bin: refused: declared uncompressed size 8388608 bytes is over the limit of 1048576 bytes (possible zip bomb); nothing was imported");
	/* declared total over the limit */
	lim = (bc_dwca_limits)BC_DWCA_LIMITS_INIT;
	lim.max_total = 1 << 20;
	lim.max_ratio = 1e9;
	CHECK_INT(bc_dwca__open(&a, zip, "bomb.zip", &lim, &err), BC_EINVALID);
	CHECK(strstr(err.msg, "declared uncompressed size of all entries") != NULL);
	/* a directory entry that lies (declares 100 bytes for 8 MiB): the
	 * actual size read is checked too */
	snprintf(zip, sizeof zip, "%s/liar.zip", d);
	CHECK_INT(python_zip(zip,
		"import struct\n"
		"z=zipfile.ZipFile(sys.argv[1],\"w\",zipfile.ZIP_DEFLATED)\n"
		"z.writestr(\"meta.xml\",\"<archive xmlns=\\\"http://rs.tdwg.org/dwc/text/\\\"><core rowType=\\\"http://rs.tdwg.org/dwc/terms/Occurrence\\\">"
		"<files><location>o.csv</location></files><field index=\\\"0\\\" term=\\\"http://rs.tdwg.org/dwc/terms/bed\\\"/></core></archive>\")\n"
		"z.writestr(\"o.csv\",bytes(8<<20))\nz.close()\n"
		"b=bytearray(open(sys.argv[1],\"rb\").read())\n"
		"for sig,off in ((b\"PK\\x03\\x04\",22),(b\"PK\\x01\\x02\",24)):\n"
		"  i=b.find(sig,0)\n"
		"  while i>=0:\n"
		"    n=struct.unpack_from(\"<H\",b,i+(26 if sig==b\"PK\\x03\\x04\" else 28))[0]\n"
		"    name=b[i+(30 if sig==b\"PK\\x03\\x04\" else 46):][:n]\n"
		"    if name==b\"o.csv\": struct.pack_into(\"<I\",b,i+off,100)\n"
		"    i=b.find(sig,i+4)\n"
		"open(sys.argv[1],\"wb\").write(b)"), 0);
	lim = (bc_dwca_limits)BC_DWCA_LIMITS_INIT;
	lim.max_entry = 1 << 20;
	lim.max_ratio = 1e9;
	CHECK_INT(bc_dwca__open(&a, zip, "liar.zip", &lim, &err), BC_EINVALID);
	CHECK(a == NULL);
	CHECK(strstr(err.msg, "liar.zip/o.csv: refused: actual uncompressed size (read so far) ") == err.msg);
}

/* Writing: an archive written by bc_dwca__write reads back to the same values. */
TEST(dwca_write_reads_back)
{
	bc_err err = {0};
	bc_dwca *a = NULL;
	const char *d = test_tmpdir();
	const char *cols[] = {"occurrenceID", "scientificName", "taxonGroup", "earliestChronometricAge",
		"latestChronometricAge", "minimumPaleodepthInMeters", "collector notes", "preservationMode"};
	const char *rows[] = {
		"D1", "Somnicrinus fictilis", "stalked", "83.6", "72.1", "250", "said \"many\", maybe", "calyx",
		"D2", "Ficticrinus placidus", "free", "", "", "", "two\nlines", "=not a formula",
	};
	for (int z = 0; z < 2; z++) {
		char path[1024];
		snprintf(path, sizeof path, "%s/out%s", d, z ? ".zip" : "");
		CHECK_OK(bc_dwca__write(path, cols, 8, rows, 2, NULL, &err), &err);
		CHECK_INT(bc_dwca__write(path, cols, 8, rows, 2, NULL, &err), BC_EEXISTS);
		CHECK_OK(bc_dwca__open(&a, path, "out", NULL, &err), &err);
		CHECK(strstr(bc_dwca__metadata(a), "interpretations") != NULL);
		CHECK(col(a, "basisOfRecord") < 0);
		for (int r = 0; r < 2; r++) {
			CHECK_INT(bc_dwca__next(a, &err), 1);
			CHECK(bc_dwca__problem(a, NULL) == NULL);
			for (int c = 0; c < 8; c++)
				CHECK_STR(val(a, cols[c]), rows[r * 8 + c]);
		}
		CHECK_INT(bc_dwca__next(a, &err), 0);
		bc_dwca__free(a);
		a = NULL;
	}
}

/* Every allocation in opening, reading and writing may fail without a
 * crash or a leak (the sanitizer build checks the leaks). */
TEST(dwca_out_of_memory)
{
	const char *d = make_small();
	int failures = 0, completed = 0;
	for (long k = 1; k < 1200; k++) {
		bc_err err = {0};
		bc_dwca *a = NULL;
		bc__alloc_fail_after(k);
		int rc = bc_dwca__open(&a, d, "small", NULL, &err);
		if (rc == BC_OK) {
			while ((rc = bc_dwca__next(a, &err)) == 1)
				;
			if (rc == 0)
				completed++;
		} else {
			CHECK(a == NULL);
		}
		if (rc < 0) {
			CHECK_MSG(rc == BC_ENOMEM, "allocation %ld: %d %s", k, rc, err.msg);
			failures++;
		}
		bc__alloc_fail_after(0);
		bc_dwca__free(a);
	}
	CHECK(failures > 0);
	CHECK(completed > 0);
	const char *cols[] = {"occurrenceID", "earliestChronometricAge", "notes"};
	const char *rows[] = {"E1", "70", "x,y"};
	for (long k = 1; k < 200; k++) {
		bc_err err = {0};
		char path[1024];
		snprintf(path, sizeof path, "%s/w%ld.zip", d, k);
		bc__alloc_fail_after(k);
		int rc = bc_dwca__write(path, cols, 3, rows, 1, NULL, &err);
		bc__alloc_fail_after(0);
		CHECK_MSG(rc == BC_OK || rc == BC_ENOMEM, "write with allocation %ld failing: %d %s", k, rc, err.msg);
	}
}
