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
D=${BENCH_DRAWS:-1000}
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
secs() { # secs OUT CMD... -> "wall cpu" seconds (cpu = user + system, all threads)
	out=$1; shift
	/usr/bin/time -f '%e %U %S' -o "$d/time" "$@" >"$out"
	awk '{ print $1, $2 + $3 }' "$d/time"
}
set -- $(secs "$d/c0.csv" "$BC" shift "$d/b.gpkg" --bins 5)
base=$1 base_cpu=$2
set -- $(secs "$d/c1.csv" "$BC" shift "$d/b.gpkg" --bins 5 --draws "$D" --seed 1)
with=$1 with_cpu=$2
set -- $(secs "$d/c2.csv" "$BC" shift "$d/b.gpkg" --bins 5 --draws "$((D / 10))" --seed 1 --bootstrap)
boot=$1 boot_cpu=$2
/usr/bin/python3 "$top/tests/bench/draws_pandas.py" "$d/b.gpkg" 5 5 >"$d/p.txt"
p_s=$(awk '/^seconds_per_draw/ { print $2 }' "$d/p.txt")
p_cpu=$(awk '/^cpu_seconds_per_draw/ { print $2 }' "$d/p.txt")
# Agreement: bathychron's median over draws vs pandas' mean over 5 draws, per bin (|diff| < 0.01).
grep -v '^#' "$d/c1.csv" | awk -F, 'NR == 1 { for (i = 1; i <= NF; i++) if ($i == "draws_frac_deep_median") c = i; next } { print $2, $c }' >"$d/c.med"
agree=$(awk 'NR == FNR { if ($1 == "bin") p[$2] = $3; next } ($1 in p) && $2 != "NA" { n++; x = $2 - p[$1]; if (x < 0) x = -x; if (x >= 0.01) bad++ }
	END { print (n > 0 && !bad) ? "yes (" n " bins)" : "NO (" bad + 0 " of " n " bins differ)" }' "$d/p.txt" "$d/c.med")
awk -v n="$N" -v D="$D" -v b="$base" -v w="$with" -v bo="$boot" -v bc="$base_cpu" -v wc="$with_cpu" -v boc="$boot_cpu" \
	-v ps="$p_s" -v pc="$p_cpu" -v agree="$agree" -v nproc="$(nproc)" -v load="$(cut -d' ' -f1 /proc/loadavg 2>/dev/null)" 'BEGIN {
	Db = int(D / 10)
	per = (w - b) / D; perb = (bo - b) / Db; cper = (wc - bc) / D; cperb = (boc - bc) / Db
	printf "bench draws: %d occurrences, %d processors (load average %s: other work slows the wall times)\n", n, nproc, load
	printf "  bathychron shift --bins 5: %.2f s without draws, %.2f s with %d draws\n", b, w, D
	printf "  per draw, wall (CPU over all threads):\n"
	printf "    bathychron, age and depth:      %7.2f ms (%.2f ms CPU)\n", per * 1000, cper * 1000
	printf "    bathychron, with --bootstrap:   %7.2f ms (%.2f ms CPU; %d draws)\n", perb * 1000, cperb * 1000, Db
	printf "    pandas/numpy (mean of 5 draws): %7.2f ms (%.2f ms CPU)\n", ps * 1000, pc * 1000
	printf "  speed ratio per draw: %.1fx wall, %.1fx CPU (target >= 10x); with --bootstrap %.1fx wall; bin shares agree: %s\n",
		(per > 0 ? ps / per : 0), (cper > 0 ? pc / cper : 0), (perb > 0 ? ps / perb : 0), agree
}'
