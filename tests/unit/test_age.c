/*
 * test_age.c - unit tests of the age resolver (age.c) and text folding
 * (text.c), on the hand-made chart of age_chart.c, plus the runner of the
 * table-driven cases in tests/unit/resolve.cases.
 */
#include "test.h"
#include "age_chart.h"
#include "internal.h"
#include "text.h"

#include <stdlib.h>

/* A resolver over the test chart; both freed by age_done. */
static bc_chart *t_chart;
static bc_resolver *t_res;

static bc_resolver *age_setup(void)
{
	bc_err err = {0};
	t_chart = age_test_chart();
	if (!t_chart || bc_resolver_new(&t_res, t_chart, &err) != 0) {
		fprintf(stderr, "age_setup: %s\n", err.msg);
		return NULL;
	}
	return t_res;
}

static void age_done(void)
{
	bc_resolver_free(t_res);
	bc_chart_free(t_chart);
	t_res = NULL;
	t_chart = NULL;
}

static int write_file(const char *path, const char *text)
{
	FILE *f = fopen(path, "w");
	if (!f)
		return -1;
	fputs(text, f);
	return fclose(f);
}

TEST(age_status_names)
{
	CHECK_STR(bc_age_status_name(BC_AGE_EXACT), "exact");
	CHECK_STR(bc_age_status_name(BC_AGE_ALIAS), "alias");
	CHECK_STR(bc_age_status_name(BC_AGE_RANGE), "range");
	CHECK_STR(bc_age_status_name(BC_AGE_QUALIFIED), "qualified");
	CHECK_STR(bc_age_status_name(BC_AGE_NUMERIC), "numeric");
	CHECK_STR(bc_age_status_name(BC_AGE_UNKNOWN), "unknown");
	CHECK_STR(bc_age_status_name((bc_age_status)99), "unknown");
}

TEST(text_fold_forms)
{
	char a[256], b[256];
	/* NFC and NFD fold alike; case and diacritics go; dashes and spaces unify. */
	CHECK(bc_text__fold("Cr\xc3\xa9tac\xc3\xa9", 10, a, sizeof a, NULL) > 0);
	CHECK(bc_text__fold("CRE\xcc\x81TACE\xcc\x81", 12, b, sizeof b, NULL) > 0);
	CHECK_STR(a, "cretace");
	CHECK_STR(b, "cretace");
	const char *dash = "Campanian\xe2\x80\x94\xe2\x80\x83Maastrichtian\xc2\xa0 ";
	CHECK(bc_text__fold(dash, strlen(dash), a, sizeof a, NULL) > 0);
	CHECK_STR(a, "campanian- maastrichtian");
	size_t bad = 99;
	CHECK_INT(bc_text__fold("ab\xc3(", 4, a, sizeof a, &bad), -1);
	CHECK_INT(bad, 2);
	CHECK_INT(bc_text__fold("abcdef", 6, a, 4, NULL), -2);
	strcpy(a, "mid.-cretaceous (s.l.)");
	bc_text__key(a);
	CHECK_STR(a, "mid cretaceous s l");
}

TEST(text_edit_distance)
{
	CHECK_INT(bc_text__edit_distance("kitten", "sitting", 10), 3);
	CHECK_INT(bc_text__edit_distance("", "abc", 10), 3);
	CHECK_INT(bc_text__edit_distance("same", "same", 0), 0);
	CHECK_INT(bc_text__edit_distance("abcdef", "uvwxyz", 2), 3); /* stops at max + 1 */
	/* counted in code points, not bytes */
	CHECK_INT(bc_text__edit_distance("cr\xc3\xa9tac\xc3\xa9", "cretace", 5), 2);
}

TEST(age_exact_and_labels)
{
	bc_resolver *r = age_setup();
	bc_age a;
	CHECK(r);
	CHECK_OK(bc_age_resolve(r, "Maastrichtien", &a), &(bc_err){0});
	CHECK_INT(a.status, BC_AGE_EXACT);
	CHECK_STR(a.from, "Maastrichtian");
	CHECK_STR(a.to, "Maastrichtian");
	CHECK_NEAR(a.older_ma, 72.2, 1e-9);
	CHECK_NEAR(a.younger_ma, 66.0, 1e-9);
	CHECK_INT(a.uncertain, 0);
	CHECK_STR(a.note, "");
	CHECK_STR(bc_chart_name(bc_resolver_chart(r)), "test-chart");
	age_done();
}

