#!/bin/sh
# test_injuries.sh - injuries import and encounter end to end on the demo survey.
. "$(dirname "$0")/setup.sh"

expect_status 0 injuries_help $BC injuries --help
contains injuries_help_names_columns "$T/out" "regenerationRateMmPerDay"
expect_status 0 encounter_help $BC encounter --help
contains encounter_help_cautions "$T/out" "collecting gear"
expect_status 2 injuries_no_subcommand $BC injuries
expect_status 2 encounter_no_db $BC encounter
expect_status 3 encounter_missing_db $BC encounter "$T/missing.gpkg"

$BC init "$T/db.gpkg" >/dev/null
cp "$TOP/import/demo/injuries.csv" "$T/injuries.csv"
cd "$T"
expect_status 2 encounter_split_and_zones $BC encounter db.gpkg --split 200 --zones 100,500
expect_status 1 encounter_empty $BC encounter db.gpkg
contains encounter_empty_says_import "$T/err" "no injury samples"

# The demo has two deliberately bad rows: both reported, the rest stored.
expect_status 1 injuries_import_demo $BC injuries import db.gpkg injuries.csv
same_text injuries_import_stderr "$T/err" "bathychron: injuries.csv:9: regenerationDays: no duration: give regenerationDays, or regenerateLengthMm with regenerationRateMmPerDay
bathychron: injuries.csv:14: minimumDepthInMeters: depth -20 m is negative (depths are positive downwards)"
same_text injuries_import_summary "$T/out" "injuries.csv: 13 rows read, 11 stored (394 individuals, 88 regenerating), 2 quarantined; batch 1"
expect_status 1 injuries_reimport_refused $BC injuries import db.gpkg injuries.csv
contains injuries_reimport_message "$T/err" "identical content was already imported as batch 1"
# the quarantine CSV holds one kind of batch at a time, ready for its own import
expect_status 1 injuries_quarantine_csv $BC check db.gpkg --quarantine --kind injuries
contains injuries_quarantine_has_rows "$T/out" ",regenerationDays,\"no duration: give regenerationDays"
expect_status 0 injuries_quarantine_not_in_occurrences $BC check db.gpkg --quarantine
check injuries_quarantine_occurrences_header_only sh -c "[ \$(wc -l < '$T/out') = 1 ] && grep -q '^quarantine_batch,quarantine_file,quarantine_line,quarantine_field,quarantine_reason' '$T/out'"
expect_status 2 check_kind_unknown $BC check db.gpkg --quarantine --kind bones
check injuries_quarantine_kept sh -c "[ \$(sqlite3 db.gpkg \"SELECT count(*) FROM quarantine q JOIN import_batches b USING (batch_id) WHERE b.kind = 'injuries'\") = 2 ]"

expect_status 0 encounter_csv $BC encounter db.gpkg --draws 2000 --seed 7 -o a.csv
check encounter_header sh -c "head -n 1 a.csv | grep -q '^bin,zone,site,min_depth_m,max_depth_m,n_samples,individuals,regenerating,prevalence,prevalence_lo,prevalence_hi,duration_min_days,duration_max_days,incidence_per_day,incidence_lo,incidence_hi,incidence_per_capita_per_day,interval_days,interval_lo_days,interval_hi_days,ratio_to,rate_ratio,rate_ratio_lo,rate_ratio_hi,arms,'"
check encounter_two_zones sh -c "[ \$(grep -c '^all,' a.csv) = 2 ]"
contains encounter_straddle_note "$T/err" "1 samples cross a zone boundary"
$BC encounter db.gpkg --draws 2000 --seed 7 >b.csv 2>/dev/null
check encounter_same_seed_same_output cmp -s a.csv b.csv
$BC encounter db.gpkg --draws 2000 --seed 8 >c.csv 2>/dev/null
check encounter_other_seed_differs sh -c "! cmp -s a.csv c.csv"
expect_status 0 encounter_poisson $BC encounter db.gpkg --model poisson --draws 500
contains encounter_poisson_stamp "$T/out" "stamp.model: poisson"
expect_status 0 encounter_json $BC encounter db.gpkg --format json --draws 500
check encounter_json_parses /usr/bin/python3 -c "import json,sys; d=json.load(open('$T/out')); assert len(d['groups']) == 2"
expect_status 0 encounter_by_bin $BC encounter db.gpkg --by bin --draws 500
contains encounter_by_bin_recent "$T/out" "Recent,deep (>=200 m)"
contains encounter_by_bin_fossil "$T/out" "Maastrichtian,shallow (<200 m)"
expect_status 0 encounter_by_site $BC encounter db.gpkg --by site --zones 100,1000 --draws 500
contains encounter_by_site_row "$T/out" "Tarnwick Trough"
expect_status 2 encounter_bad_model $BC encounter db.gpkg --model odds
expect_status 2 encounter_bad_level $BC encounter db.gpkg --level 95

# The figure, by extension; a wrong extension is refused before any work.
expect_status 0 encounter_figure_svg $BC encounter db.gpkg --by bin --draws 500 --figure f.svg
check encounter_figure_svg_is_svg grep -q '<svg' f.svg
expect_status 0 encounter_figure_pdf $BC encounter db.gpkg --draws 500 --figure f.pdf
check encounter_figure_pdf_is_pdf sh -c "head -c 5 f.pdf | grep -q '%PDF-'"
expect_status 0 encounter_figure_png $BC encounter db.gpkg --draws 500 --figure f.png --width 180
check encounter_figure_png_is_png sh -c "head -c 4 f.png | tail -c 3 | grep -q PNG"
expect_status 2 encounter_figure_bad_extension $BC encounter db.gpkg --figure f.gif
check encounter_figure_bad_extension_no_table sh -c "[ ! -s '$T/out' ]"
expect_status 3 encounter_figure_unwritable $BC encounter db.gpkg --draws 100 --figure "$T/no/such/dir/f.svg"
