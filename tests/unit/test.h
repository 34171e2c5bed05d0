/*
 * test.h - the unit-test harness. Each TEST(name) in tests/unit/ files is
 * registered by the Makefile; the runner prints "ok NAME" or
 * "FAIL NAME: where: what" per test, then its own summary.
 */
#ifndef BC_TEST_H
#define BC_TEST_H

#include "bathychron.h"
#include <math.h>
#include <stdio.h>
#include <string.h>

extern int test__failed;
extern char test__msg[1024];
void test__fail(const char *file, int line, const char *fmt, ...);

#define TEST(name) void test_##name(void); void test_##name(void)

#define CHECK(cond) do { if (!(cond)) { test__fail(__FILE__, __LINE__, "%s", #cond); return; } } while (0)
#define CHECK_MSG(cond, ...) do { if (!(cond)) { test__fail(__FILE__, __LINE__, __VA_ARGS__); return; } } while (0)
#define CHECK_INT(a, b) do { long long a_ = (long long)(a), b_ = (long long)(b); \
	if (a_ != b_) { test__fail(__FILE__, __LINE__, "%s == %lld, expected %lld", #a, a_, b_); return; } } while (0)
#define CHECK_STR(a, b) do { const char *a_ = (a), *b_ = (b); \
	if (!a_ || !b_ || strcmp(a_, b_) != 0) { test__fail(__FILE__, __LINE__, "%s == \"%s\", expected \"%s\"", #a, a_ ? a_ : "(null)", b_ ? b_ : "(null)"); return; } } while (0)
#define CHECK_NEAR(a, b, tol) do { double a_ = (a), b_ = (b); \
	if (!(fabs(a_ - b_) <= (tol))) { test__fail(__FILE__, __LINE__, "%s == %.12g, expected %.12g (tolerance %g)", #a, a_, b_, (double)(tol)); return; } } while (0)
/* A call returning 0 on success; prints the bc_err text otherwise. */
#define CHECK_OK(call, errp) do { int rc_ = (call); \
	if (rc_ != 0) { test__fail(__FILE__, __LINE__, "%s returned %d: %s", #call, rc_, (errp)->msg); return; } } while (0)

/* A fresh temporary directory for the current test (removed at exit). */
const char *test_tmpdir(void);
/* Path of a file under the source tree's tests/ directory. */
const char *test_path(const char *rel);

#endif
