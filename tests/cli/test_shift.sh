#!/bin/sh
# test_shift.sh - bathychron shift end to end: options, exit codes, formats
# parsed by outside readers, statistics checked against SciPy/statsmodels,
# and the data hash recomputed from its documented byte layout.
. "$(dirname "$0")/setup.sh"

PY=/usr/bin/python3
DB="$T/s.gpkg"
$BC init "$DB" >/dev/null 2>&1 || { fail shift_setup "init failed"; exit 0; }
# Invented data: 60-55 Ma 48 deep of 80, 55-50 Ma 56 deep of 70, 50-45 Ma
# 81 deep of 263 plus 5 straddling and 3 without depth; one odd group name.
sqlite3 "$DB" "
INSERT INTO import_batches(kind, file, sha256, tool_version) VALUES ('occurrences', 'demo.csv', 'x', 'test');
INSERT INTO localities(fid, name, longitude, latitude) VALUES (1, 'Quarry A', 5, 45), (2, 'Cliff B', 100, -10);
WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < 263)
INSERT INTO occurrences(batch_id, line, scientific_name, taxon_group, older_ma, younger_ma, age_status, timescale,
  min_depth_m, max_depth_m, articulation, reference_key, locality_id)
SELECT 1, i, 'Aus bus', 'crinoids', 58, 57, 'numeric', 't', CASE WHEN i <= 48 THEN 300 ELSE 20 END,
  CASE WHEN i <= 48 THEN 400 ELSE 60 END, 'articulated', 'Ref' || (i % 3), 1 FROM c WHERE i <= 80
UNION ALL
SELECT 1, i, 'Aus bus', 'crinoids', 53, 52, 'numeric', 't', CASE WHEN i <= 56 THEN 200 ELSE 10 END,
  CASE WHEN i <= 56 THEN 200 ELSE 200 END, 'disarticulated', 'Ref9', 2 FROM c WHERE i <= 70
UNION ALL
SELECT 1, i, 'Bus cus', 'crinoids', 48, 47, 'numeric', 't', CASE WHEN i <= 81 THEN 250 ELSE 5 END,
  CASE WHEN i <= 81 THEN NULL ELSE 5 END, '', '', NULL FROM c;
INSERT INTO occurrences(batch_id, line, scientific_name, taxon_group, older_ma, younger_ma, age_status, timescale,
  min_depth_m, max_depth_m) VALUES
 (1, 900, 'Bus cus', 'crinoids', 48, 47, 'numeric', 't', 150, 250), (1, 901, 'Bus cus', 'crinoids', 48, 47, 'numeric', 't', 150, 250),
 (1, 902, 'Bus cus', 'crinoids', 48, 47, 'numeric', 't', 150, 250), (1, 903, 'Bus cus', 'crinoids', 48, 47, 'numeric', 't', 150, 250),
 (1, 904, 'Bus cus', 'crinoids', 48, 47, 'numeric', 't', 199, 201),
 (1, 905, 'Bus cus', 'crinoids', 48, 47, 'numeric', 't', NULL, NULL), (1, 906, 'Bus cus', 'crinoids', 48, 47, 'numeric', 't', NULL, NULL),
 (1, 907, 'Bus cus', 'crinoids', 48, 47, 'numeric', 't', NULL, NULL),
 (1, 908, 'Cus dus', 'sea_lilies & co', 30, 29, 'numeric', 't', 10, 20);
"

expect_status 0 shift_help $BC shift --help
contains shift_help_text "$T/out" "usage: bathychron shift DB"
expect_status 2 shift_needs_db $BC shift
expect_status 2 shift_bad_span $BC shift "$DB" --span most
same_text shift_bad_span_message "$T/err" "bathychron: shift: --span: 'most' is not majority, all, split or max:MYR
(see 'bathychron shift --help')"
expect_status 2 shift_split_and_zones $BC shift "$DB" --split 200 --zones 200,1000
expect_status 2 shift_bins_typo $BC shift "$DB" --bins stages
same_text shift_bins_typo_message "$T/err" "bathychron: --bins: 'stages' is not stage, epoch, period, a width in Myr, or an existing bins file (name, older bound, younger bound)"
expect_status 2 shift_unknown_option $BC shift "$DB" --colour red
expect_status 3 shift_missing_db $BC shift "$T/none.gpkg"

