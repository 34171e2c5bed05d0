/*
 * test_output.c - the generic table writer: quoting and escaping per
 * format, missing values, comment lines, JSON shape.
 */
#include "test.h"
#include "output.h"

#include <stdlib.h>

/* Writes `t` in `format` into a malloc'd string. */
static char *render(const bc_table *t, bc_format format)
{
	char *buf = NULL;
	size_t len = 0;
	FILE *f = open_memstream(&buf, &len);
	if (!f)
		return NULL;
	bc_err err = {0};
	int rc = bc_output__write(t, f, format, &err);
	fclose(f);
	if (rc) {
		free(buf);
		return NULL;
	}
	return buf;
}

static bc_table *sample(void)
{
	bc_table *t = NULL;
	bc_err err = {0};
	if (bc_output__table_new(&t, "bins", &err))
		return NULL;
	int rc = bc_output__add_column(t, "bin", BC_COL_TEXT, 0, &err);
	rc |= bc_output__add_column(t, "n_deep", BC_COL_COUNT, 0, &err);
	rc |= bc_output__add_column(t, "frac_deep", BC_COL_REAL, 3, &err);
	rc |= bc_output__add_column(t, "p", BC_COL_P, 0, &err);
	rc |= bc_output__add_row(t, &err);
	rc |= bc_output__set_text(t, 0, "a_b, \"c\" & 50% | x", &err);
	bc_output__set_num(t, 1, 2.5);
	bc_output__set_num(t, 2, 1.0 / 3);
	bc_output__set_num(t, 3, 0.0123456789);
	rc |= bc_output__add_row(t, &err);
	rc |= bc_output__set_text(t, 0, "plain", &err);
	bc_output__set_num(t, 1, 4);
	rc |= bc_output__set_caption(t, "Caption with $ and ~", &err);
	rc |= bc_output__meta_num(t, BC_META_TESTS, "trend_z", 1.5, 0, &err);
	rc |= bc_output__meta_text(t, BC_META_STAMP, "tool", &err, "bathychron %s", "x");
	rc |= bc_output__meta_num(t, BC_META_STAMP, "missing", NAN, 0, &err);
	if (rc) {
		bc_output__table_free(t);
		return NULL;
	}
	return t;
}

/* RFC 4180: fields with commas or quotes are quoted, quotes doubled. */
TEST(output_csv_quoting_missing_and_comments)
{
	bc_table *t = sample();
	CHECK(t);
	char *s = render(t, BC_FORMAT_CSV);
	CHECK(s);
	const char *want =
		"bin,n_deep,frac_deep,p\n"
		"\"a_b, \"\"c\"\" & 50% | x\",2.5,0.3333333333,0.0123457\n"
		"plain,4,NA,NA\n"
		"# tests.trend_z: 1.5\n"
		"# stamp.tool: bathychron x\n"
		"# stamp.missing: NA\n";
	CHECK_STR(s, want);
	free(s);
	bc_output__table_free(t);
}

TEST(output_tsv_flattens_tabs)
{
	bc_table *t = NULL;
	bc_err err = {0};
	CHECK_OK(bc_output__table_new(&t, "rows", &err), &err);
	CHECK_OK(bc_output__add_column(t, "name", BC_COL_TEXT, 0, &err), &err);
	CHECK_OK(bc_output__add_row(t, &err), &err);
	CHECK_OK(bc_output__set_text(t, 0, "a\tb\nc", &err), &err);
	char *s = render(t, BC_FORMAT_TSV);
	CHECK_STR(s, "name\na b c\n");
	free(s);
	bc_output__table_free(t);
}

TEST(output_markdown_escapes_pipes)
{
	bc_table *t = sample();
	CHECK(t);
	char *s = render(t, BC_FORMAT_MD);
	CHECK(s);
	CHECK(strstr(s, "| bin | n_deep | frac_deep | p |\n| --- | ---: | ---: | ---: |\n") == s);
	CHECK(strstr(s, "| a_b, \"c\" & 50% \\| x | 2.50 | 0.333 | 0.0123 |\n") != NULL);
	CHECK(strstr(s, "| plain | 4 | -- | -- |\n") != NULL);
	CHECK(strstr(s, "**Tests across bins**\n\n- trend_z: 1.5\n") != NULL);
	CHECK(strstr(s, "**Methods stamp**\n\n- tool: bathychron x\n") != NULL);
	free(s);
	bc_output__table_free(t);
}

TEST(output_latex_booktabs_and_escaping)
{
	bc_table *t = sample();
	CHECK(t);
	char *s = render(t, BC_FORMAT_LATEX);
	CHECK(s);
	CHECK(strstr(s, "\\caption{Caption with \\$ and \\textasciitilde{}}\n") != NULL);
	CHECK(strstr(s, "\\begin{tabular}{lrrr}\n\\toprule\nbin & n\\_deep & frac\\_deep & p \\\\\n\\midrule\n") != NULL);
	CHECK(strstr(s, "a\\_b, \"c\" \\& 50\\% | x & 2.50 & 0.333 & 0.0123 \\\\\n") != NULL);
	CHECK(strstr(s, "\\bottomrule\n\\end{tabular}\n") != NULL);
	CHECK(strstr(s, "% stamp.tool: bathychron x\n") != NULL);
	CHECK(strstr(s, "trend\\_z: 1.5") != NULL);
	free(s);
	bc_output__table_free(t);
}

TEST(output_json_shape)
{
	bc_table *t = sample();
	CHECK(t);
	char *s = render(t, BC_FORMAT_JSON);
	CHECK(s);
	CHECK(strstr(s, "{\n  \"stamp\": {\n    \"tool\": \"bathychron x\",\n    \"missing\": null\n  },\n  \"bins\": [\n") == s);
	CHECK(strstr(s, "{\"bin\": \"a_b, \\\"c\\\" & 50% | x\", \"n_deep\": 2.5, \"frac_deep\": 0.3333333333, \"p\": 0.0123457}") != NULL);
	CHECK(strstr(s, "{\"bin\": \"plain\", \"n_deep\": 4, \"frac_deep\": null, \"p\": null}") != NULL);
	CHECK(strstr(s, "\"tests\": {\n    \"trend_z\": 1.5\n  }\n}\n") != NULL);
	free(s);
	bc_output__table_free(t);
}

TEST(output_rejects_column_after_rows)
{
	bc_table *t = NULL;
	bc_err err = {0};
	CHECK_OK(bc_output__table_new(&t, "rows", &err), &err);
	CHECK_OK(bc_output__add_column(t, "a", BC_COL_TEXT, 0, &err), &err);
	CHECK_OK(bc_output__add_row(t, &err), &err);
	CHECK_INT(bc_output__add_column(t, "b", BC_COL_TEXT, 0, &err), BC_EUSAGE);
	bc_output__table_free(t);
}
