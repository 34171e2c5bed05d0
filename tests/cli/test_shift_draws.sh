#!/bin/sh
# test_shift_draws.sh - bathychron shift under uncertainty and bias, end to
# end: reproducibility across runs and thread counts, the draw columns and
# tests, reference weighting, background, quota, the taphonomic sensitivity
# table and transport flag in md and latex, the methods paragraph, and
# usage errors.
. "$(dirname "$0")/setup.sh"

PY=/usr/bin/python3
DB="$T/d.gpkg"
$BC init "$DB" >/dev/null 2>&1 || { fail draws_setup "init failed"; exit 0; }
# Invented data. Crinoids: articulated material keeps 10 deep of 40 in both
# 60-55 and 50-45 Ma; disarticulated material goes from 15 deep of 100 to 85
# deep of 100 (most of it from one prolific monograph), so the shift rests on
# loose ossicles. Some age ranges cross 55 Ma, some depths straddle 200 m.
# Echinoids (preservation unknown) and blastoids (articulated, with a shift
# of their own) form the rest of the sampled background.
sqlite3 "$DB" "
INSERT INTO import_batches(kind, file, sha256, tool_version) VALUES ('occurrences', 'demo.csv', 'x', 'test');
WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < 100)
INSERT INTO occurrences(batch_id, line, scientific_name, taxon_group, older_ma, younger_ma, age_status, timescale,
  min_depth_m, max_depth_m, articulation, reference_key)
SELECT 1, i, 'Aus bus', 'crinoids', 58, CASE WHEN i % 5 = 0 THEN 54 ELSE 57 END, 'numeric', 't',
  CASE WHEN i <= 10 THEN 300 WHEN i <= 14 THEN 150 ELSE 20 END, CASE WHEN i <= 10 THEN 300 WHEN i <= 14 THEN 260 ELSE 40 END,
  'articulated', 'Ref' || (i % 4) FROM c WHERE i <= 40
UNION ALL
SELECT 1, 100 + i, 'Aus bus', 'crinoids', 48, 47, 'numeric', 't', CASE WHEN i <= 10 THEN 300 ELSE 20 END,
  CASE WHEN i <= 10 THEN 300 ELSE 40 END, 'articulated', 'Ref' || (i % 4) FROM c WHERE i <= 40
UNION ALL
SELECT 1, 200 + i, 'Aus bus', 'crinoids', 59, CASE WHEN i % 7 = 0 THEN 53 ELSE 56 END, 'numeric', 't',
  CASE WHEN i <= 15 THEN 400 ELSE 30 END, CASE WHEN i <= 15 THEN 500 ELSE 60 END, 'disarticulated', 'Ref' || (i % 3) FROM c
UNION ALL
SELECT 1, 300 + i, 'Aus bus', 'crinoids', 49, 46, 'numeric', 't', CASE WHEN i <= 85 THEN 400 ELSE 30 END,
  CASE WHEN i <= 85 THEN 500 ELSE 60 END, 'disarticulated', CASE WHEN i <= 80 THEN 'Monograph1901' ELSE 'Ref7' END FROM c
UNION ALL
SELECT 1, 400 + i, 'Cus dus', 'echinoids', 57, 56, 'numeric', 't', CASE WHEN i <= 30 THEN 300 ELSE 10 END,
  CASE WHEN i <= 30 THEN 300 ELSE 10 END, 'unknown', 'Ref8' FROM c
UNION ALL
SELECT 1, 500 + i, 'Cus dus', 'echinoids', 47, 46, 'numeric', 't', CASE WHEN i <= 50 THEN 300 ELSE 10 END,
  CASE WHEN i <= 50 THEN 300 ELSE 10 END, 'unknown', 'Ref8' FROM c
UNION ALL
SELECT 1, 600 + i, 'Dus eus', 'blastoids', 57, 56, 'numeric', 't', CASE WHEN i <= 5 THEN 300 ELSE 10 END,
  CASE WHEN i <= 5 THEN 300 ELSE 10 END, 'articulated', 'Ref9' FROM c WHERE i <= 40
UNION ALL
SELECT 1, 700 + i, 'Dus eus', 'blastoids', 47, 46, 'numeric', 't', CASE WHEN i <= 30 THEN 300 ELSE 10 END,
  CASE WHEN i <= 30 THEN 300 ELSE 10 END, 'articulated', 'Ref9' FROM c WHERE i <= 40;
"

expect_status 0 draws_help $BC shift --help
contains draws_help_draws "$T/out" "--draws N"
contains draws_help_weight "$T/out" "--weight-references"
contains draws_help_taphonomy "$T/out" "--taphonomy"