# A selection with nothing in it: exit 1 and a clear message.
expect_status 1 shift_empty_selection $BC shift "$DB" --group sponges --bins 5
same_text shift_empty_selection_message "$T/err" "bathychron: $DB: no occurrences match the selection (group sponges)"
expect_status 1 shift_nothing_left $BC shift "$DB" --group crinoids --bins 5 --span max:0.5
contains shift_nothing_left_message "$T/err" "but none is left to count: 3 no palaeodepth, 418 age range longer than --span max"

# CSV: the fixed first ten columns in order, one row per bin, oldest first.
expect_status 0 shift_csv $BC shift "$DB" --group crinoids --bins 5 -o "$T/s.csv"
head -n 1 "$T/s.csv" | cut -d, -f1-10 >"$T/head"
same_text shift_csv_first_ten_columns "$T/head" "bin,older_ma,younger_ma,n,n_shallow,n_deep,n_straddle,frac_deep,frac_deep_lo,frac_deep_hi"
grep -v '^#' "$T/s.csv" | cut -d, -f1-7 >"$T/rows"
same_text shift_csv_rows "$T/rows" "bin,older_ma,younger_ma,n,n_shallow,n_deep,n_straddle
60-55 Ma,60,55,80,32,48,0
55-50 Ma,55,50,70,14,56,0
50-45 Ma,50,45,268,182,81,5"
contains shift_stamp_no_depth "$T/s.csv" "# stamp.excluded_no_palaeodepth: 3"
contains shift_stamp_caution "$T/s.csv" "# stamp.caution: Palaeodepths are interpretations"
contains shift_stamp_split_source "$T/s.csv" "common practice, no source"

# Outside readers: Python's csv module and pandas (comment="#").
if $PY - "$T/s.csv" >"$T/py" 2>&1 <<'EOF'
import csv, sys
import pandas as pd
rows = [r for r in csv.reader(open(sys.argv[1], newline="")) if r and not r[0].startswith("#")]
assert len(rows) == 4 and all(len(r) == len(rows[0]) for r in rows), rows
df = pd.read_csv(sys.argv[1], comment="#")
assert list(df.columns[:10]) == ["bin", "older_ma", "younger_ma", "n", "n_shallow", "n_deep", "n_straddle", "frac_deep", "frac_deep_lo", "frac_deep_hi"]
assert df.shape[0] == 3 and df["diff"].isna().iloc[0]
EOF
then ok shift_csv_reads_in_python_and_pandas; else fail shift_csv_reads_in_python_and_pandas "$(cat "$T/py")"; fi

# Statistics against outside libraries on the same counts: Wilson interval
# (statsmodels proportion_confint method='wilson'), Newcombe hybrid score
# difference (statsmodels confint_proportions_2indep method='newcomb',
# compare='diff'), Fisher two-sided (scipy.stats.fisher_exact).
if $PY - "$T/s.csv" >"$T/py" 2>&1 <<'EOF'
import sys
import pandas as pd
from scipy.stats import fisher_exact
from statsmodels.stats.proportion import proportion_confint, confint_proportions_2indep
df = pd.read_csv(sys.argv[1], comment="#")
for i, r in df.iterrows():
    lo, hi = proportion_confint(r.n_deep, r.n_deep + r.n_shallow, alpha=0.05, method="wilson")
    assert abs(lo - r.frac_deep_lo) < 1e-8 and abs(hi - r.frac_deep_hi) < 1e-8, (i, lo, hi, r.frac_deep_lo, r.frac_deep_hi)
    if i == 0:
        continue
    p = df.iloc[i - 1]
    lo, hi = confint_proportions_2indep(r.n_deep, r.n_deep + r.n_shallow, p.n_deep, p.n_deep + p.n_shallow, method="newcomb", compare="diff")
    assert abs(lo - r.diff_lo) < 1e-8 and abs(hi - r.diff_hi) < 1e-8, (i, lo, hi, r.diff_lo, r.diff_hi)
    fp = fisher_exact([[p.n_deep, p.n_shallow], [r.n_deep, r.n_shallow]])[1]
    assert abs(fp - r.fisher_p) <= 1e-5 * fp, (i, fp, r.fisher_p)
