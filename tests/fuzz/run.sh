#!/bin/sh
# run.sh [SECONDS] - runs every libFuzzer target in build-fuzz/fuzz/ for
# SECONDS each (default 60), starting from its seed corpus tests/fuzz/<name>/
# and its dictionary tests/fuzz/<name>.dict when there is one. New inputs go
# to build-fuzz/corpus/<name>/ (not the committed seeds); a crash is saved
# as build-fuzz/crash/<name>/crash-* and the run ends with status 1.
# Build the targets first: make fuzz-build (make fuzz does both).
set -u
secs=${1:-60}
top=$(cd "$(dirname "$0")/../.." && pwd)
bin=$top/build-fuzz/fuzz
status=0
found=0
for src in "$top"/tests/fuzz/fuzz_*.c; do
	t=$(basename "$src" .c)
	name=${t#fuzz_}
	exe=$bin/$t
	if [ ! -x "$exe" ]; then
		echo "fuzz: $exe is missing (run make fuzz-build)" >&2
		status=1
		continue
	fi
	found=$((found + 1))
	work=$top/build-fuzz/corpus/$name
	crash=$top/build-fuzz/crash/$name
	mkdir -p "$work" "$crash"
	dict=
	[ -f "$top/tests/fuzz/$name.dict" ] && dict="-dict=$top/tests/fuzz/$name.dict"
	echo "fuzz: $t for ${secs}s"
	if ! "$exe" -max_total_time="$secs" -timeout=10 -rss_limit_mb=2048 -max_len=65536 \
		-print_final_stats=1 -artifact_prefix="$crash/" $dict \
		"$work" "$top/tests/fuzz/$name" >"$top/build-fuzz/$t.log" 2>&1; then
		echo "fuzz: $t FOUND A PROBLEM; see build-fuzz/$t.log and $crash/" >&2
		grep -E 'ERROR|SUMMARY|runtime error' "$top/build-fuzz/$t.log" | head -5 >&2
		status=1
	else
		grep -E '^stat::number_of_executed_units' "$top/build-fuzz/$t.log" | sed "s/^/fuzz: $t /"
	fi
done
[ "$found" -gt 0 ] || { echo "fuzz: no targets built" >&2; status=1; }
exit $status
