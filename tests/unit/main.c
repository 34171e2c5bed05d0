/*
 * main.c - unit-test runner: runs every registered test (or those whose
 * name contains argv[1]) and prints one line each and a summary.
 */
#include "test.h"

#include <stdarg.h>
#include <stdlib.h>
#include <sys/wait.h>
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

static void make_tmproot(void)
{
	if (tmpdir[0])
		return;
	snprintf(tmpdir, sizeof tmpdir, "/tmp/bc-unit-XXXXXX");
	if (!mkdtemp(tmpdir)) {
		perror("mkdtemp");
		exit(3);
	}
	atexit(remove_tmpdir);
}

const char *test_tmpdir(void)
{
	static int counter;
	static char dir[300];
	make_tmproot();
	/* the pid keeps children (one per test) apart */
	snprintf(dir, sizeof dir, "%s/%d-%d", tmpdir, (int)getpid(), ++counter);
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

/* Each test runs in its own child process, so a crash is reported as that
 * test's failure and the others still run. */
static int run_one(const char *name, void (*fn)(void))
{
	fflush(stdout);
	pid_t pid = fork();
	if (pid < 0) {
		perror("fork");
		exit(3);
	}
	if (pid == 0) {
		test__failed = 0;
		test__msg[0] = '\0';
		fn();
		if (test__failed)
			printf("FAIL unit/%s: %s\n", name, test__msg);
		else
			printf("ok unit/%s\n", name);
		fflush(stdout);
		_exit(test__failed ? 1 : 0);
	}
	int status = 0;
	while (waitpid(pid, &status, 0) < 0)
		;
	if (WIFSIGNALED(status)) {
		printf("FAIL unit/%s: crashed with signal %d\n", name, WTERMSIG(status));
		return 0;
	}
	if (WIFEXITED(status) && WEXITSTATUS(status) > 1) {
		printf("FAIL unit/%s: exited with status %d\n", name, WEXITSTATUS(status));
		return 0;
	}
	return WIFEXITED(status) && WEXITSTATUS(status) == 0;
}

int main(int argc, char **argv)
{
	int passed = 0, failed = 0;
	make_tmproot(); /* in the parent, so atexit removes it once */
	for (size_t i = 0; i < sizeof tests / sizeof tests[0]; i++) {
		if (argc > 1 && !strstr(tests[i].name, argv[1]))
			continue;
		if (run_one(tests[i].name, tests[i].fn))
			passed++;
		else
			failed++;
		fflush(stdout);
	}
	printf("# unit: %d passed, %d failed\n", passed, failed);
	return failed ? 1 : 0;
}
