#!/bin/sh
# bench_draws.sh - resampling draws of bathychron shift over 1,000,000
# stored occurrences against one draw written with pandas/numpy
# (tests/bench/draws_pandas.py): seconds per draw and their ratio (target:
# at least 10 times faster per draw), and whether the per-bin deep shares
# agree. bathychron's time per draw = (time with N draws - time without) / N,
# whole process, default threads (one per processor). Not a test: it prints
# numbers. BENCH_DRAWS_N occurrences, BENCH_DRAWS draws; BENCH_KEEP=1 keeps files.
set -eu
top=$(cd "$(dirname "$0")/../.." && pwd)
BC=${BC_PROGRAM:-$top/build/bathychron}
N=${BENCH_DRAWS_N:-1000000}
D=${BENCH_DRAWS:-200}
d=$(mktemp -d)
trap 'rm -rf "$d"' EXIT
[ -n "${BENCH_KEEP:-}" ] && trap - EXIT && echo "keeping $d"
"$BC" init "$d/b.gpkg" >/dev/null
# Invented, deterministic occurrences (the recipe of bench_shift.sh): ages
# 0-250 Ma with ranges of 0-12 Myr, depths 0-3000 m with ranges of 0-400 m
# (some missing), 5000 references.
sqlite3 "$d/b.gpkg" "
INSERT INTO import_batches(kind, file, sha256, tool_version) VALUES ('occurrences', 'bench', 'x', 'bench');
WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < $N),
r(i, a, w, d, e) AS (SELECT i, (i * 7919 % 250000) / 1000.0, (i * 104729 % 12000) / 1000.0,
  i * 15485863 % 3000, i * 32452843 % 400 FROM c)
INSERT INTO occurrences(batch_id, line, scientific_name, taxon_group, older_ma, younger_ma, age_status, timescale,
  min_depth_m, max_depth_m, articulation, reference_key)
SELECT 1, i, 'Aus bus', 'crinoids', a + w, a, 'numeric', 'bench',
  CASE WHEN i % 50 = 0 THEN NULL ELSE d END, CASE WHEN i % 50 = 0 THEN NULL ELSE d + e END,
  CASE i % 3 WHEN 0 THEN 'articulated' WHEN 1 THEN 'disarticulated' ELSE 'unknown' END,
  'Ref' || (i % 5000) FROM r;"
secs() { # secs OUT CMD... -> wall seconds
	out=$1; shift
	/usr/bin/time -f '%e' -o "$d/time" "$@" >"$out"
	cat "$d/time"
}
base=$(secs "$d/c0.csv" "$BC" shift "$d/b.gpkg" --bins 5)
with=$(secs "$d/c1.csv" "$BC" shift "$d/b.gpkg" --bins 5 --draws "$D" --seed 1)
boot=$(secs "$d/c2.csv" "$BC" shift "$d/b.gpkg" --bins 5 --draws "$((D / 4))" --seed 1 --bootstrap)
/usr/bin/python3 "$top/tests/bench/draws_pandas.py" "$d/b.gpkg" 5 5 >"$d/p.txt"
p_s=$(awk '/^seconds_per_draw/ { print $2 }' "$d/p.txt")
# Agreement: bathychron's median over draws vs pandas' mean over 5 draws, per bin (|diff| < 0.01).
grep -v '^#' "$d/c1.csv" | awk -F, 'NR == 1 { for (i = 1; i <= NF; i++) if ($i == "draws_frac_deep_median") c = i; next } { print $2, $c }' >"$d/c.med"
agree=$(awk 'NR == FNR { if ($1 == "bin") p[$2] = $3; next } ($1 in p) && $2 != "NA" { n++; x = $2 - p[$1]; if (x < 0) x = -x; if (x >= 0.01) bad++ }
	END { print (n > 0 && !bad) ? "yes (" n " bins)" : "NO (" bad + 0 " of " n " bins differ)" }' "$d/p.txt" "$d/c.med")
awk -v n="$N" -v D="$D" -v b="$base" -v w="$with" -v bo="$boot" -v ps="$p_s" -v agree="$agree" -v nproc="$(nproc)" 'BEGIN {
	per = (w - b) / D; perb = (bo - b) / (D / 4)
	printf "bench draws: %d occurrences, %d processors\n", n, nproc
	printf "  bathychron shift --bins 5: %.2f s without draws, %.2f s with %d draws\n", b, w, D
	printf "  bathychron per draw (age and depth):      %.2f ms\n", per * 1000
	printf "  bathychron per draw with --bootstrap:     %.2f ms (%d draws)\n", perb * 1000, D / 4
	printf "  pandas/numpy per draw (mean of 5):        %.2f ms\n", ps * 1000
	printf "  speed ratio per draw: %.1fx (target >= 10x); with --bootstrap %.1fx; bin shares agree: %s\n",
		(per > 0 ? ps / per : 0), (perb > 0 ? ps / perb : 0), agree
}'
