#!/bin/sh
# run.sh - runs every tests/bench/bench_*.sh (make bench). Benchmarks print
# rates; they are not tests and never fail the build on speed.
set -u
dir=$(cd "$(dirname "$0")" && pwd)
status=0
for b in "$dir"/bench_*.sh; do
	[ -e "$b" ] || continue
	echo "== $(basename "$b" .sh)"
	sh "$b" || status=1
done
exit $status
