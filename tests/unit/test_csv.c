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

/* Every record of a text or file as one string (line, cells, then how
 * the reading ended), read with or without libcsv for unquoted lines. */
static int dump_records(bc_buf *out, const char *path, const char *text, size_t len, char delim, int libcsv_only)
{
	bc_csv *c = NULL;
	bc_err err = {0};
	bc_csv_options o = {delim};
	int rc = path ? bc_csv__open(&c, path, "t.csv", &o, &err) : bc_csv__open_mem(&c, "t.csv", text, len, &o, &err);
	if (rc)
		return rc;
	bc_csv__libcsv_only(c, libcsv_only);
	while ((rc = bc_csv__next(c, &err)) == 1) {
		bc__buf_printf(out, "%ld:%zu", bc_csv__line(c), bc_csv__nfields(c));
		for (size_t i = 0; i < bc_csv__nfields(c); i++)
			bc__buf_printf(out, "[%s]", bc_csv__field(c, i));
		bc__buf_puts(out, "\n");
	}
	bc__buf_printf(out, "end %d %s; delimiter %d; %llu bytes\n", rc, err.msg, bc_csv__delim(c), (unsigned long long)bc_csv__bytes(c));
	bc_csv__free(c);
	return out->data ? 0 : -1;
}

/* Lines without quotes are split by the reader itself, the rest by
 * libcsv: both give the same records, line numbers and errors. */
TEST(csv_plain_lines_read_as_libcsv_reads_them)
{
	static const char *const texts[] = {
		"a,b,c\n1,2,3\n",
		"a,b,c\n1,,3\n,,\n,2,\n4,5,\n",             /* empty cells, trailing delimiter, all empty */
		"a,b\r\n1,2\r\n\r\n3,4\r\n",                /* CRLF, a blank CRLF line */
		"\xEF\xBB\xBF" "a,b\n1,2\n",               /* BOM on the first line */
		"\xEF\xBB\xBF" "a,b\r\n1,\"2\"\r\n3,4",     /* BOM, a quoted cell, no final line end */
		"a,b\r1,2\r\r3,4\r",                        /* classic Mac line ends */
		"a,b\n 1 , 2 \n\t3\t,4\n",                  /* spaces and tabs are data */
		"a,b\n1,\"x\ny\"\n2,3\n4,\"z\"\"\"\n5,6",    /* a quoted line break, then plain lines */
		"a,b\n1,2\n3,\"open\n4,5\n",               /* an unclosed quote */
		"a\tb\tc\n1\t\t3\n\t\t\n x \ty\t\n",       /* tab-separated */
		"a;b\n1;2;\n;\n",                           /* semicolons */
		"a,b\n1,2\n3\n4,5,6,7\n",                   /* ragged */
		"a,b\n\n\n\n1,2\n",                         /* blank lines before a record */
		"a,b\n1,x\"y\n2,3\n",                       /* a quote inside an unquoted cell */
		"a,b\n1,caf\xC3\xA9\n2,\xE9t\xE9\n",        /* UTF-8, then Latin-1 */
		"a,b\n1,2\n3,\0x\n",                       /* a NUL byte (the length below includes it) */
		"",
		"\n\n",
	};
	static const size_t lens[] = {0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 16, 0, 0};
	for (size_t i = 0; i < sizeof texts / sizeof texts[0]; i++) {
		size_t len = lens[i] ? lens[i] : strlen(texts[i]);
		for (int d = 0; d < 3; d++) {
			char delim = "\0,\t"[d];
			bc_buf plain = {0}, lib = {0};
			int a = dump_records(&plain, NULL, texts[i], len, delim, 0);
			int b = dump_records(&lib, NULL, texts[i], len, delim, 1);
			int same = a == b && plain.len == lib.len && (!plain.len || memcmp(plain.data, lib.data, plain.len) == 0);
			if (!same)
				test__fail(__FILE__, __LINE__, "text %zu, delimiter %d: plain path\n%s\nlibcsv\n%s", i, delim,
					plain.data ? plain.data : "(none)", lib.data ? lib.data : "(none)");
			bc__buf_free(&plain);
			bc__buf_free(&lib);
			if (!same)
				return;
		}
	}
}