TEST(age_cache_is_consistent)
{
	bc_resolver *r = age_setup();
	bc_age a, b, c;
	CHECK(r);
	bc_age_resolve(r, "late Campanian", &a);
	bc_age_resolve(r, "late Campanian", &b);  /* raw-text cache */
	bc_age_resolve(r, "LATE  campanian", &c); /* folded-text cache */
	CHECK(memcmp(&a, &b, sizeof a) == 0 || (a.status == b.status && strcmp(a.note, b.note) == 0));
	CHECK_INT(c.status, BC_AGE_QUALIFIED);
	CHECK_NEAR(c.older_ma, a.older_ma, 0);
	CHECK_STR(c.note, a.note);
	age_done();
}

TEST(age_pair_columns)
{
	bc_resolver *r = age_setup();
	bc_age a;
	CHECK(r);
	bc_age_resolve_pair(r, "Campanian", "Maastrichtian", &a);
	CHECK_INT(a.status, BC_AGE_RANGE);
	CHECK_STR(a.from, "Campanian");
	CHECK_STR(a.to, "Maastrichtian");
	CHECK_NEAR(a.older_ma, 83.6, 1e-9);
	CHECK_NEAR(a.younger_ma, 66.0, 1e-9);
	bc_age_resolve_pair(r, "Maastrichtian", "Campanian", &a); /* columns swapped */
	CHECK_INT(a.status, BC_AGE_RANGE);
	CHECK_STR(a.from, "Campanian");
	CHECK(strstr(a.note, "put in order"));
	bc_age_resolve_pair(r, "Campanian", "", &a);
	CHECK_INT(a.status, BC_AGE_EXACT);
	bc_age_resolve_pair(r, NULL, "?Maastrichtian", &a);
	CHECK_INT(a.status, BC_AGE_EXACT);
	CHECK_INT(a.uncertain, 1);
	bc_age_resolve_pair(r, "Campanian", "Campanian", &a);
	CHECK_INT(a.status, BC_AGE_EXACT);
	bc_age_resolve_pair(r, "Campanian", "Maastrichxian", &a);
	CHECK_INT(a.status, BC_AGE_UNKNOWN);
	CHECK(strstr(a.note, "latest: not recognised"));
	CHECK(isnan(a.older_ma));
	bc_age_resolve_pair(r, NULL, NULL, &a);
	CHECK_INT(a.status, BC_AGE_UNKNOWN);
	age_done();
}

TEST(age_aliases_skipped_for_small_chart)
{
	bc_resolver *r = age_setup();
	const char *first = NULL;
	CHECK(r);
	/* The shipped table names stages this small chart lacks: skipped, counted. */
	CHECK(bc_resolver_aliases_skipped(r, &first) > 0);
	CHECK(first && *first);
	CHECK(bc_resolver_alias_count(r) > 10);
	age_done();
}

TEST(age_aliases_file_extends_and_overrides)
{
	bc_resolver *r = age_setup();
	bc_err err = {0};
	bc_age a;
	char path[512];
	CHECK(r);
	snprintf(path, sizeof path, "%s/a.tsv", test_tmpdir());
	CHECK(write_file(path, "# local names\nalias\tolder\tyounger\tnote\tsource\n"
		"Senonian\tSantonian\tCampanian\tlocal usage\tinvented for the test\n"
		"Kreidezeit-Oben\tCampanian\tMaastrichtian\t\tinvented for the test\n") == 0);
	bc_age_resolve(r, "Senonian", &a); /* cached before the load ... */
	CHECK_NEAR(a.older_ma, 89.8, 1e-9);
	size_t before = bc_resolver_alias_count(r);
	CHECK_OK(bc_resolver_load_aliases(r, path, &err), &err);
	CHECK_INT(bc_resolver_alias_count(r), before + 1);
	bc_age_resolve(r, "Senonian", &a); /* ... and the later table wins */
	CHECK_INT(a.status, BC_AGE_ALIAS);
	CHECK_STR(a.from, "Santonian");
	CHECK_NEAR(a.older_ma, 86.3, 1e-9);
	CHECK_NEAR(a.younger_ma, 72.2, 1e-9);
	CHECK(strstr(a.note, "local usage"));
	bc_age_resolve(r, "kreidezeit oben", &a);
	CHECK_INT(a.status, BC_AGE_ALIAS);
	age_done();
}

