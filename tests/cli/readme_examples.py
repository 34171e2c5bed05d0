#!/usr/bin/env python3
"""readme_examples.py - runs every example in README.md and checks its output.

An example is a fenced block opened with ```console. Lines starting with
"$ " are commands (run with sh in one scratch folder, in order, across all
blocks, with build/ first on PATH and import/ and reference/ linked in);
the lines after a command, up to the next "$ " or the end of the block, are
its expected output (stdout and stderr together). In expected output a line
"..." matches any number of lines, and "[...]" at the end of a line matches
any rest of that line. A command whose expected output is empty must print
nothing. The exit status is not checked unless the example shows it with
"$ echo $?" after the command.

Prints "ok readme:LINE" or "FAIL readme:LINE: ..." per command.
"""
import os
import re
import subprocess
import sys
import tempfile

top = os.environ.get("BC_SOURCE_DIR") or os.path.abspath(os.path.join(os.path.dirname(__file__), "../.."))
program_dir = os.path.dirname(os.environ.get("BC_PROGRAM", os.path.join(top, "build", "bathychron")))


def examples(path):
    lines = open(path, encoding="utf-8").read().split("\n")
    inside = False
    cur = None
    for i, line in enumerate(lines, 1):
        if not inside:
            if line.strip() == "```console":
                inside = True
            continue
        if line.strip() == "```":
            inside = False
            if cur:
                yield cur
            cur = None
            continue
        if line.startswith("$ "):
            if cur:
                yield cur
            cur = [i, line[2:], []]
        elif cur is not None:
            cur[2].append(line)
    if cur:
        yield cur


def matches(expected, got):
    """Expected lines with '...' wildcards against got lines."""
    def line_ok(e, g):
        if e.endswith("[...]"):
            return g.startswith(e[:-5])
        return e == g

    def rec(i, j):
        if i == len(expected):
            return j == len(got)
        if expected[i] == "...":
            return any(rec(i + 1, k) for k in range(j, len(got) + 1))
        return j < len(got) and line_ok(expected[i], got[j]) and rec(i + 1, j + 1)
    return rec(0, 0)


def main():
    readme = os.path.join(top, "README.md")
    work = tempfile.mkdtemp(prefix="bc-readme-")
    for d in ("import", "reference"):
        os.symlink(os.path.join(top, d), os.path.join(work, d))
    env = dict(os.environ)
    env["PATH"] = program_dir + os.pathsep + env["PATH"]
    env["LC_ALL"] = "C.UTF-8"
    n = 0
    failed = 0
    for line, cmd, expected in examples(readme):
        n += 1
        p = subprocess.run(["sh", "-c", cmd], cwd=work, env=env, stdout=subprocess.PIPE,
                           stderr=subprocess.STDOUT, timeout=600)
        got = p.stdout.decode("utf-8", "replace").rstrip("\n")
        got_lines = got.split("\n") if got else []
        exp = list(expected)
        while exp and exp[-1] == "":
            exp.pop()
        if matches(exp, got_lines):
            print(f"ok readme:{line}")
        else:
            failed += 1
            print(f"FAIL readme:{line}: {cmd}\n--- expected\n" + "\n".join(exp) + "\n--- got\n" + got[:3000])
    subprocess.run(["rm", "-rf", work])
    if n == 0:
        print("FAIL readme: no examples found")
        return 1
    return 1 if failed else 0


sys.exit(main())