/* The cells the reader's own split gives for unquoted lines, spelled out. */
TEST(csv_plain_lines_cells)
{
	bc_err err = {0};
	bc_buf out = {0};
	const char *text = "\xEF\xBB\xBF" "a,b,c\r\n1,,3\r\n,,\r\n x ,y,\r\n4,5\r\n";
	CHECK_INT(dump_records(&out, NULL, text, strlen(text), 0, 0), 0);
	CHECK_STR(out.data, "1:3[a][b][c]\n2:3[1][][3]\n4:3[ x ][y][]\n5:2[4][5]\nend 0 ; delimiter 44; 33 bytes\n");
	bc__buf_free(&out);
	(void)err;
}

/* A file is read in blocks: a line crossing a block's end, a CRLF split
 * between two blocks and a bare CR at a block's end keep their lines. */
TEST(csv_plain_lines_across_read_blocks)
{
	const size_t block = 64u << 10;
	for (int variant = 0; variant < 3; variant++) {
		bc_buf text = {0};
		bc__buf_puts(&text, "a,b\n");
		while (text.len < block - 1 - 20)
			bc__buf_puts(&text, "1,some cell text\n");
		while (text.len < block - 1)
			bc__buf_puts(&text, "x");
		/* the byte before the block's end */
		bc__buf_puts(&text, variant == 0 ? "\r\n2,3\n" : variant == 1 ? "\r4,5\n" : ",cell across\n6,\"q\"\n");
		char path[512];
		snprintf(path, sizeof path, "%s/blocks%d.csv", test_tmpdir(), variant);
		FILE *f = fopen(path, "wb");
		CHECK(f);
		CHECK_INT(fwrite(text.data, 1, text.len, f), text.len);
		fclose(f);
		bc_buf a = {0}, b = {0};
		CHECK_INT(dump_records(&a, path, NULL, 0, 0, 0), 0);
		CHECK_INT(dump_records(&b, NULL, text.data, text.len, 0, 1), 0);
		CHECK_MSG(a.len == b.len && memcmp(a.data, b.data, a.len) == 0, "variant %d: the file and the text read differently", variant);
		CHECK(strstr(a.data, variant == 0 ? "[2][3]" : variant == 1 ? "[4][5]" : "[6][q]"));
		bc__buf_free(&a);
		bc__buf_free(&b);
		bc__buf_free(&text);
	}
}

/* The SHA-256 taken while reading equals the one of a pass over the file
 * (bc__sha256_file), and is refused before the end of the input. */
TEST(csv_hash_while_reading)
{
	bc_buf text = {0};
	bc__buf_puts(&text, "a,b\n");
	for (int i = 0; text.len < (200u << 10); i++)
		bc__buf_printf(&text, "%d,\"cell %d\"\r\n", i, i * 7);
	char path[512], want[65], got[65];
	snprintf(path, sizeof path, "%s/hash.csv", test_tmpdir());
	FILE *f = fopen(path, "wb");
	CHECK(f);
	CHECK_INT(fwrite(text.data, 1, text.len, f), text.len);
	fclose(f);
	bc_err err = {0};
	CHECK_OK(bc__sha256_file(path, want, &err), &err);
	for (int from_file = 0; from_file < 2; from_file++) {
		bc_csv *c = NULL;
		bc_csv_options o = {0};
		if (from_file)
			CHECK_OK(bc_csv__open(&c, path, "hash.csv", &o, &err), &err);
		else
			CHECK_OK(bc_csv__open_mem(&c, "hash.csv", text.data, text.len, &o, &err), &err);
		bc_csv__hash_input(c);
		CHECK_INT(bc_csv__next(c, &err), 1);
		CHECK_INT(bc_csv__input_sha256(c, got), BC_ERROR); /* not at the end yet */
		long n = 1;
		int rc;
		while ((rc = bc_csv__next(c, &err)) == 1)
			n++;
		CHECK_INT(rc, 0);
		CHECK(n > 1000);
		CHECK_INT(bc_csv__input_sha256(c, got), BC_OK);
		CHECK_STR(got, want);
		bc_csv__free(c);
	}
	bc__buf_free(&text);
}
