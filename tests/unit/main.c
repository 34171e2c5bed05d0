/*
 * main.c - unit-test runner: runs every registered test (or those whose
 * name contains argv[1]) and prints one line each and a summary.
 */
#include "test.h"

#include <stdarg.h>
#include <stdlib.h>
#include <unistd.h>

int test__failed;
char test__msg[1024];

void test__fail(const char *file, int line, const char *fmt, ...)
{
	va_list ap;
	int n = snprintf(test__msg, sizeof test__msg, "%s:%d: ", file, line);
	va_start(ap, fmt);
	vsnprintf(test__msg + n, sizeof test__msg - (size_t)n, fmt, ap);
	va_end(ap);
	test__failed = 1;
}

static char tmpdir[256];

static void remove_tmpdir(void)
{
	if (tmpdir[0]) {
		char cmd[300];
		snprintf(cmd, sizeof cmd, "rm -rf '%s'", tmpdir);
		if (system(cmd) != 0)
			fprintf(stderr, "could not remove %s\n", tmpdir);
	}
}

const char *test_tmpdir(void)
{
	static int counter;
	static char dir[300];
	if (!tmpdir[0]) {
		snprintf(tmpdir, sizeof tmpdir, "/tmp/bc-unit-XXXXXX");
		if (!mkdtemp(tmpdir)) {
			perror("mkdtemp");
			exit(3);
		}
		atexit(remove_tmpdir);
	}
	snprintf(dir, sizeof dir, "%s/%d", tmpdir, ++counter);
	char cmd[400];
	snprintf(cmd, sizeof cmd, "mkdir -p '%s'", dir);
	if (system(cmd) != 0)
		exit(3);
	return dir;
}

const char *test_path(const char *rel)
{
	static char buf[8][1024];
	static int k;
	const char *root = getenv("BC_SOURCE_DIR");
	char *b = buf[k++ % 8];
	snprintf(b, sizeof buf[0], "%s/tests/%s", root ? root : ".", rel);
	return b;
}

#define X(name) void test_##name(void);
#include "tests.list"
#undef X

static const struct { const char *name; void (*fn)(void); } tests[] = {
#define X(name) {#name, test_##name},
#include "tests.list"
#undef X
};

int main(int argc, char **argv)
{
	int passed = 0, failed = 0;
	for (size_t i = 0; i < sizeof tests / sizeof tests[0]; i++) {
		if (argc > 1 && !strstr(tests[i].name, argv[1]))
			continue;
		test__failed = 0;
		test__msg[0] = '\0';
		tests[i].fn();
		if (test__failed) {
			printf("FAIL unit/%s: %s\n", tests[i].name, test__msg);
			failed++;
		} else {
			printf("ok unit/%s\n", tests[i].name);
			passed++;
		}
		fflush(stdout);
	}
	printf("# unit: %d passed, %d failed\n", passed, failed);
	return failed ? 1 : 0;
}