TEST(age_aliases_file_errors)
{
	bc_resolver *r = age_setup();
	bc_err err = {0};
	char path[512];
	CHECK(r);
	snprintf(path, sizeof path, "%s/bad.tsv", test_tmpdir());
	CHECK(write_file(path, "alias\tolder\tyounger\tnote\tsource\nFoo\tCampanian\tCampanian\tx\t\n") == 0);
	CHECK_INT(bc_resolver_load_aliases(r, path, &err), BC_EINVALID);
	char want[700];
	snprintf(want, sizeof want, "%s:2: source: empty (every alias needs a source, e.g. 'common practice, no source')", path);
	CHECK_STR(err.msg, want);
	CHECK(write_file(path, "alias\tolder\tyounger\tnote\tsource\nFoo\tCampanian\tCampanian\tx\ty\nBar\tNoSuchian\tCampanian\tx\ty\n") == 0);
	size_t before = bc_resolver_alias_count(r);
	CHECK_INT(bc_resolver_load_aliases(r, path, &err), BC_EINVALID);
	snprintf(want, sizeof want, "%s:3: older: 'NoSuchian' is not an interval of chart 'test-chart'", path);
	CHECK_STR(err.msg, want);
	CHECK_INT(bc_resolver_alias_count(r), before); /* nothing from a bad file is kept */
	CHECK(write_file(path, "alias\tolder\tyounger\tnote\tsource\nFoo\tMaastrichtian\tCampanian\tx\ty\n") == 0);
	CHECK_INT(bc_resolver_load_aliases(r, path, &err), BC_EINVALID);
	snprintf(want, sizeof want, "%s:2: younger: 'Campanian' is older than 'Maastrichtian'", path);
	CHECK_STR(err.msg, want);
	CHECK(write_file(path, "name\tolder\n") == 0);
	CHECK_INT(bc_resolver_load_aliases(r, path, &err), BC_EINVALID);
	snprintf(want, sizeof want, "%s:1: alias: header has no 'alias' column", path);
	CHECK_STR(err.msg, want);
	snprintf(path, sizeof path, "%s/missing.tsv", test_tmpdir());
	CHECK_INT(bc_resolver_load_aliases(r, path, &err), BC_ENOTFOUND);
	age_done();
}

/* Every shipped alias row has a source, and names two chart intervals. */
TEST(age_alias_table_rows_have_sources)
{
	const bc_resource *res = bc__resource("reference/age-aliases.tsv");
	CHECK(res);
	char *copy = bc__strndup(res->data, res->len);
	CHECK(copy);
	int line = 0, rows = 0, bad = 0;
	char *save = NULL;
	for (char *l = strtok_r(copy, "\n", &save); l; l = strtok_r(NULL, "\n", &save)) {
		line++;
		if (l[0] == '#' || strncmp(l, "alias\t", 6) == 0)
			continue;
		int tabs = 0;
		for (char *p = l; *p; p++)
			tabs += *p == '\t';
		const char *last = strrchr(l, '\t');
		if (tabs != 4 || !last || strlen(last + 1) < 5) {
			bad = line;
			break;
		}
		rows++;
	}
	free(copy);
	CHECK_MSG(!bad, "reference/age-aliases.tsv: row %d lacks a source or has the wrong column count", bad);
	CHECK(rows >= 100);
}

TEST(age_unknown_and_garbage_never_crash)
{
	bc_resolver *r = age_setup();
	bc_age a;
	CHECK(r);
	unsigned seed = 12345;
	char buf[300];
	for (int i = 0; i < 20000; i++) {
		int n = (int)((seed = seed * 1103515245u + 12345u) >> 16) % 60;
		for (int k = 0; k < n; k++) {
			seed = seed * 1103515245u + 12345u;
			unsigned char c = (unsigned char)(seed >> 16);
			/* mix random bytes with pieces that steer into the parsers */
			static const char *const bits[] = {"Campan", "-", "?", " to ", "Ma", "7", ".", ",", "\xc2\xb1", "late ", "/", "ian"};
			if (c < 200)
				buf[k] = (char)(c ? c : 'x');
			else {
				const char *b = bits[c % 12];
				size_t bl = strlen(b);
				if (k + (int)bl >= n)
					bl = (size_t)(n - k);
				memcpy(buf + k, b, bl);
				k += (int)bl - 1;
			}
		}
		buf[n < 0 ? 0 : n] = '\0';
		CHECK(bc_age_resolve(r, buf, &a) == BC_OK);
		CHECK((unsigned)a.status <= BC_AGE_UNKNOWN);
		CHECK(a.status == BC_AGE_UNKNOWN || a.older_ma >= a.younger_ma);
	}
	/* a very long text */
	char *big = malloc(20000);
	CHECK(big);
	memset(big, 'a', 19999);
	big[19999] = '\0';
	CHECK(bc_age_resolve(r, big, &a) == BC_OK);
	free(big);
	CHECK_INT(a.status, BC_AGE_UNKNOWN);
	CHECK(strstr(a.note, "too long"));
	age_done();
}

