#!/bin/sh
# run.sh - runs every tests/bench/bench_*.sh in turn (make bench).
# Benchmarks print measurements; they are never part of make test.
top=$(cd "$(dirname "$0")/../.." && pwd)
status=0
for b in "$top"/tests/bench/bench_*.sh; do
	[ -e "$b" ] || continue
	sh "$b" || { echo "bench $(basename "$b"): failed"; status=1; }
done
exit $status
