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
# The first shift after the occurrences change reads the table and stores
# the column snapshot (src/snapshot.c); later ones read the snapshot. Both
# are timed, and the table read without it (BATHYCHRON_SNAPSHOT=off).
set -- $(measure "$d/c1.csv" "$BC" shift "$d/b.gpkg" --bins 5)
f_s=$1 f_kb=$2
best=
for run in 1 2 3; do
	set -- $(measure "$d/c.csv" "$BC" shift "$d/b.gpkg" --bins 5)
	if [ -z "$best" ] || awk -v a="$1" -v b="$best" 'BEGIN { exit !(a < b) }'; then best=$1 c_kb=$2; fi
done
c_s=$best
set -- $(measure "$d/c0.csv" env BATHYCHRON_SNAPSHOT=off "$BC" shift "$d/b.gpkg" --bins 5)
o_s=$1 o_kb=$2
cmp -s "$d/c.csv" "$d/c1.csv" && cmp -s "$d/c.csv" "$d/c0.csv" || { echo "bench shift: the three ways gave different tables"; exit 1; }
set -- $(measure "$d/p.csv" /usr/bin/python3 "$top/tests/bench/shift_pandas.py" "$d/b.gpkg" 5)
p_s=$1 p_kb=$2
# Same numbers from both: compare n_shallow, n_deep, n_straddle per bin.
grep -v '^#' "$d/c.csv" | awk -F, 'NR > 1 { print $5, $6, $7 }' >"$d/c.cmp"
awk -F, 'NR > 1 { print $2, $3, $4 }' "$d/p.csv" >"$d/p.cmp"
if cmp -s "$d/c.cmp" "$d/p.cmp"; then agree=yes; else agree=NO; fi
awk -v n="$N" -v cs="$c_s" -v ck="$c_kb" -v fs="$f_s" -v fk="$f_kb" -v os="$o_s" -v ok="$o_kb" -v ps="$p_s" -v pk="$p_kb" -v agree="$agree" \
	-v load="$(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null)" -v cores="$(nproc 2>/dev/null)" 'BEGIN {
	printf "bench shift: %d occurrences; %s cores, load average %s\n", n, cores, load
	printf "  bathychron shift --bins 5 (snapshot stored, best of 3): %.2f s, peak %.1f MB (%.0f bytes/occurrence)\n", cs, ck / 1024, ck * 1024 / n
	printf "  the first shift after an import (reads the table, stores the snapshot): %.2f s, peak %.1f MB\n", fs, fk / 1024
	printf "  without the snapshot (BATHYCHRON_SNAPSHOT=off): %.2f s, peak %.1f MB\n", os, ok / 1024
	printf "  pandas/numpy equivalent:   %.2f s, peak %.1f MB (%.0f bytes/occurrence)\n", ps, pk / 1024, pk * 1024 / n
	printf "  speed ratio: %.1fx with the snapshot, %.1fx the first time, %.1fx without (target >= 10x); counts agree: %s\n", \
		(cs > 0 ? ps / cs : 0), (fs > 0 ? ps / fs : 0), (os > 0 ? ps / os : 0), agree
}'
