#!/bin/sh
# test_check.sh - bathychron check: the report, its exit status, and the
# quarantine as CSV that imports again.
. "$(dirname "$0")/setup.sh"
FIX=$TOP/tests/cli/fixtures
cd "$FIX" || exit 3

$BC init "$T/db" >/dev/null
expect_status 0 check_help $BC check --help
expect_status 2 check_bad_format $BC check "$T/db" --format latex
expect_status 0 check_empty_db $BC check "$T/db"
same_text check_empty_db_header "$T/out" "$(printf 'problem\tbatch\tfile\tline\tkey\tdetail')"

$BC import "$T/db" good.csv >/dev/null 2>&1
$BC refs "$T/db" refs.bib >/dev/null 2>&1
expect_status 0 check_clean $BC check "$T/db"
contains check_no_coordinates_is_information "$T/out" "1 of 3 stored occurrences have no coordinates (information; not counted as a problem)"

$BC import "$T/db" mixed.csv >/dev/null 2>&1
printf 'scientificName,locality,country,decimalLatitude,decimalLongitude,earliestAgeOrLowestStage\nFictocrinus delta,Quarry Vell,Norland,50.6,10.25,Maastrichtian\n' >"$T/moved.csv"
$BC import "$T/db" "$T/moved.csv" >/dev/null 2>&1
# Two unnamed rows 0.0005 deg of latitude (about 56 m) apart in one formation:
# reported as probably one site, never merged.
printf 'scientificName,formation,decimalLatitude,decimalLongitude,earliestAgeOrLowestStage\nNullacrinus vagus,Tarn Limestone Fm,48.1000,9.5000,Campanian\nNullacrinus vagus,Tarn Limestone Fm,48.1005,9.5000,Campanian\n' >"$T/unnamed.csv"
$BC import "$T/db" "$T/unnamed.csv" >/dev/null 2>&1
expect_status 1 check_problems $BC check "$T/db"
check check_unnamed_not_merged sh -c "[ \$(sqlite3 '$T/db' \"SELECT count(*) FROM localities WHERE name = '' AND formation = 'Tarn Limestone Fm'\") = 2 ]"
contains check_near_duplicate_detail "$T/out" "unnamed localities 56 m apart in the same formation (Tarn Limestone Fm)"
for k in quarantined unlinked_reference age_conflict duplicate locality_coordinates near_duplicate_locality; do
	grep -q "^$k	" "$T/out" && ok "check_reports_$k" || fail "check_reports_$k" "$(head -c 300 "$T/out")"
done
contains check_unlinked_key "$T/out" "$(printf 'unlinked_reference\t3\tmixed.csv\t15\tNobody2020\t')"
contains check_age_conflict_line "$T/out" "$(printf 'age_conflict\t3\tmixed.csv\t14\tM13\tage conflict: numbers 100-95 Ma lie outside Campanian')"
contains check_locality_distance "$T/out" "Quarry Vell, Norland"
contains check_duplicate_detail "$T/out" "$(printf 'duplicate\t3\tmixed.csv\t2\tFictocrinus alpha\t2 occurrences with the same taxon, locality, age and reference: mixed.csv:2, mixed.csv:19')"

expect_status 1 check_json $BC check "$T/db" --format json
python3 -c 'import json,sys; d=json.load(open(sys.argv[1])); assert any(r["problem"]=="duplicate" for r in d)' "$T/out" \
	&& ok check_json_parses || fail check_json_parses "$(head -c 300 "$T/out")"
expect_status 1 check_csv $BC check "$T/db" --format csv
contains check_csv_header "$T/out" "problem,batch,file,line,key,detail"

# The quarantine as CSV: fix the cells and import again.
expect_status 1 check_quarantine $BC check "$T/db" --quarantine -o "$T/q.csv"
head -n 1 "$T/q.csv" | grep -q '^quarantine_batch,quarantine_file,quarantine_line,quarantine_field,quarantine_reason,occurrenceID,' \
	&& ok check_quarantine_header || fail check_quarantine_header "$(head -n 1 "$T/q.csv")"
n=$(python3 -c 'import csv,sys; print(sum(1 for _ in csv.DictReader(open(sys.argv[1], newline=""))))' "$T/q.csv")
[ "$n" = 13 ] && ok check_quarantine_rows || fail check_quarantine_rows "$n"
# Repair the two depth rows and the preservation row, then import them.
python3 - "$T/q.csv" "$T/fixed.csv" <<'PY'
import csv, sys
rows = list(csv.DictReader(open(sys.argv[1], newline="")))
fixed = []
for r in rows:
    if r["occurrenceID"] == "M5": r["minimumPaleodepthInMeters"] = "5"
    elif r["occurrenceID"] == "M6": r["minimumPaleodepthInMeters"], r["maximumPaleodepthInMeters"] = "100", "200"
    elif r["occurrenceID"] == "M9": r["preservationMode"] = "arm"
    else: continue
    fixed.append(r)
w = csv.DictWriter(open(sys.argv[2], "w", newline=""), fieldnames=list(rows[0].keys()))
w.writeheader(); w.writerows(fixed)
PY
expect_status 0 check_reimport_fixed $BC import "$T/db" "$T/fixed.csv"
same_text check_reimport_fixed_summary "$T/out" "$T/fixed.csv: 3 rows read, 3 stored, 0 quarantined"

# Text a spreadsheet would run (= + - @ first) gets a leading ' in tsv as
# in csv (OWASP "CSV Injection"); here an unlinked reference key.
printf 'occurrenceID,scientificName,earliestAgeOrLowestStage,minimumPaleodepthInMeters,maximumPaleodepthInMeters,associatedReferences\nG1,Aus bus,Campanian,10,20,=HYPERLINK("x")\nG2,Aus bus,Campanian,10,20,-ref\n' >"$T/guard.csv"
$BC import "$T/db" "$T/guard.csv" >/dev/null 2>&1
expect_status 1 check_tsv_guard $BC check "$T/db" --format tsv
contains check_tsv_guard_equals "$T/out" "$(printf "\t'=HYPERLINK(\"x\")\t")"
contains check_tsv_guard_minus "$T/out" "$(printf "\t'-ref\t")"
if grep -q "$(printf '\t[=+@]')" "$T/out"; then fail check_tsv_no_formula_cells "$(grep "$(printf '\t[=+@]')" "$T/out" | head -c 300)"; else ok check_tsv_no_formula_cells; fi
