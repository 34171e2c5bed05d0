/*
 * test_csv.c - the delimited-text reader: quoting, line numbers,
 * delimiters, encodings, and the formula guard on output.
 */
#include "test.h"
#include "csvio.h"

#include <stdlib.h>

static bc_csv *open_text(const char *text, char delim, bc_err *err)
{
	bc_csv *c = NULL;
	bc_csv_options o = {delim};
	if (bc_csv__open_mem(&c, "t.csv", text, strlen(text), &o, err) != 0)
		return NULL;
	return c;
}

/* RFC 4180 sections 2.5-2.7: quoted fields with delimiters, doubled quotes
 * and line breaks; a record keeps the physical line it starts on. */
TEST(csv_rfc4180_quoting_and_start_lines)
{
	bc_err err = {0};
	const char *text = "\xEF\xBB\xBF" "a,b,c\r\n1,\"x, y\",\"say \"\"hi\"\"\"\r\n2,\"two\nlines\",z\r\n3,,\r\n";
	bc_csv *c = open_text(text, 0, &err);
	CHECK(c);
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_STR(bc_csv__field(c, 0), "a"); /* BOM removed */
	CHECK_INT(bc_csv__line(c), 1);
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_INT(bc_csv__nfields(c), 3);
	CHECK_STR(bc_csv__field(c, 1), "x, y");
	CHECK_STR(bc_csv__field(c, 2), "say \"hi\"");
	CHECK_INT(bc_csv__line(c), 2);
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_STR(bc_csv__field(c, 1), "two\nlines");
	CHECK_INT(bc_csv__line(c), 3);
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_INT(bc_csv__line(c), 5);
	CHECK_INT(bc_csv__nfields(c), 3);
	CHECK_STR(bc_csv__field(c, 2), "");
	CHECK_INT(bc_csv__next(c, &err), 0);
	CHECK_INT(bc_csv__delim(c), ',');
	bc_csv__free(c);
}

TEST(csv_blank_and_all_empty_rows_are_skipped)
{
	bc_err err = {0};
	bc_csv *c = open_text("a,b\n\n,\n1,2\n", 0, &err);
	CHECK(c);
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_STR(bc_csv__field(c, 0), "1");
	CHECK_INT(bc_csv__line(c), 4);
	CHECK_INT(bc_csv__next(c, &err), 0);
	bc_csv__free(c);
}

TEST(csv_detects_tab_and_semicolon)
{
	bc_err err = {0};
	bc_csv *c = open_text("a\tb,c\td\n1\t2,3\t4\n", 0, &err);
	CHECK(c);
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_INT(bc_csv__delim(c), '\t');
	CHECK_INT(bc_csv__nfields(c), 3);
	CHECK_STR(bc_csv__field(c, 1), "b,c");
	bc_csv__free(c);
	c = open_text("a;b;\"c;d\"\n1;2,5;3\n", 0, &err);
	CHECK(c);
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_INT(bc_csv__delim(c), ';');
	CHECK_STR(bc_csv__field(c, 2), "c;d");
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_STR(bc_csv__field(c, 1), "2,5");
	bc_csv__free(c);
}

TEST(csv_latin1_is_refused_with_its_line)
{
	bc_err err = {0};
	bc_csv *c = open_text("a,b\nx,y\nC\xe9nomanien,z\n", 0, &err);
	CHECK(c);
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_INT(bc_csv__next(c, &err), BC_EINVALID);
	CHECK_STR(err.msg, "t.csv:3: encoding: not UTF-8 (looks like Latin-1/Windows-1252); save the file as UTF-8");
	bc_csv__free(c);
}

TEST(csv_nul_utf16_and_unclosed_quote)
{
	bc_err err = {0};
	const char nul[] = "a,b\n1,\0002\n";
	bc_csv *c = NULL;
	bc_csv_options o = {0};
	CHECK_OK(bc_csv__open_mem(&c, "t.csv", nul, sizeof nul - 1, &o, &err), &err);
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_INT(bc_csv__next(c, &err), BC_EINVALID);
	CHECK_STR(err.msg, "t.csv:2: encoding: NUL byte in the text (a binary or UTF-16 file?); save the file as UTF-8 text");
	bc_csv__free(c);
	c = open_text("\xff\xfe" "a\0", 0, &err);
	CHECK(c);
	CHECK_INT(bc_csv__next(c, &err), BC_EINVALID);
	CHECK_STR(err.msg, "t.csv:1: encoding: UTF-16 (byte-order mark found); save the file as UTF-8");
	bc_csv__free(c);
	c = open_text("a,b\n1,\"open\n2,3\n", 0, &err);
	CHECK(c);
	CHECK_INT(bc_csv__next(c, &err), 1);
	CHECK_INT(bc_csv__next(c, &err), BC_EINVALID);
	CHECK_STR(err.msg, "t.csv:2: quoting: a quoted field starts on this line and is never closed (unmatched \")");
	bc_csv__free(c);
}

TEST(csv_utf8_validation)
{
	CHECK(bc_csv__utf8_valid((const unsigned char *)"caf\xc3\xa9 \xe2\x80\x93 \xf0\x9f\x90\x9a", 14, NULL));
	size_t at = 99;
	CHECK(!bc_csv__utf8_valid((const unsigned char *)"ab\xc0\xaf", 4, &at)); /* overlong '/' */
	CHECK_INT(at, 2);
	CHECK(!bc_csv__utf8_valid((const unsigned char *)"\xed\xa0\x80", 3, NULL)); /* surrogate */
	CHECK(!bc_csv__utf8_valid((const unsigned char *)"\xe2\x80", 2, NULL)); /* truncated */
}

/* OWASP "CSV Injection": cells starting with = + - @ tab CR get a leading '. */
TEST(csv_text_cell_guard_and_quoting)
{
	bc_buf b = {0};
	bc_csv__text_cell(&b, "=SUM(A1)", ',', 1);
	bc__buf_puts(&b, "|");
	bc_csv__text_cell(&b, "-1,5", ',', 1);
	bc__buf_puts(&b, "|");
	bc_csv__text_cell(&b, "@x", ',', 0);
	bc__buf_puts(&b, "|");
	bc_csv__text_cell(&b, "a \"b\"", ',', 1);
	CHECK_STR(b.data, "'=SUM(A1)|\"'-1,5\"|@x|\"a \"\"b\"\"\"");
	bc__buf_free(&b);
}
