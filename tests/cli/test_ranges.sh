#!/bin/sh
# test_ranges.sh - bathychron ranges end to end on the hand-checked set
# (tests/fixtures/ranges/hand.sql; the values are worked in doc/ranges.md):
# usage errors, the table read by Python's csv module and pandas, the
# range-end limits recomputed from the formula, every format, the figure.
. "$(dirname "$0")/setup.sh"

PY=/usr/bin/python3
DB="$T/r.gpkg"
$BC init "$DB" >/dev/null 2>&1 || { fail ranges_setup "init failed"; exit 0; }
sqlite3 "$DB" <"$TOP/tests/fixtures/ranges/hand.sql" || { fail ranges_setup "sqlite3 failed"; exit 0; }

expect_status 0 ranges_help $BC ranges --help
contains ranges_help_text "$T/out" "usage: bathychron ranges DB"
contains ranges_listed "$TOP/src/cli/main.c" '{"ranges", cmd_ranges,'
expect_status 0 ranges_in_command_list $BC --help
contains ranges_in_command_list_text "$T/out" "  ranges "

expect_status 2 ranges_needs_db $BC ranges
expect_status 2 ranges_bad_rank $BC ranges "$DB" --rank class
same_text ranges_bad_rank_message "$T/err" "bathychron: ranges: --rank: 'class' is not genus, family, order or scientificName
(see 'bathychron ranges --help')"
expect_status 2 ranges_no_bins $BC ranges "$DB" --bins stage
same_text ranges_no_bins_message "$T/err" "bathychron: ranges: --bins: ranges are not binned; every occurrence keeps its own age range
(see 'bathychron ranges --help')"
expect_status 2 ranges_no_bootstrap $BC ranges "$DB" --draws 100 --bootstrap
same_text ranges_no_bootstrap_message "$T/err" "bathychron: ranges: --bootstrap: a shift table option; ranges take --draws, --seed, --threads and --resample only
(see 'bathychron ranges --help')"
expect_status 2 ranges_no_quota $BC ranges "$DB" --quota 5
expect_status 2 ranges_bad_draws $BC ranges "$DB" --draws -3
expect_status 2 ranges_resample_none $BC ranges "$DB" --draws 10 --resample none
expect_status 2 ranges_figure_option_alone $BC ranges "$DB" --width 180
expect_status 2 ranges_bad_figure $BC ranges "$DB" --figure "$T/r.gif"
same_text ranges_bad_figure_message "$T/err" "bathychron: ranges: $T/r.gif: output file: unknown figure format '.gif'; name it .svg, .pdf or .png
(see 'bathychron ranges --help')"
expect_status 3 ranges_missing_db $BC ranges "$T/none.gpkg"
expect_status 1 ranges_empty_selection $BC ranges "$DB" --group corals
same_text ranges_empty_selection_message "$T/err" "bathychron: $DB: no occurrences match the selection (group corals)"

expect_status 0 ranges_csv $BC ranges "$DB" --group crinoids -o "$T/r.csv"
grep -v '^#' "$T/r.csv" | cut -d, -f1-7 >"$T/head"
same_text ranges_relations "$T/head" "taxon,n,n_straddle,n_references,n_localities,relation,retreat_supported
Alphacrinus,15,1,4,2,overlaps,yes
Betacrinus,4,0,2,2,ends_before,no
Deltacrinus,2,0,1,1,ends_before|overlaps|outlasts,NA
Epsiloncrinus,3,0,1,1,outlasts,NA
Gammacrinus,1,0,1,1,shallow_only,NA
Zetacrinus,1,0,1,0,deep_only,NA"
contains ranges_stamp_caution "$T/r.csv" "# stamp.caution: Palaeodepths are interpretations"
contains ranges_stamp_no_name "$T/r.csv" "# stamp.excluded_no_name_at_rank: 1"
contains ranges_stamp_method "$T/r.csv" "# stamp.ci_method: Strauss & Sadler (1989) / Marshall (1990)"
contains ranges_summary_retreats "$T/r.csv" "# tests.retreat_supported: 1"

