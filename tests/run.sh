#!/bin/sh
# run.sh - runs every test program and prints the one summary line.
# Protocol: each program prints "ok NAME" or "FAIL NAME: why" per check;
# a program that exits non-zero without printing a FAIL counts as a FAIL.
set -u
top=$(cd "$(dirname "$0")/.." && pwd)
export BC_SOURCE_DIR="$top"
export BC_SHARED_DIR="${BC_SHARED_DIR:-$top/../shared}"
log=$(mktemp)
trap 'rm -f "$log"' EXIT

run() { # run LABEL COMMAND...
	label=$1; shift
	out=$(mktemp)
	"$@" >"$out" 2>&1
	rc=$?
	grep -E '^(ok|FAIL) ' "$out" | sed "s|^\(ok\|FAIL\) |\1 $label:|" | tee -a "$log" | grep '^FAIL' || true
	if [ $rc -ne 0 ] && ! grep -q '^FAIL ' "$out"; then
		echo "FAIL $label: exited with status $rc" | tee -a "$log"
		tail -n 20 "$out"
	fi
	rm -f "$out"
}

run unit "$top/build/unit-tests"
run unit-san "$top/build-san/unit-tests"
for t in "$top"/tests/cli/test_*.sh; do
	[ -e "$t" ] || continue
	run "cli/$(basename "$t" .sh)" sh "$t"
done
for t in "$top"/tests/external/test_*; do
	[ -e "$t" ] || continue
	case "$t" in
	*.py) run "external/$(basename "$t")" /usr/bin/python3 "$t" ;;
	*.sh) run "external/$(basename "$t")" sh "$t" ;;
	esac
done
passed=$(grep -c '^ok ' "$log")
failed=$(grep -c '^FAIL ' "$log")
echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