# check-values.md section 2: 56/70 - 48/80 = 0.2 (0.0524, 0.3339), Newcombe 1998b
assert abs(df.loc[1, "diff_lo"] - 0.0524314724) < 1e-9 and abs(df.loc[1, "diff_hi"] - 0.3338726540) < 1e-9
# section 1: Wilson 81/263 = (0.2553, 0.3662), Newcombe 1998a
assert abs(df.loc[2, "frac_deep_lo"] - 0.2552885199) < 1e-9 and abs(df.loc[2, "frac_deep_hi"] - 0.3662095770) < 1e-9
EOF
then ok shift_stats_match_scipy_statsmodels; else fail shift_stats_match_scipy_statsmodels "$(cat "$T/py")"; fi

# Trend across bins: Armitage z (N form) recomputed from the table's own
# counts with the formula of check-values.md section 4 (Cochran 1954;
# Armitage 1955), scores = minus the bin midpoint; logistic slope checked
# with statsmodels GLM (binomial) on the same grouped counts.
if $PY - "$T/s.csv" >"$T/py" 2>&1 <<'EOF'
import sys, re, math
import numpy as np, pandas as pd
import statsmodels.api as sm
text = open(sys.argv[1]).read()
df = pd.read_csv(sys.argv[1], comment="#")
meta = dict(re.findall(r"^# tests\.(\w+): (.*)$", text, re.M))
s = df.n_deep.values; n = (df.n_deep + df.n_shallow).values; x = -(df.older_ma + df.younger_ma).values / 2
N = n.sum(); pb = s.sum() / N; xb = (n * x).sum() / N
z = (s * (x - xb)).sum() / math.sqrt(pb * (1 - pb) * (n * (x - xb) ** 2).sum())
assert abs(z - float(meta["trend_z"])) < 1e-6, (z, meta["trend_z"])
fit = sm.GLM(np.column_stack([s, n - s]), sm.add_constant(x), family=sm.families.Binomial()).fit()
assert abs(fit.params[1] - float(meta["logit_slope_per_myr"])) < 1e-6 * abs(fit.params[1]), (fit.params, meta)
assert abs(fit.bse[1] - float(meta["logit_slope_se"])) < 1e-6 * fit.bse[1], (fit.bse, meta)
EOF
then ok shift_trend_and_logistic_match; else fail shift_trend_and_logistic_match "$(cat "$T/py")"; fi

# The data hash, recomputed from the byte layout in doc/shift.md.
if $PY - "$DB" "$T/s.csv" >"$T/py" 2>&1 <<'EOF'
import sys, re, sqlite3, struct, hashlib, math
con = sqlite3.connect(sys.argv[1])
h = hashlib.sha256()
nan = struct.pack("<Q", 0x7ff8000000000000)
f = lambda v: nan if v is None else struct.pack("<d", v)
s = lambda t: struct.pack("<I", len(t.encode())) + t.encode()
for pk, o, y, a, b, loc, art, ref in con.execute(
        "SELECT occurrence_pk, older_ma, younger_ma, min_depth_m, max_depth_m, locality_id, articulation, reference_key"
        " FROM occurrences WHERE taxon_group = 'crinoids' COLLATE NOCASE ORDER BY occurrence_pk"):
    h.update(struct.pack("<q", pk) + f(o) + f(y) + f(a) + f(b) + struct.pack("<q", -1 if loc is None else loc) + s(art) + s(ref))
want = re.search(r"^# stamp\.data_sha256: (\w+)$", open(sys.argv[2]).read(), re.M).group(1)
assert h.hexdigest() == want, (h.hexdigest(), want)
EOF
then ok shift_data_hash_reproducible; else fail shift_data_hash_reproducible "$(cat "$T/py")"; fi

# JSON parses and has stamp, bins, tests.
expect_status 0 shift_json $BC shift "$DB" --bins 5 --format json
if $PY -m json.tool "$T/out" >/dev/null 2>"$T/py" && $PY -c '
import json, sys
d = json.load(open(sys.argv[1]))
assert list(d) == ["stamp", "bins", "tests"], list(d)
assert list(d["bins"][0])[:10] == ["bin", "older_ma", "younger_ma", "n", "n_shallow", "n_deep", "n_straddle", "frac_deep", "frac_deep_lo", "frac_deep_hi"]
assert d["bins"][-1]["bin"] == "30-25 Ma" and d["bins"][-2]["n"] == 0 and d["bins"][-2]["frac_deep"] is None
' "$T/out" 2>"$T/py"; then ok shift_json_parses; else fail shift_json_parses "$(cat "$T/py")"; fi