# Reproducibility: same seed, same bytes, whatever the thread count.
RUN="$BC shift $DB --group crinoids --bins 5 --draws 300 --seed 5 --bootstrap"
expect_status 0 draws_threads1 $RUN --threads 1 -o "$T/t1.csv"
expect_status 0 draws_threads2 $RUN --threads 2 -o "$T/t2.csv"
expect_status 0 draws_threads3 $RUN --threads 3 -o "$T/t3.csv"
expect_status 0 draws_again $RUN -o "$T/t4.csv"
if cmp -s "$T/t1.csv" "$T/t2.csv" && cmp -s "$T/t1.csv" "$T/t3.csv" && cmp -s "$T/t1.csv" "$T/t4.csv"; then
	ok draws_same_bytes_any_thread_count
else
	fail draws_same_bytes_any_thread_count "$(diff "$T/t1.csv" "$T/t2.csv" | head -c 400)"
fi
expect_status 0 draws_other_seed $BC shift "$DB" --group crinoids --bins 5 --draws 300 --seed 6 --bootstrap -o "$T/t6.csv"
if cmp -s "$T/t1.csv" "$T/t6.csv"; then fail draws_other_seed_differs "seeds 5 and 6 gave the same table"; else ok draws_other_seed_differs; fi
contains draws_stamp_seed "$T/t1.csv" "# stamp.random_numbers: seed 5; xoshiro256**"
contains draws_stamp_options "$T/t1.csv" "--draws 300 --resample age,depth --bootstrap --seed 5"
if grep -q -- "--threads" "$T/t1.csv"; then fail draws_stamp_no_threads "the stamp names --threads"; else ok draws_stamp_no_threads; fi

# The draw columns: quantiles in order, the breakpoint shares a distribution,
# the modal breakpoint at 55 Ma (the only boundary between bins with data),
# and the observed frac_deep inside the bootstrap band.
if $PY - "$T/t1.csv" >"$T/py" 2>&1 <<'EOF'
import sys, re
import pandas as pd
df = pd.read_csv(sys.argv[1], comment="#")
meta = dict(re.findall(r"^# tests\.(\w+): (.*)$", open(sys.argv[1]).read(), re.M))
d = df.dropna(subset=["draws_frac_deep_median"])
assert len(d) >= 2, df
assert (d.draws_frac_deep_lo <= d.draws_frac_deep_median).all() and (d.draws_frac_deep_median <= d.draws_frac_deep_hi).all()
assert (df.draws_breakpoint_share.fillna(0) >= 0).all() and df.draws_breakpoint_share.fillna(0).sum() <= 1 + 1e-9
assert int(meta["draws"]) == 300
assert float(meta["draws_breakpoint_mode_share"]) > 0.5, meta
fd = df.dropna(subset=["frac_deep"])
assert ((fd.draws_frac_deep_lo <= fd.frac_deep + 0.05) & (fd.frac_deep - 0.05 <= fd.draws_frac_deep_hi)).all(), fd
EOF
then ok draws_columns_consistent; else fail draws_columns_consistent "$(cat "$T/py")"; fi

# Depth draws only: the 4 straddling ranges of 60-55 Ma ([150, 260] m) become
# shallow or deep, so every draw lies between 25/140 and 29/140 (observed:
# 25 deep of 136, straddlers left out).
expect_status 0 draws_no_bootstrap $BC shift "$DB" --group crinoids --bins 5 --draws 200 --resample depth --format json
if $PY -c '
import json, sys
d = json.load(open(sys.argv[1]))
b = d["bins"][0]
assert b["n_deep"] == 25 and b["n_shallow"] == 111 and b["n_straddle"] == 4, b
assert 25 / 140 - 1e-9 <= b["draws_frac_deep_lo"] < b["draws_frac_deep_hi"] <= 29 / 140 + 1e-9, b
assert "age and depth uncertainty only" in d["stamp"]["draws"] or "not sampling error" in d["stamp"]["draws"], d["stamp"]["draws"]
' "$T/out" >"$T/py" 2>&1; then ok draws_depth_only_json; else fail draws_depth_only_json "$(cat "$T/py")"; fi

# Reference weighting: the prolific monograph weighs one reference.
expect_status 0 draws_refw $BC shift "$DB" --group crinoids --preservation disarticulated --bins 5 --weight-references --seed 2 --format json
if $PY -c '
import json, sys
d = json.load(open(sys.argv[1]))
b = [x for x in d["bins"] if x["bin"] == "50-45 Ma"][0]
# references: Monograph1901 (80 deep of 80) and Ref7 (5 deep of 20): mean 0.625
assert abs(b["frac_deep"] - 0.85) < 1e-12 and abs(b["refw_frac_deep"] - 0.625) < 1e-12, b
assert b["ref_units"] == 2 and b["refw_lo"] <= 0.625 <= b["refw_hi"], b
assert "1000 bootstrap resamples" in d["stamp"]["reference_weighting"]
' "$T/out" >"$T/py" 2>&1; then ok draws_reference_weighting; else fail draws_reference_weighting "$(cat "$T/py")"; fi

