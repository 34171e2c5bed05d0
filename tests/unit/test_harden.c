/*
 * test_harden.c - hardening regressions that belong to no single module:
 * error messages stay one printable line whatever text they quote.
 */
#include "test.h"
#include "internal.h"
#include "csvio.h"

#include <stdlib.h>

TEST(harden_err_message_is_one_line)
{
	bc_err err = {0};
	/* A quoted cell with a line break, a tab and a terminal escape. */
	bc_err_set(&err, BC_EINVALID, "f.csv:3: locality: bad \"%s\"", "a\nb\r\tc\x1b[31m");
	CHECK_STR(err.msg, "f.csv:3: locality: bad \"a b  c?[31m\"");
	CHECK_INT(err.code, BC_EINVALID);
}

TEST(harden_err_truncation_keeps_utf8_whole)
{
	bc_err err = {0};
	char long_text[2048];
	/* "é" is two bytes; 1022 ASCII bytes then "é" would be cut after its
	 * first byte by a plain vsnprintf into 1024 bytes. */
	memset(long_text, 'x', 1022);
	strcpy(long_text + 1022, "\xc3\xa9\xc3\xa9");
	bc_err_set(&err, BC_EINVALID, "%s", long_text);
	CHECK_INT(strlen(err.msg), 1022);
	memset(long_text, 'x', 1021);
	strcpy(long_text + 1021, "\xe2\x88\x92 more");
	bc_err_set(&err, BC_EINVALID, "%s", long_text);
	CHECK_INT(strlen(err.msg), 1021);
	memset(long_text, 'x', 1020);
	strcpy(long_text + 1020, "\xe2\x88\x92 more");
	bc_err_set(&err, BC_EINVALID, "%s", long_text);
	CHECK_INT(strlen(err.msg), 1023); /* the whole minus sign fits */
}

/* Fuzz finding (fuzz_csv): a bare CR (classic Mac line end) ended a record
 * but not a line, so every later record got the wrong line number. */
TEST(harden_csv_bare_cr_counts_as_a_line_end)
{
	static const char text[] = "a,b\rx,1\ry,2\r\nz,3\n\"q\rq\",4\r";
	bc_csv *c = NULL;
	bc_err err = {0};
	bc_csv_options o = {0};
	CHECK_OK(bc_csv__open_mem(&c, "mac.csv", text, sizeof text - 1, &o, &err), &err);
	static const long want[] = {1, 2, 3, 4, 5};
	static const char *const first[] = {"a", "x", "y", "z", "q\rq"};
	for (size_t i = 0; i < 5; i++) {
		int rc = bc_csv__next(c, &err);
		char why[1400] = "";
		if (rc != 1)
			snprintf(why, sizeof why, "record %zu: rc %d: %s", i, rc, err.msg);
		else if (bc_csv__line(c) != want[i] || strcmp(bc_csv__field(c, 0), first[i]) != 0)
			snprintf(why, sizeof why, "record %zu: line %ld field '%s', expected line %ld field '%s'", i,
				bc_csv__line(c), bc_csv__field(c, 0), want[i], first[i]);
		if (why[0]) {
			bc_csv__free(c);
			CHECK_MSG(0, "%s", why);
		}
	}
	int rc = bc_csv__next(c, &err);
	bc_csv__free(c);
	CHECK_INT(rc, 0);
}

/* bc__grow: room for one more element; doubles; on failure the array is
 * untouched and still the caller's. */
TEST(util_grow_doubles_and_keeps_on_failure)
{
	size_t cap = 0;
	int *a = bc__grow(NULL, 0, &cap, sizeof *a, 4);
	CHECK(a != NULL);
	CHECK_INT(cap, 4);
	for (int i = 0; i < 4; i++)
		a[i] = i;
	CHECK(bc__grow(a, 3, &cap, sizeof *a, 4) == a); /* room left: no change */
	CHECK_INT(cap, 4);
	int *b = bc__grow(a, 4, &cap, sizeof *b, 4);
	CHECK(b != NULL);
	CHECK_INT(cap, 8);
	CHECK_INT(b[3], 3);
	bc__alloc_fail_after(1);
	int *c = bc__grow(b, 8, &cap, sizeof *c, 4);
	bc__alloc_fail_after(0);
	CHECK(c == NULL);
	CHECK_INT(cap, 8);
	CHECK_INT(b[2], 2);
	free(b);
}
