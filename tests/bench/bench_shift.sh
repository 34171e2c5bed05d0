#!/bin/sh
# bench_shift.sh - bathychron shift over 1,000,000 stored occurrences
# against the same counting written straightforwardly in pandas/numpy
# (tests/bench/shift_pandas.py), as whole processes: wall time, the ratio,
# and peak memory per occurrence. Not a test: it prints numbers.
set -eu
top=$(cd "$(dirname "$0")/../.." && pwd)
BC=${BC_PROGRAM:-$top/build/bathychron}
N=${BENCH_SHIFT_N:-1000000}
d=$(mktemp -d)
trap 'rm -rf "$d"' EXIT
[ -n "${BENCH_KEEP:-}" ] && trap - EXIT && echo "keeping $d"
"$BC" init "$d/b.gpkg" >/dev/null
# Invented, deterministic occurrences: ages 0-250 Ma with ranges of 0-12 Myr, depths
# 0-3000 m (some missing), 5000 references, 20000 localities.
sqlite3 "$d/b.gpkg" "
INSERT INTO import_batches(kind, file, sha256, tool_version) VALUES ('occurrences', 'bench', 'x', 'bench');
WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < 20000)
INSERT INTO localities(fid, name, longitude, latitude) SELECT i, 'L' || i, (i % 360) - 180, (i % 180) - 90 FROM c;
WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < $N),
r(i, a, w, d, e) AS (SELECT i, (i * 7919 % 250000) / 1000.0, (i * 104729 % 12000) / 1000.0,
  i * 15485863 % 3000, i * 32452843 % 400 FROM c)
INSERT INTO occurrences(batch_id, line, scientific_name, taxon_group, older_ma, younger_ma, age_status, timescale,
  min_depth_m, max_depth_m, articulation, reference_key, locality_id)
SELECT 1, i, 'Aus bus', 'crinoids', a + w, a, 'numeric', 'bench',
  CASE WHEN i % 50 = 0 THEN NULL ELSE d END, CASE WHEN i % 50 = 0 THEN NULL ELSE d + e END,
  CASE i % 3 WHEN 0 THEN 'articulated' WHEN 1 THEN 'disarticulated' ELSE 'unknown' END,
  'Ref' || (i % 5000), 1 + i % 20000 FROM r;"
measure() { # measure OUT CMD... -> prints "seconds peak_kb"
	out=$1; shift
	/usr/bin/time -f '%e %M' -o "$d/time" "$@" >"$out"
	cat "$d/time"
}
set -- $(measure "$d/c.csv" "$BC" shift "$d/b.gpkg" --bins 5)
c_s=$1 c_kb=$2
set -- $(measure "$d/p.csv" /usr/bin/python3 "$top/tests/bench/shift_pandas.py" "$d/b.gpkg" 5)
p_s=$1 p_kb=$2
# Same numbers from both: compare n_shallow, n_deep, n_straddle per bin.
grep -v '^#' "$d/c.csv" | awk -F, 'NR > 1 { print $5, $6, $7 }' >"$d/c.cmp"
awk -F, 'NR > 1 { print $2, $3, $4 }' "$d/p.csv" >"$d/p.cmp"
if cmp -s "$d/c.cmp" "$d/p.cmp"; then agree=yes; else agree=NO; fi
awk -v n="$N" -v cs="$c_s" -v ck="$c_kb" -v ps="$p_s" -v pk="$p_kb" -v agree="$agree" 'BEGIN {
	printf "bench shift: %d occurrences\n", n
	printf "  bathychron shift --bins 5: %.2f s, peak %.1f MB (%.0f bytes/occurrence)\n", cs, ck / 1024, ck * 1024 / n
	printf "  pandas/numpy equivalent:   %.2f s, peak %.1f MB (%.0f bytes/occurrence)\n", ps, pk / 1024, pk * 1024 / n
	printf "  speed ratio: %.1fx (target >= 10x); counts agree: %s\n", (cs > 0 ? ps / cs : 0), agree
}'
