/*
 * test_harden.c - hardening regressions that belong to no single module:
 * error messages stay one printable line whatever text they quote.
 */
#include "test.h"

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