/* Every allocation in building a resolver and resolving may fail without a crash or leak. */
TEST(age_out_of_memory)
{
	int failures = 0;
	for (long k = 1; k < 4000; k += 7) {
		bc_chart *c = age_test_chart();
		CHECK(c);
		bc_resolver *r = NULL;
		bc_err err = {0};
		bc__alloc_fail_after(k);
		int rc = bc_resolver_new(&r, c, &err);
		if (rc == BC_OK) {
			bc_age a;
			bc_age_resolve(r, "late Campanian", &a);
			bc_age_resolve(r, "Senonian-Danian", &a);
		} else {
			CHECK(r == NULL);
			failures++;
		}
		bc__alloc_fail_after(0);
		bc_resolver_free(r);
		bc_chart_free(c);
	}
	CHECK(failures > 0);
}

/* ---- the resolve.cases runner ---- */

static void unescape(const char *in, char *out, size_t cap)
{
	size_t o = 0;
	for (const char *p = in; *p && o + 1 < cap; p++) {
		if (*p == '\\' && p[1] == 't') {
			out[o++] = '\t';
			p++;
		} else if (*p == '\\' && p[1] == '\\') {
			out[o++] = '\\';
			p++;
		} else if (*p == '\\' && p[1] == 'x' && p[2] && p[3]) {
			char hex[3] = {p[2], p[3], 0};
			out[o++] = (char)strtol(hex, NULL, 16);
			p += 3;
		} else
			out[o++] = *p;
	}
	out[o] = '\0';
}

static int num_matches(const char *want, double got)
{
	if (strcmp(want, "-") == 0)
		return isnan(got);
	return fabs(strtod(want, NULL) - got) <= 1e-6;
}

TEST(age_cases)
{
	FILE *f = fopen(test_path("unit/resolve.cases"), "r");
	CHECK_MSG(f, "cannot open %s", test_path("unit/resolve.cases"));
	bc_resolver *r = age_setup();
	CHECK(r);
	char line[2048], input[2048] = "", failed[900] = "";
	int lineno = 0, case_line = 0, state = 0, ncases = 0, nfail = 0;
	bc_age a;
	while (fgets(line, sizeof line, f)) {
		lineno++;
		line[strcspn(line, "\n")] = '\0';
		if (line[0] == '#' && state == 0)
			continue;
		if (!line[0]) {
			state = 0;
			continue;
		}
		if (state == 0) {
			unescape(line, input, sizeof input);
			case_line = lineno;
			state = 1;
		} else if (state == 1) {
			char *fld[6] = {0};
			int nf = 0;
			for (char *p = line, *t; nf < 6; p = t + 1) {
				fld[nf++] = p;
				if (!(t = strchr(p, '\t')))
					break;
				*t = '\0';
			}
			ncases++;
			bc_age_resolve(r, input, &a);
			int ok = nf == 6 && strcmp(fld[0], bc_age_status_name(a.status)) == 0 &&
				strcmp(fld[1], strcmp(a.from, "") ? a.from : "-") == 0 &&
				strcmp(fld[2], strcmp(a.to, "") ? a.to : "-") == 0 && num_matches(fld[3], a.older_ma) &&
				num_matches(fld[4], a.younger_ma) && atoi(fld[5]) == a.uncertain;
			if (!ok) {
				nfail++;
				size_t n = strlen(failed);
				snprintf(failed + n, sizeof failed - n, " [line %d: got %s %s %s %.10g %.10g %d: %s]", case_line,
					bc_age_status_name(a.status), a.from, a.to, a.older_ma, a.younger_ma, a.uncertain, a.note);
			}
			state = 2;
		} else if (state == 2 && strncmp(line, "note: ", 6) == 0) {
			if (!strstr(a.note, line + 6)) {
				nfail++;
				size_t n = strlen(failed);
				snprintf(failed + n, sizeof failed - n, " [line %d: note '%.200s' lacks '%.100s']", case_line, a.note, line + 6);
			}
		}
	}
	fclose(f);
	age_done();
	CHECK_MSG(ncases >= 80, "only %d cases read", ncases);
	CHECK_MSG(nfail == 0, "%d of %d cases failed:%s", nfail, ncases, failed);
}