# Quota subsampling: with a quota of 40, the 60-55 Ma bin of articulated
# material (36 shallow or deep) is NA.
expect_status 0 draws_quota $BC shift "$DB" --group crinoids --preservation articulated --bins 5 --quota 40 --draws 50
grep -v '^#' "$T/out" >"$T/rows"
if $PY -c '
import sys, pandas as pd
df = pd.read_csv(sys.argv[1])
a, b = df.iloc[0], df.iloc[-1]
assert a.n_shallow + a.n_deep == 36 and pd.isna(a.quota_frac_deep_median), a
assert b.n_shallow + b.n_deep == 40 and b.quota_frac_deep_lo == b.quota_frac_deep_hi == 0.25, b
' "$T/rows" >"$T/py" 2>&1; then ok draws_quota_values; else fail draws_quota_values "$(cat "$T/py")"; fi

# Background: the crinoid selection against all occurrences of the same bins.
expect_status 0 draws_background $BC shift "$DB" --group crinoids --bins 5 --background binned
contains draws_background_test "$T/out" "# tests.affinity_test: one-sided binomial tests"
contains draws_background_stamp "$T/out" "# stamp.background: all occurrences with a palaeodepth in the database"
expect_status 0 draws_background_methods $BC shift "$DB" --group crinoids --bins 5 --background pooled --methods
contains draws_background_methods_cite "$T/out" "Kiessling and Aberhan (2007)"

# Taphonomy: the shift is carried by disarticulated material -> flagged.
expect_status 0 draws_taphonomy $BC shift "$DB" --group crinoids --bins 5 --taphonomy
contains draws_transport_flag "$T/out" "# tests.transport_flag: yes"
contains draws_transport_verdict "$T/out" "# tests.taphonomy: FLAG: the shift is carried by disarticulated"
expect_status 0 draws_taphonomy_methods $BC shift "$DB" --group crinoids --bins 5 --taphonomy --methods
contains draws_taphonomy_methods_flag "$T/out" "Result: FLAG"
expect_status 0 draws_taphonomy_md $BC shift "$DB" --group crinoids --bins 5 --taphonomy --table taphonomy --format md
contains draws_taphonomy_md_header "$T/out" "| bin | older_ma | younger_ma | n_all | frac_deep_all | frac_deep_lo_all | frac_deep_hi_all | n_articulated |"
contains draws_taphonomy_md_flag "$T/out" "- transport_flag: yes"
expect_status 0 draws_taphonomy_latex $BC shift "$DB" --group crinoids --bins 5 --taphonomy --table taphonomy --format latex
contains draws_taphonomy_latex_caption "$T/out" "\\caption{Taphonomic sensitivity"
contains draws_taphonomy_latex_col "$T/out" "frac\\_deep\\_articulated"
contains draws_taphonomy_latex_stamp "$T/out" "% stamp.transport_flag_rule: flag when the full-data trend is significant"
# A shift in articulated material: nothing to flag.
expect_status 0 draws_taphonomy_articulated_group $BC shift "$DB" --group blastoids --bins 5 --taphonomy
contains draws_no_flag "$T/out" "# tests.transport_flag: no"
contains draws_no_flag_verdict "$T/out" "# tests.taphonomy: the trend holds in articulated material alone"
# A shift with no articulated material at all is flagged, and says why.
expect_status 0 draws_taphonomy_no_articulated $BC shift "$DB" --group echinoids --bins 5 --taphonomy
contains draws_flag_no_articulated "$T/out" "# tests.taphonomy: FLAG: there is no articulated material to confirm the shift"

# The demo's table with resampling intervals, in md and latex.
expect_status 0 draws_md $BC shift "$DB" --group crinoids --bins 5 --draws 100 --bootstrap --format md
contains draws_md_columns "$T/out" "| draws_frac_deep_lo | draws_frac_deep_median | draws_frac_deep_hi |"
expect_status 0 draws_latex $BC shift "$DB" --group crinoids --bins 5 --draws 100 --bootstrap --format latex
contains draws_latex_columns "$T/out" "draws\\_frac\\_deep\\_lo & draws\\_frac\\_deep\\_median & draws\\_frac\\_deep\\_hi"
contains draws_latex_rng "$T/out" "% stamp.random_numbers: seed 1;"

# Usage errors.
expect_status 2 draws_bootstrap_needs_draws $BC shift "$DB" --bootstrap
same_text draws_bootstrap_needs_draws_message "$T/err" "bathychron: --bootstrap: needs --draws N (the number of bootstrap draws)"
expect_status 2 draws_bad_count $BC shift "$DB" --draws many
same_text draws_bad_count_message "$T/err" "bathychron: shift: --draws: 'many' is not a number of draws from 1 to 1000000
(see 'bathychron shift --help')"
expect_status 2 draws_bad_seed $BC shift "$DB" --draws 10 --seed -1
expect_status 2 draws_table_needs_taphonomy $BC shift "$DB" --table taphonomy
expect_status 2 draws_taphonomy_with_preservation $BC shift "$DB" --taphonomy --preservation calyx
contains draws_taphonomy_with_preservation_message "$T/err" "cannot be combined with --preservation"
expect_status 2 draws_focal_needs_background $BC shift "$DB" --background-with-focal