# The table through outside readers, and every range-end limit recomputed
# from the published formula (Strauss & Sadler 1989; Marshall 1990, eq. 1):
# r = (1 - C)^(-1/(H-1)) - 1 on the midpoints the fixture gives.
if $PY - "$T/r.csv" >"$T/py" 2>&1 <<'EOF'
import csv, sys
import pandas as pd
rows = [r for r in csv.reader(open(sys.argv[1], newline="")) if r and not r[0].startswith("#")]
assert all(len(r) == len(rows[0]) for r in rows), "ragged rows"
df = pd.read_csv(sys.argv[1], comment="#", keep_default_na=False, na_values=["NA"]).set_index("taxon")
r = lambda h, c=0.95: (1 - c) ** (-1 / (h - 1)) - 1
a = df.loc["Alphacrinus"]
mids = [99.5 - 2 * i for i in range(10)]
R = max(mids) - min(mids)
assert a.shallow_horizons == 10 and abs(a.shallow_last_ci_ma - (min(mids) - r(10) * R)) < 1e-6, a.shallow_last_ci_ma
assert abs(a.shallow_first_ci_ma - (max(mids) + r(10) * R)) < 1e-6
assert (a.shallow_last_older_ma, a.shallow_last_younger_ma, a.shallow_last_interval) == (82, 81, "Campanian")
dm = [89.5, 79.5, 69.5, 59.5]
assert abs(a.deep_last_ci_ma - (59.5 - r(4) * 30)) < 1e-6
b = df.loc["Betacrinus"]
assert b.shallow_horizons == 2 and abs(b.shallow_last_ci_ma - 59.5) < 1e-9  # 97.5 - 19 * 2
g = df.loc["Gammacrinus"]
assert pd.isna(g.shallow_last_ci_ma) and g.shallow_first_interval == "Campanian" and g.deep_n == 0
assert df.loc["Deltacrinus"].shallow_last_interval == "Campanian-Maastrichtian"
assert df.loc["Epsiloncrinus"].shallow_last_ci_ma == 0
EOF
then ok ranges_limits_recomputed; else fail ranges_limits_recomputed "$(tail -c 500 "$T/py")"; fi

# The data hash, recomputed from the byte layout in doc/ranges.md (shift's
# layout, then the name at the rank; genus: the genus column, else the
# first word of scientificName).
for rank in genus scientificName; do
	$BC ranges "$DB" --group crinoids --rank $rank >"$T/h.csv" 2>/dev/null
	if $PY - "$DB" "$T/h.csv" $rank >"$T/py" 2>&1 <<'EOF'
import sys, re, sqlite3, struct, hashlib
con = sqlite3.connect(sys.argv[1])
rank = sys.argv[3]
h = hashlib.sha256()
nan = struct.pack("<Q", 0x7ff8000000000000)
f = lambda v: nan if v is None else struct.pack("<d", v)
s = lambda t: struct.pack("<I", len(t.encode())) + t.encode()
for pk, o, y, a, b, loc, art, ref, genus, family, sci in con.execute(
        "SELECT occurrence_pk, older_ma, younger_ma, min_depth_m, max_depth_m, locality_id, articulation, reference_key,"
        " genus, family, scientific_name FROM occurrences WHERE taxon_group = 'crinoids' COLLATE NOCASE ORDER BY occurrence_pk"):
    if rank == "scientificName":
        name = sci
    else:
        name = genus if genus.strip() else sci.strip().split(" ")[0] if " " in sci.strip() else sci
    h.update(struct.pack("<q", pk) + f(o) + f(y) + f(a) + f(b) + struct.pack("<q", -1 if loc is None else loc) + s(art) + s(ref) + s(name))
want = re.search(r"^# stamp\.data_sha256: (\w+)$", open(sys.argv[2]).read(), re.M).group(1)
assert h.hexdigest() == want, (h.hexdigest(), want)
EOF
	then ok "ranges_data_hash_reproducible_$rank"; else fail "ranges_data_hash_reproducible_$rank" "$(cat "$T/py")"; fi
done

# Ranks and zones.
expect_status 0 ranges_species $BC ranges "$DB" --group crinoids --rank scientificName --zones 200,1000 --format json
if $PY -c '
import json, sys
d = json.load(open(sys.argv[1]))
assert list(d) == ["stamp", "taxa", "tests"], list(d)
names = [t["taxon"] for t in d["taxa"]]
assert names == sorted(names) and "Alphacrinus secundus" in names and "Zetacrinus sp." in names, names
z = [t for t in d["taxa"] if t["taxon"] == "Zetacrinus sp."][0]
assert z["deep_n"] == 1 and z["zone3_n"] == 0 and z["zone1_n"] == 0, z
assert d["stamp"]["rank"] == "scientificName as stored"
' "$T/out" 2>"$T/py"; then ok ranges_json_species_zones; else fail ranges_json_species_zones "$(cat "$T/py")"; fi
expect_status 0 ranges_format_md $BC ranges "$DB" --format md
contains ranges_md_heading "$T/out" "**Taxa by relation**"
expect_status 0 ranges_format_tsv $BC ranges "$DB" --format tsv
expect_status 0 ranges_format_latex $BC ranges "$DB" --format latex
contains ranges_latex_caption "$T/out" "\\caption{Depth ranges per genus"

# The figure in each format; rows sorted by the last shallow occurrence
# (Betacrinus ends oldest, then Alphacrinus, Gammacrinus, Deltacrinus,
# Epsiloncrinus; Zetacrinus has no shallow occurrence and comes last).
for f in svg pdf png; do
	expect_status 0 "ranges_figure_$f" $BC ranges "$DB" --group crinoids --figure "$T/fig.$f" -o "$T/t.csv"