# Markdown and LaTeX (escaping of a group name with _ and &).
expect_status 0 shift_md $BC shift "$DB" --bins 5 --format md
contains shift_md_table "$T/out" "| bin | older_ma | younger_ma | n | n_shallow | n_deep | n_straddle | frac_deep | frac_deep_lo | frac_deep_hi |"
expect_status 0 shift_latex $BC shift "$DB" --group 'sea_lilies & co' --bins 10 --format latex
contains shift_latex_booktabs "$T/out" "\\toprule"
contains shift_latex_caption_escaped "$T/out" "\\caption{Occurrence shift: group sea\\_lilies \\& co; bins: equal widths of 10 Myr"
contains shift_latex_stamp "$T/out" "% stamp.tool: bathychron"

# Zones, span rules, region, a bins file.
expect_status 0 shift_zones $BC shift "$DB" --bins 5 --zones 200,300 --group crinoids
head -n 1 "$T/out" | tr "," "\n" | sed -n '21,24p' | paste -s -d " " - >"$T/head"
same_text shift_zone_columns "$T/head" "n_zone1 n_zone2 n_zone3 n_zone_straddle"
head -n 1 "$T/out" | tr "," "\n" | tail -n 4 | paste -s -d " " - >"$T/head"
same_text shift_coverage_columns_last "$T/head" "n_cells lat_range_deg mst_km n_unlocated"
expect_status 0 shift_region $BC shift "$DB" --bins 5 --region 0,40,10,50
contains shift_region_counts "$T/out" "# stamp.excluded_no_coordinates: 272"
contains shift_region_outside "$T/out" "# stamp.excluded_outside_region: 70"
printf 'name\tolder\tyounger\nPalaeo\t60\t50\nEo\t50\t40\n' >"$T/bins.tsv"
expect_status 0 shift_bins_file $BC shift "$DB" --bins "$T/bins.tsv" --span split
grep -v '^#' "$T/out" | cut -d, -f1-4 >"$T/rows"
same_text shift_bins_file_rows "$T/rows" "bin,older_ma,younger_ma,n
Palaeo,60,50,150
Eo,50,40,268"
contains shift_bins_file_outside "$T/out" "# stamp.excluded_outside_bins: 1"
printf 'a,60,50\nb,55,x\n' >"$T/bad.csv"
expect_status 1 shift_bins_file_bad $BC shift "$DB" --bins "$T/bad.csv"
same_text shift_bins_file_bad_message "$T/err" "bathychron: $T/bad.csv:2: younger bound: 'x' is not a number of Ma"

# Methods paragraph.
expect_status 0 shift_methods $BC shift "$DB" --bins 5 --methods
contains shift_methods_wilson "$T/out" "Wilson (1927)"
contains shift_methods_newcombe "$T/out" "Newcombe's (1998b) hybrid score interval"
contains shift_methods_refs "$T/out" "Armitage P (1955) Tests for linear trends in proportions and frequencies."

# Stage bins from the database's default chart.
expect_status 0 shift_stage_bins $BC shift "$DB" --group crinoids
contains shift_stage_bins_ypresian "$T/out" "Ypresian,"

# Spatial coverage per bin, recomputed outside the program: cells from PROJ's
# cs2cs (EPSG:4326 -> EPSG:6933, floor of metres / cell), tree lengths by
# Prim's algorithm on GeographicLib's GeodSolve -i distances.
C="$T/cov.gpkg"
$BC init "$C" >/dev/null 2>&1
sqlite3 "$C" "
INSERT INTO import_batches(kind, file, sha256, tool_version) VALUES ('occurrences', 'invented.csv', 'x', 'test');
INSERT INTO localities(fid, name, longitude, latitude) VALUES (1, 'A', 5.5, 45.2), (2, 'B', 7.25, 46.9), (3, 'C', -3.1, 40.4),
  (4, 'D', 12.0, 55.6), (5, 'E', 5.5, 45.2), (6, 'F', NULL, NULL), (7, 'G', 150.2, -33.9), (8, 'H', -70.6, -33.4);
