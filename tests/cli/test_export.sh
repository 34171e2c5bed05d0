#!/bin/sh
# test_export.sh - bathychron export --format csv: columns, formula guard,
# and import -> export -> import storing the same values.
. "$(dirname "$0")/setup.sh"
FIX=$TOP/tests/cli/fixtures
cd "$FIX" || exit 3

$BC init "$T/a" >/dev/null
$BC import "$T/a" good.csv mixed.csv >/dev/null 2>&1
expect_status 0 export_help $BC export --help
expect_status 2 export_usage $BC export "$T/a" --format csv
expect_status 2 export_bad_format $BC export "$T/a" --format xls -o -
expect_status 0 export_csv $BC export "$T/a" --format csv -o "$T/e.csv"
same_text export_count "$T/err" "$T/e.csv: 7 occurrences written"
expect_status 0 export_stdout $BC export "$T/a" --format csv -o -
cmp -s "$T/out" "$T/e.csv" && ok export_stdout_same || fail export_stdout_same "stdout differs from the file"
head -n 1 "$T/e.csv" | tr -d '\r' >"$T/h"
same_text export_header "$T/h" "occurrenceID,scientificName,taxonGroup,order,family,genus,locality,country,decimalLatitude,decimalLongitude,geodeticDatum,coordinateUncertaintyInMeters,verbatimCoordinates,verbatimSRS,earliestAgeOrLowestStage,latestAgeOrHighestStage,earliestEpochOrLowestSeries,latestEpochOrHighestSeries,earliestPeriodOrLowestSystem,latestPeriodOrHighestSystem,earliestChronometricAge,latestChronometricAge,formation,member,bed,minimumPaleodepthInMeters,maximumPaleodepthInMeters,depositionalEnvironment,preservationMode,individualCount,associatedReferences,collector,notes"
# OWASP CSV injection guidance: a text cell starting with = gets a leading quote.
contains export_formula_guard "$T/e.csv" ",'=cmd"
# Python's csv module (Debian python3) reads the file back: RFC 4180 quoting.
python3 - "$T/e.csv" >"$T/py" <<'PY'
import csv, sys
rows = list(csv.DictReader(open(sys.argv[1], newline="", encoding="utf-8")))
print(len(rows), rows[0]["collector"], repr([r["notes"] for r in rows if r["occurrenceID"] == "M14"][0]))
PY
same_text export_python_reads "$T/py" "7 Smith, J. 'two\\r\\nline note'"

# Round trip: a second database from the export stores the same values.
$BC init "$T/b" >/dev/null
expect_status 0 export_reimport $BC import "$T/b" "$T/e.csv"
contains export_reimport_unguard_note "$T/err" "removed the spreadsheet formula guard (a leading ') from 1 cells"
q="SELECT d.occurrence_id, d.scientific_name, d.taxon_group, d.locality, d.country, d.longitude, d.latitude, d.age_from, d.age_to, d.older_ma, d.younger_ma, d.age_status, d.age_note, d.age_conflict, d.min_depth_m, d.max_depth_m, d.depth_source, d.environment, d.preservation, d.articulation, d.individual_count, d.reference_key, o.extra FROM occurrence_details d JOIN occurrences o ON o.occurrence_pk = d.occurrence_pk ORDER BY d.occurrence_pk"
sqlite3 "$T/a" "$q" >"$T/qa"
sqlite3 "$T/b" "$q" >"$T/qb"
if cmp -s "$T/qa" "$T/qb" && [ -s "$T/qa" ]; then ok export_roundtrip_same_values; else fail export_roundtrip_same_values "$(diff "$T/qa" "$T/qb" | head -5)"; fi
expect_status 0 export_dwca $BC export "$T/a" --format dwca -o "$T/x.zip"  # more in test_dwca.sh