done
if pdfinfo "$T/fig.pdf" >/dev/null 2>&1; then ok ranges_figure_pdf_valid; else fail ranges_figure_pdf_valid "pdfinfo failed"; fi
if rsvg-convert "$T/fig.svg" -o "$T/svg.png" 2>/dev/null; then ok ranges_figure_svg_renders; else fail ranges_figure_svg_renders "rsvg-convert failed"; fi
if head -c 8 "$T/fig.png" | od -An -tx1 | tr -d ' \n' | grep -q '^89504e470d0a1a0a$'; then ok ranges_figure_png_signature; else fail ranges_figure_png_signature "not a PNG"; fi
pdftotext -raw "$T/fig.pdf" - 2>/dev/null | grep -oE '^(Alpha|Beta|Gamma|Delta|Epsilon|Zeta)crinus' | tr '\n' ' ' >"$T/order"; echo >>"$T/order"
same_text ranges_figure_row_order "$T/order" "Betacrinus Alphacrinus Gammacrinus Deltacrinus Epsiloncrinus Zetacrinus "
pdftotext "$T/fig.pdf" - 2>/dev/null | tr '\n' ' ' | tr -s ' ' >"$T/text"
contains ranges_figure_caption "$T/text" "weak evidence of a retreat"
# the timescale bar in the chart's colours: Campanian's ICS 2024-12 colour
# (from `bathychron timescale list`) as cairo writes it in SVG
camp=$($BC timescale list "$DB" | awk -F'\t' '$1 == "Campanian" { print $5 }')
want=$($PY -c 'import sys; h = sys.argv[1]; print("rgb(%s)" % ",".join(("%.6f" % (int(h[i:i + 2], 16) * 100 / 255)).rstrip("0").rstrip(".") + "%" for i in (1, 3, 5)))' "$camp")
contains ranges_figure_chart_colour "$T/fig.svg" "$want"

# The first-occurrence limit: Epsiloncrinus' 89.5 + 19 * 30 = 659.5 Ma lies
# beyond the Phanerozoic (the eon of its oldest horizon): held at its base,
# 538.8 Ma (ICS 2024-12), and flagged, as is its last limit held at 0 Ma.
contains ranges_first_ci_capped "$T/r.csv" ",538.8,0,first|last,"
if grep -q "659.5" "$T/r.csv"; then fail ranges_no_absurd_limit "659.5 Ma still reported"; else ok ranges_no_absurd_limit; fi
contains ranges_stamp_ci_capped "$T/r.csv" "# stamp.ci_capped: first: first_ci_ma reached beyond"

# Resampling draws: how often each relation occurs. Deltacrinus (hand-derived
# in tests/unit/test_ranges.c): outlasts with probability 0.125, ends before
# otherwise; the others have one relation in every draw.
expect_status 0 ranges_draws $BC ranges "$DB" --group crinoids --draws 8000 --seed 3 --threads 1 -o "$T/d1.csv"
expect_status 0 ranges_draws_threads $BC ranges "$DB" --group crinoids --draws 8000 --seed 3 --threads 3 -o "$T/d3.csv"
if cmp -s "$T/d1.csv" "$T/d3.csv"; then ok ranges_draws_same_for_any_threads; else fail ranges_draws_same_for_any_threads "1 and 3 threads differ"; fi
contains ranges_draws_stamp "$T/d1.csv" "# stamp.draws: 8000 draws, seed 3; in each, every age range wider than a point gives an age drawn uniformly"
contains ranges_draws_options "$T/d1.csv" "--draws 8000 --resample age,depth --seed 3"
if $PY - "$T/d1.csv" >"$T/py" 2>&1 <<'EOF'
import sys, math
import pandas as pd
df = pd.read_csv(sys.argv[1], comment="#", keep_default_na=False, na_values=["NA"]).set_index("taxon")
d = df.loc["Deltacrinus"]
se = math.sqrt(0.125 * 0.875 / 8000)
assert abs(d.p_outlasts - 0.125) < 5 * se and abs(d.p_ends_before - 0.875) < 5 * se and d.p_overlaps == 0, d
assert df.loc["Alphacrinus"].p_overlaps == 1 and df.loc["Betacrinus"].p_ends_before == 1 and df.loc["Epsiloncrinus"].p_outlasts == 1
assert (df.loc[["Alphacrinus", "Betacrinus", "Deltacrinus", "Epsiloncrinus"]].draws_both_zones == 1).all()
assert df.loc["Gammacrinus"].draws_both_zones == 0 and pd.isna(df.loc["Gammacrinus"].p_ends_before)
EOF
then ok ranges_draws_shares; else fail ranges_draws_shares "$(tail -c 500 "$T/py")"; fi

# The methods paragraph, with its citations.
expect_status 0 ranges_methods $BC ranges "$DB" --group crinoids --draws 500 --methods
contains ranges_methods_method "$T/out" "follow the classical method of Strauss & Sadler (1989) and Marshall (1990)"
contains ranges_methods_capped "$T/out" "was held at that bound"
contains ranges_methods_draws "$T/out" "estimated from 500 draws (seed 1;"
contains ranges_methods_ref_marshall "$T/out" "Marshall CR (1990) Confidence intervals on stratigraphic ranges. Paleobiology 16(1):1-10 [volume and pages from memory]."
contains ranges_methods_ref_strauss "$T/out" "Strauss D, Sadler PM (1989)"
contains ranges_methods_caution "$T/out" "a range end is the last find"