INSERT INTO occurrences(batch_id, line, scientific_name, taxon_group, older_ma, younger_ma, age_status, timescale, min_depth_m, max_depth_m, locality_id)
VALUES (1, 1, 'Aus bus', 'crinoids', 80, 79, 'numeric', 'x', 10, 20, 1), (1, 2, 'Aus bus', 'crinoids', 80, 79, 'numeric', 'x', 300, 400, 2),
  (1, 3, 'Aus bus', 'crinoids', 78, 77, 'numeric', 'x', 10, 20, 3), (1, 4, 'Aus bus', 'crinoids', 76, 75, 'numeric', 'x', 10, 20, 4),
  (1, 5, 'Aus bus', 'crinoids', 76, 75, 'numeric', 'x', 10, 20, 5), (1, 6, 'Aus bus', 'crinoids', 76, 75, 'numeric', 'x', 10, 20, 6),
  (1, 7, 'Aus bus', 'crinoids', 70, 69, 'numeric', 'x', 300, 400, 7), (1, 8, 'Aus bus', 'crinoids', 70, 69, 'numeric', 'x', 10, 20, 8),
  (1, 9, 'Aus bus', 'crinoids', 70, 69, 'numeric', 'x', 10, 20, 1);"
for km in 100 700; do
	expect_status 0 "shift_coverage_$km" $BC shift "$C" --bins stage --cell-km $km
	cp "$T/out" "$T/cov$km.csv"
done
if $PY - "$C" "$T/cov100.csv" "$T/cov700.csv" >"$T/py" 2>&1 <<'PYEOF'
import math, sqlite3, subprocess, sys
import pandas as pd
con = sqlite3.connect(sys.argv[1])
def proj(pts):
    out = subprocess.run(["cs2cs", "-f", "%.6f", "EPSG:4326", "EPSG:6933"], input="".join("%r %r\n" % (la, lo) for lo, la in pts),
                         capture_output=True, text=True, check=True).stdout.split("\n")
    return [tuple(float(v) for v in l.split()[:2]) for l in out if l.strip()]
def geod(a, b):
    out = subprocess.run(["GeodSolve", "-i", "-p", "9"], input="%r %r %r %r\n" % (a[1], a[0], b[1], b[0]),
                         capture_output=True, text=True, check=True).stdout.split()
    return float(out[2])
def mst(pts):
    if len(pts) < 2:
        return 0.0
    inside, best, total = {0}, {j: geod(pts[0], pts[j]) for j in range(1, len(pts))}, 0.0
    while best:
        j = min(best, key=best.get)
        total += best.pop(j)
        for k in best:
            best[k] = min(best[k], geod(pts[j], pts[k]))
    return total / 1000
for path, km in ((sys.argv[2], 100), (sys.argv[3], 700)):
    df = pd.read_csv(path, comment="#", keep_default_na=False, na_values=["NA"]).set_index("bin")
    for b, row in df.iterrows():
        locs = con.execute("SELECT DISTINCT l.fid, l.longitude, l.latitude FROM occurrences o JOIN localities l ON l.fid = o.locality_id"
                           " WHERE o.older_ma <= ? AND o.younger_ma >= ?", (row.older_ma, row.younger_ma)).fetchall()
        pts = sorted({(lo, la) for _, lo, la in locs if lo is not None})
        assert row.n_localities == len(locs) and row.n_unlocated == sum(lo is None for _, lo, _ in locs), (b, row)
        xy = proj(pts) if pts else []
        cells = {(math.floor(x / (km * 1000)), math.floor(y / (km * 1000))) for x, y in xy}
        assert row.n_cells == len(cells), (b, km, row.n_cells, cells)
        if pts:
            assert abs(row.lat_range_deg - (max(p[1] for p in pts) - min(p[1] for p in pts))) < 1e-9
        assert abs(row.mst_km - mst(pts)) <= 1e-9 * max(1.0, row.mst_km), (b, row.mst_km, mst(pts))
PYEOF
then ok shift_coverage_matches_proj_and_geographiclib; else fail shift_coverage_matches_proj_and_geographiclib "$(tail -c 600 "$T/py")"; fi
contains shift_coverage_stamp "$T/cov700.csv" "# stamp.coverage: per bin, the localities counted in n_localities: n_cells = occupied 700 x 700 km cells of EPSG:6933"
contains shift_coverage_option_stamped "$T/cov700.csv" "--cell-km 700"
expect_status 2 shift_bad_cell_km $BC shift "$C" --cell-km 0
expect_status 2 plot_no_cell_km $BC plot "$C" --cell-km 50 -o "$T/c.svg"
expect_status 0 shift_coverage_methods $BC shift "$C" --methods
contains shift_coverage_in_methods "$T/out" "Spatial coverage of each bin is given by its distinct localities"
