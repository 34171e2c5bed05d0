#!/bin/sh
# bench_import.sh - importing N synthetic occurrences (default 1,000,000)
# with full validation, against the sqlite3 shell's .import of the same
# file into an untyped table. Prints both times, the ratio and peak RSS
# (/usr/bin/time -v), and peak RSS for a tenth of the rows, to show that
# memory does not grow with the file. The import reads and checks rows on
# a second thread; it is also timed on one (BATHYCHRON_IMPORT_THREADS=1),
# and the cores and load average are printed, since other work on the
# machine changes the wall times. BENCH_ROWS=N to change the size;
# BENCH_KEEP=1 keeps the files.
set -u
top=$(cd "$(dirname "$0")/../.." && pwd)
BC=${BC_PROGRAM:-$top/build/bathychron}
rows=${BENCH_ROWS:-1000000}
d=$(mktemp -d)
[ "${BENCH_KEEP:-0}" = 1 ] || trap 'rm -rf "$d"' EXIT

/usr/bin/python3 "$top/tests/bench/gen_occurrences.py" "$rows" "$d/occ.csv" 1 || exit 3
/usr/bin/python3 "$top/tests/bench/gen_occurrences.py" $((rows / 10)) "$d/small.csv" 2 || exit 3
size=$(wc -c <"$d/occ.csv")

# measure LABEL CMD...: sets $secs and $rss (kB) from /usr/bin/time -v
measure() {
	label=$1; shift
	/usr/bin/time -v "$@" >"$d/$label.out" 2>"$d/$label.time" || { echo "bench_import: $label failed:"; tail -n 5 "$d/$label.time"; exit 1; }
	secs=$(sed -n 's/.*Elapsed (wall clock) time (h:mm:ss or m:ss): //p' "$d/$label.time" | awk -F: '{ s = 0; for (i = 1; i <= NF; i++) s = s * 60 + $i; print s }')
	cpu=$(awk -F': ' '/User time/ { u = $2 } /System time/ { s = $2 } END { print u + s }' "$d/$label.time")
	rss=$(sed -n 's/.*Maximum resident set size (kbytes): //p' "$d/$label.time")
}

"$BC" init "$d/a.gpkg" >/dev/null || exit 3
measure import "$BC" import "$d/a.gpkg" "$d/occ.csv"
t_imp=$secs; c_imp=$cpu; r_imp=$rss
"$BC" init "$d/one.gpkg" >/dev/null || exit 3
measure one env BATHYCHRON_IMPORT_THREADS=1 "$BC" import "$d/one.gpkg" "$d/occ.csv"
t_one=$secs; c_one=$cpu
measure raw sqlite3 "$d/raw.db" ".mode csv" ".import $d/occ.csv t"
t_raw=$secs; c_raw=$cpu; r_raw=$rss
"$BC" init "$d/s.gpkg" >/dev/null || exit 3
measure small "$BC" import "$d/s.gpkg" "$d/small.csv"
r_small=$rss

echo "bench_import: $rows rows, $size bytes; $(nproc 2>/dev/null || echo '?') cores, load average $(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null)"
echo "bench_import: bathychron import (validate, resolve, store): ${t_imp} s wall, ${c_imp} s CPU, peak RSS ${r_imp} kB"
echo "bench_import: the same on one thread:                      ${t_one} s wall, ${c_one} s CPU"
echo "bench_import: sqlite3 .import into an untyped table:        ${t_raw} s wall, ${c_raw} s CPU, peak RSS ${r_raw} kB"
awk -v a="$t_imp" -v b="$t_raw" -v c="$c_imp" -v e="$c_raw" 'BEGIN { printf "bench_import: ratio import/raw: %.2f wall, %.2f CPU (target: <= 1)\n", a / b, c / e }'
echo "bench_import: peak RSS for $((rows / 10)) rows: ${r_small} kB; for $rows rows: ${r_imp} kB"
grep -q "$rows rows read, $rows stored, 0 quarantined" "$d/import.out" || { echo "bench_import: unexpected summary: $(cat "$d/import.out")"; exit 1; }
