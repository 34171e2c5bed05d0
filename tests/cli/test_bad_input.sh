#!/bin/sh
# test_bad_input.sh - the catalogue in tests/bad-input/: each kind of bad
# input gets its exact message and exit status, nothing valid is lost, and
# the database is untouched where it should be.
. "$(dirname "$0")/setup.sh"
BAD=$TOP/tests/bad-input
FIX=$TOP/tests/fixtures

# unchanged NAME FILE SUM: FILE's bytes still hash to SUM, and SQLite left
# no journal beside it.
unchanged() {
	now=$(sha256sum <"$2")
	if [ "$now" = "$3" ] && [ ! -e "$2-journal" ] && [ ! -e "$2-wal" ]; then ok "$1"; else fail "$1" "file changed or journal left behind"; fi
}
# dump_same NAME DB BEFORE: the database's SQL dump equals BEFORE.
dump_same() {
	sqlite3 "$2" .dump >"$T/.dump"
	if cmp -s "$T/.dump" "$3"; then ok "$1"; else fail "$1" "database content changed"; fi
}

# ------------------------------------------------------------------
# A database file that is not ours. Every command that opens a database
# refuses it with exit 3 and one clear line, and never writes to it.
# ------------------------------------------------------------------
mkdir "$T/dir.gpkg"
$BC init "$T/newer.gpkg" >/dev/null
sqlite3 "$T/newer.gpkg" "UPDATE bathychron_meta SET value = '999' WHERE key = 'schema_version'"
$BC init "$T/whole.gpkg" >/dev/null
head -c 8192 "$T/whole.gpkg" >"$T/damaged.gpkg"
for f in db-empty db-not-sqlite db-plain-sqlite db-other-geopackage; do cp "$BAD/$f.gpkg" "$T/$f.gpkg"; done

db_message() { # the expected message for each kind
	case $1 in
	db-empty|db-plain-sqlite) echo "bathychron: $T/$1.gpkg: not a bathychron database (no GeoPackage application id); refusing to touch it" ;;
	db-not-sqlite) echo "bathychron: $T/$1.gpkg: not a bathychron database (not an SQLite file)" ;;
	db-other-geopackage) echo "bathychron: $T/$1.gpkg: a GeoPackage, but not a bathychron database (no bathychron_meta table); refusing to touch it" ;;
	dir) echo "bathychron: $T/$1.gpkg: not a regular file" ;;
	newer) echo "bathychron: $T/$1.gpkg: schema version 999 is newer than this bathychron ($($BC --version | sed 's/^bathychron \([^ ]*\) .*/\1/')) understands ($($BC --version | sed 's/.*schema \([0-9]*\)).*/\1/')); use a newer bathychron" ;;
	damaged) echo "bathychron: $T/$1.gpkg: reading the file header: the database file is damaged (database disk image is malformed); restore it from a copy" ;;
	esac
}

for kind in db-empty db-not-sqlite db-plain-sqlite db-other-geopackage dir newer damaged; do
	db=$T/$kind.gpkg
	sum=$( [ -f "$db" ] && sha256sum <"$db" || echo dir)
	dbmsg=$(db_message $kind)
	expect_status 3 "${kind}_timescale_list" $BC timescale list "$db"
	same_text "${kind}_timescale_list_message" "$T/err" "$dbmsg"
	expect_status 3 "${kind}_timescale_load" $BC timescale load "$db" "$FIX/charts/mini.skos.rdf"
	same_text "${kind}_timescale_load_message" "$T/err" "$dbmsg"
	expect_status 3 "${kind}_shift" $BC shift "$db" --format csv
	same_text "${kind}_shift_message" "$T/err" "$dbmsg"
	[ -f "$db" ] && unchanged "${kind}_untouched" "$db" "$sum"
done
# init never overwrites any of them.
expect_status 3 init_refuses_foreign $BC init "$T/db-plain-sqlite.gpkg"
unchanged init_left_foreign_alone "$T/db-plain-sqlite.gpkg" "$(sha256sum <"$BAD/db-plain-sqlite.gpkg")"
# The foreign SQLite file still holds its own rows.
n=$(sqlite3 "$T/db-plain-sqlite.gpkg" "SELECT count(*) FROM samples")
[ "$n" = 2 ] && ok foreign_rows_kept || fail foreign_rows_kept "$n rows"

# ------------------------------------------------------------------
# Spreadsheets (CSV) that cannot be read as a whole: refused with one
# line naming the file (and line), exit 1, the database unchanged.
# ------------------------------------------------------------------
DB=$T/ingest.gpkg
$BC init "$DB" >/dev/null
refused() { # refused KIND EXPECTED_MESSAGE
	sqlite3 "$DB" .dump >"$T/before.sql"
	expect_status 1 "csv_${1}_refused" $BC import "$DB" "$BAD/csv-$1.csv"
	same_text "csv_${1}_message" "$T/err" "$2"
	dump_same "csv_${1}_db_unchanged" "$DB" "$T/before.sql"
}
refused empty "bathychron: $BAD/csv-empty.csv: empty file; expected a header row and data rows"
refused header-only "bathychron: $BAD/csv-header-only.csv: only a header row, no data rows; nothing imported"
# A gzip-compressed spreadsheet given as it is.
refused binary "bathychron: $BAD/csv-binary.csv:1: encoding: NUL byte in the text (a binary or UTF-16 file?); save the file as UTF-8 text"
# Line 2 is valid; line 3 has Latin-1 bytes: the whole file is refused, so
# no half of it is stored.
refused latin1 "bathychron: $BAD/csv-latin1.csv:3: encoding: not UTF-8 (looks like Latin-1/Windows-1252); save the file as UTF-8"
refused utf16 "bathychron: $BAD/csv-utf16.csv:1: encoding: UTF-16 (byte-order mark found); save the file as UTF-8"
refused nul "bathychron: $BAD/csv-nul.csv:3: encoding: NUL byte in the text (a binary or UTF-16 file?); save the file as UTF-8 text"
# The spreadsheet program's own files instead of a CSV export.
sqlite3 "$DB" .dump >"$T/before.sql"
expect_status 1 workbook_xls_refused $BC import "$DB" "$BAD/workbook-old.xls"
same_text workbook_xls_message "$T/err" "bathychron: $BAD/workbook-old.xls:1: encoding: an Excel 97-2003 workbook (.xls), not text; save the sheet as CSV (UTF-8) and import that"
expect_status 1 workbook_xlsx_refused $BC import "$DB" "$BAD/workbook.xlsx"
same_text workbook_xlsx_message "$T/err" "bathychron: $BAD/workbook.xlsx: a spreadsheet workbook (.xlsx or .ods), not CSV or a Darwin Core Archive; save the sheet as CSV (UTF-8) and import that"
dump_same workbooks_db_unchanged "$DB" "$T/before.sql"

# ------------------------------------------------------------------
# Files with some bad rows: the bad rows go to the quarantine with file,
# line, field and reason; every valid row is stored; every data line is in
# exactly one of the two.
# ------------------------------------------------------------------
# accounted NAME FILE: the lines of the last batch, stored plus
# quarantined, are exactly the file's data lines 2..N, each once.
accounted() {
	n=$(($(grep -c '' "$2") - 1))
	got=$(sqlite3 "$DB" "SELECT group_concat(line) FROM (SELECT line FROM occurrences WHERE batch_id = (SELECT max(batch_id) FROM import_batches)
		UNION ALL SELECT line FROM quarantine WHERE batch_id = (SELECT max(batch_id) FROM import_batches) ORDER BY line)")
	want=$(seq -s, 2 $((n + 1)))
	[ "$got" = "$want" ] && ok "$1" || fail "$1" "lines stored + quarantined: $got; expected $want"
}
stored_ids() { # stored_ids NAME IDS: occurrenceIDs stored by the last batch, in line order
	got=$(sqlite3 "$DB" "SELECT group_concat(occurrence_id, ' ') FROM (SELECT occurrence_id FROM occurrences WHERE batch_id = (SELECT max(batch_id) FROM import_batches) ORDER BY line)")
	[ "$got" = "$2" ] && ok "$1" || fail "$1" "stored: $got; expected $2"
}
rows_case() { # rows_case KIND SUMMARY (stderr expected in $T/want)
	expect_status 1 "csv_${1}_status" $BC import "$DB" "$BAD/csv-$1.csv"
	if cmp -s "$T/err" "$T/want"; then ok "csv_${1}_messages"; else fail "csv_${1}_messages" "$(diff "$T/want" "$T/err" | head -c 600)"; fi
	same_text "csv_${1}_summary" "$T/out" "$BAD/csv-$1.csv: $2"
	accounted "csv_${1}_nothing_lost" "$BAD/csv-$1.csv"
}

cat >"$T/want" <<MSG
bathychron: $BAD/csv-ragged.csv:3: row: 4 cells, but the header has 7 columns (a missing or extra comma, or a line break outside quotes?)
bathychron: $BAD/csv-ragged.csv:4: row: 9 cells, but the header has 7 columns (a missing or extra comma, or a line break outside quotes?)
MSG
rows_case ragged "4 rows read, 2 stored, 2 quarantined"
stored_ids csv_ragged_valid_rows_stored "R1 R4"
# The quarantine keeps every cell of a ragged row, the extra ones too.
$BC check "$DB" --quarantine >"$T/q" 2>&1
contains csv_ragged_extra_cells_kept "$T/q" "extra"
contains csv_ragged_extra_cells_kept_2 "$T/q" "more"

cat >"$T/want" <<MSG
bathychron: $BAD/csv-numbers.csv:3: decimalLatitude: 1e+308 is outside -90..90
bathychron: $BAD/csv-numbers.csv:4: earliestChronometricAge: '1e400' is out of range (too large)
bathychron: $BAD/csv-numbers.csv:6: maximumPaleodepthInMeters: 1e+308 m is deeper than any ocean (about 11 km at most); a wrong number or unit?
bathychron: $BAD/csv-numbers.csv:7: individualCount: '99999999999999999999' is not a whole number >= 0
bathychron: $BAD/csv-numbers.csv:9: decimalLatitude: '0x1p4' is not a number
bathychron: $BAD/csv-numbers.csv:10: decimalLatitude: '50,5' is not a number (use a decimal point, not a comma); also decimalLongitude: '10,25' is not a number (use a decimal point, not a comma)
MSG
rows_case numbers "11 rows read, 5 stored, 6 quarantined"
# Tiny numbers are numbers (1e-320 m underflows towards 0, it is not text).
stored_ids csv_numbers_valid_rows_stored "V1 H3 H6 H9 V2"

cat >"$T/want" <<MSG
bathychron: $BAD/csv-nan-inf.csv:3: decimalLatitude: 'NaN' is not a number
bathychron: $BAD/csv-nan-inf.csv:4: decimalLongitude: 'inf' is not a number
bathychron: $BAD/csv-nan-inf.csv:5: earliestChronometricAge: 'nan' is not a number
bathychron: $BAD/csv-nan-inf.csv:6: earliestChronometricAge: 'Infinity' is not a number; also latestChronometricAge: '-Infinity' is not a number
bathychron: $BAD/csv-nan-inf.csv:7: minimumPaleodepthInMeters: '-inf' is not a number; also maximumPaleodepthInMeters: 'INF' is not a number
bathychron: $BAD/csv-nan-inf.csv:8: individualCount: 'nan' is not a whole number >= 0
bathychron: $BAD/csv-nan-inf.csv:9: minimumPaleodepthInMeters: '#N/A' is not a number; also maximumPaleodepthInMeters: '#DIV/0!' is not a number
MSG
rows_case nan-inf "8 rows read, 1 stored, 7 quarantined"
stored_ids csv_nan-inf_valid_rows_stored "V1"
# Nothing infinite or absurd was stored by any batch so far.
n=$(sqlite3 "$DB" "SELECT count(*) FROM occurrences WHERE abs(older_ma) > 5000 OR abs(younger_ma) > 5000 OR min_depth_m > 12000 OR max_depth_m > 12000")
[ "$n" = 0 ] && ok csv_no_infinite_values_stored || fail csv_no_infinite_values_stored "$n rows"

cat >"$T/want" <<MSG
bathychron: $BAD/csv-dates-in-age.csv:3: earliestAgeOrLowestStage: unknown age '2021-03-04'; could not read the numbers (expected e.g. '72 Ma', '83.6-72.1 Ma', '75 +/- 2 Ma')
bathychron: $BAD/csv-dates-in-age.csv:4: earliestAgeOrLowestStage: unknown age '04/03/2021'; could not read the numbers (expected e.g. '72 Ma', '83.6-72.1 Ma', '75 +/- 2 Ma')
bathychron: $BAD/csv-dates-in-age.csv:5: earliestAgeOrLowestStage: unknown age 'March 2021'; not recognised; no chart name is close
bathychron: $BAD/csv-dates-in-age.csv:6: earliestChronometricAge: '2021-03-04' is not a number; also latestChronometricAge: '1999-01-01' is not a number
bathychron: $BAD/csv-dates-in-age.csv:7: earliestChronometricAge: 44259 Ma is older than the chart (4567 Ma); a date or years typed in a column of Ma?; also latestChronometricAge: 44000 Ma is older than the chart (4567 Ma); a date or years typed in a column of Ma?
bathychron: $BAD/csv-dates-in-age.csv:8: latestAgeOrHighestStage: unknown age '12-Mar'; could not read the numbers (expected e.g. '72 Ma', '83.6-72.1 Ma', '75 +/- 2 Ma')
bathychron: $BAD/csv-dates-in-age.csv:9: earliestChronometricAge: '72.1 Ma' is not a number
MSG
rows_case dates-in-age "8 rows read, 1 stored, 7 quarantined"
stored_ids csv_dates_valid_rows_stored "V1"

# ------------------------------------------------------------------
# Hostile text that is valid data: stored exactly as written, harmless.
# ------------------------------------------------------------------
# SQL metacharacters in every field: stored verbatim, every table intact.
tables_before=$(sqlite3 "$DB" "SELECT count(*) FROM sqlite_master")
expect_status 0 csv_sql_status $BC import "$DB" "$BAD/csv-sql.csv"
same_text csv_sql_summary "$T/out" "$BAD/csv-sql.csv: 2 rows read, 2 stored, 0 quarantined"
sqlite3 "$DB" "SELECT scientific_name FROM occurrences WHERE occurrence_id IN ('S1', 'S2') ORDER BY occurrence_id" >"$T/names"
same_text csv_sql_stored_verbatim "$T/names" "Robert'); DROP TABLE occurrences;--
Fictocrinus %s%n"
sqlite3 "$DB" "SELECT name FROM localities ORDER BY name" >"$T/locs"
contains csv_sql_locality_verbatim "$T/locs" "x' OR '1'='1"
contains csv_sql_locality_verbatim_2 "$T/locs" 'Quarry\\0Vell :name ?1 $x @y'
tables_after=$(sqlite3 "$DB" "SELECT count(*) FROM sqlite_master")
[ "$tables_before" = "$tables_after" ] && ok csv_sql_schema_intact || fail csv_sql_schema_intact "$tables_before -> $tables_after"
n=$(sqlite3 "$DB" "SELECT count(*) FROM import_batches")
[ "$n" -ge 5 ] && ok csv_sql_batches_intact || fail csv_sql_batches_intact "$n batches"
r=$(sqlite3 "$DB" "PRAGMA integrity_check")
[ "$r" = ok ] && ok csv_sql_integrity || fail csv_sql_integrity "$r"

# Cells that look like spreadsheet formulas: stored as text; export puts a
# ' before = + - @ tab CR (OWASP "CSV Injection") and never touches
# numbers; importing the export gives the same values back.
expect_status 0 csv_formulas_status $BC import "$DB" "$BAD/csv-formulas.csv"
sqlite3 "$DB" "SELECT scientific_name FROM occurrences WHERE occurrence_id = 'F1'" >"$T/f1"
same_text csv_formulas_stored_as_text "$T/f1" '=HYPERLINK("http://example.invalid")'
expect_status 0 csv_export_status $BC export "$DB" --format csv -o "$T/export.csv"
# No exported cell starts with a formula character, quoted or not.
/usr/bin/python3 - "$T/export.csv" >"$T/unsafe" <<'PY' && ok csv_export_no_formula_cells || fail csv_export_no_formula_cells "$(head -c 300 "$T/unsafe")"
import csv, re, sys
bad = 0
with open(sys.argv[1], newline="", encoding="utf-8") as f:
    for row in csv.reader(f):
        for cell in row:
            # a number (-33.92) is safe; text starting = + - @ tab CR is not
            if cell[:1] in ("=", "+", "@", "\t", "\r") or (cell[:1] == "-" and not re.fullmatch(r"-[0-9.eE+-]+", cell)):
                print(repr(cell)[:80]); bad = 1
sys.exit(bad)
PY
contains csv_export_guarded_equals "$T/export.csv" "\"'=HYPERLINK(\"\"http://example.invalid\"\")\""
contains csv_export_guarded_at "$T/export.csv" "'@SUM(A1:A9)"
contains csv_export_guarded_minus "$T/export.csv" "'-Hill Tarn"
contains csv_export_negative_number_untouched "$T/export.csv" ",-33.92,18.42,"
$BC init "$T/again.gpkg" >/dev/null
expect_status 0 csv_export_reimport $BC import "$T/again.gpkg" "$T/export.csv"
same_text csv_export_reimport_says_guards_removed "$T/err" "bathychron: $T/export.csv: removed the spreadsheet formula guard (a leading ') from 6 cells; --keep-guard-quotes keeps it"
$BC export "$T/again.gpkg" --format csv -o "$T/export2.csv" >/dev/null 2>&1
if cmp -s "$T/export.csv" "$T/export2.csv"; then ok csv_export_round_trip; else fail csv_export_round_trip "$(diff "$T/export.csv" "$T/export2.csv" | head -c 400)"; fi

# A 1 MB cell (generated here) is stored whole and comes back whole.
awk 'BEGIN { print "occurrenceID,scientificName,locality,earliestAgeOrLowestStage,minimumPaleodepthInMeters,maximumPaleodepthInMeters,preservationMode,notes"
	s = "Quarry Vell field notes "; while (length(s) < 1048576) s = s s
	printf "B1,Fictocrinus alpha,Quarry Vell,Campanian,120,150,crown,\"%s\"\n", substr(s, 1, 1048576)
	print "B2,Fictocrinus beta,Hill Tarn,Maastrichtian,300,400,calyx,short" }' >"$T/mega-field.csv"
$BC init "$T/mega.gpkg" >/dev/null
expect_status 0 csv_1mb_field_status $BC import "$T/mega.gpkg" "$T/mega-field.csv"
same_text csv_1mb_field_summary "$T/out" "$T/mega-field.csv: 2 rows read, 2 stored, 0 quarantined"
$BC export "$T/mega.gpkg" --format csv -o "$T/mega-out.csv" >/dev/null 2>&1
n=$(/usr/bin/python3 -c 'import csv, sys; csv.field_size_limit(1 << 30); r = list(csv.reader(open(sys.argv[1], newline="", encoding="utf-8"))); print(len(r[1][r[0].index("notes")]))' "$T/mega-out.csv")
[ "$n" = 1048576 ] && ok csv_1mb_field_whole || fail csv_1mb_field_whole "last cell of row B1 has $n characters"
# A complete 17 MB cell on one line is data, stored whole; a quote left
# open that runs on for more than 16 MB is refused as a whole at the line
# where it starts (an unmatched quote would otherwise swallow the file).
awk 'BEGIN { print "occurrenceID,scientificName,earliestAgeOrLowestStage,minimumPaleodepthInMeters,preservationMode,notes"
	s = "x"; while (length(s) < 17 * 1048576) s = s s; printf "L1,Fictocrinus alpha,Campanian,100,crown,\"%s\"\n", substr(s, 1, 17 * 1048576) }' >"$T/huge-field.csv"
expect_status 0 csv_17mb_field_status $BC import "$T/mega.gpkg" "$T/huge-field.csv"
n=$(sqlite3 "$T/mega.gpkg" "SELECT length(json_extract(extra, '$.notes')) FROM occurrences WHERE occurrence_id = 'L1'")
[ "$n" = $((17 * 1048576)) ] && ok csv_17mb_field_whole || fail csv_17mb_field_whole "$n characters stored"
rm -f "$T/huge-field.csv"
awk 'BEGIN { print "occurrenceID,scientificName,earliestAgeOrLowestStage,minimumPaleodepthInMeters,preservationMode,notes"
	print "R1,Fictocrinus alpha,Campanian,100,crown,\"a quote never closed"
	for (i = 2; i < 300000; i++) print "R" i ",Fictocrinus alpha,Campanian,100,crown,notes on the row, and some more text here" }' >"$T/runon.csv"
sqlite3 "$T/mega.gpkg" .dump >"$T/mega-before.sql"
expect_status 1 csv_runon_quote_refused $BC import "$T/mega.gpkg" "$T/runon.csv"
same_text csv_runon_quote_message "$T/err" "bathychron: $T/runon.csv:2: quoting: a record runs on for more than 16 MB from here (an unmatched \"?)"
dump_same csv_runon_quote_db_unchanged "$T/mega.gpkg" "$T/mega-before.sql"
rm -f "$T/runon.csv" "$T/mega-before.sql"

# ------------------------------------------------------------------
# Hostile XML (tests/fixtures/charts/): refused, nothing read from
# outside, the database unchanged.
# ------------------------------------------------------------------
sqlite3 "$DB" .dump >"$T/before.sql"
expect_status 1 xml_billion_laughs_refused $BC timescale load "$DB" "$FIX/charts/billion-laughs.rdf"
same_text xml_billion_laughs_message "$T/err" "bathychron: $FIX/charts/billion-laughs.rdf:3: DOCTYPE: refused: the document type declaration declares entity 'lol' (entities are never expanded; a chart file needs no DTD)"
expect_status 1 xml_external_entity_refused $BC timescale load "$DB" "$FIX/charts/external-entity.rdf"
if grep -q 'root:' "$T/out" "$T/err"; then fail xml_external_entity_not_read "/etc/passwd content in output"; else ok xml_external_entity_not_read; fi
dump_same xml_db_unchanged "$DB" "$T/before.sql"

# ------------------------------------------------------------------
# Darwin Core Archives: a zip bomb (16 MiB of zeros at 1029:1), a zip
# whose entry escapes the folder, a meta.xml with an external entity.
# Each refused as a whole before anything is written; nothing outside
# the archive is read or written.
# ------------------------------------------------------------------
sqlite3 "$DB" .dump >"$T/before.sql"
mkdir -p "$T/nest/a/b"; cp "$BAD/dwca-zip-slip.zip" "$T/nest/a/b/"
expect_status 1 dwca_zip_bomb_refused $BC import "$DB" "$BAD/dwca-zip-bomb.zip"
same_text dwca_zip_bomb_message "$T/err" "bathychron: $BAD/dwca-zip-bomb.zip/padding.bin: refused: declared compression ratio 1029:1 is over 1000:1 (possible zip bomb); nothing was imported"
# The slip archive is imported from a folder two levels down, so that
# '../../escaped.txt' would land in $T/work if it were ever written.
(cd "$T/nest/a/b" && $BC import "$DB" dwca-zip-slip.zip >"$T/out" 2>"$T/err"); s=$?
[ $s -eq 1 ] && ok dwca_zip_slip_refused || fail dwca_zip_slip_refused "exit $s"
same_text dwca_zip_slip_message "$T/err" "bathychron: dwca-zip-slip.zip: entry '../../escaped.txt': refused: '..' leaves the archive folder; nothing was imported"
[ ! -e "$T/nest/escaped.txt" ] && [ ! -e "$T/escaped.txt" ] && ok dwca_zip_slip_nothing_written || fail dwca_zip_slip_nothing_written "escaped.txt exists"
expect_status 1 dwca_xxe_refused $BC import "$DB" "$BAD/dwca-xxe"
same_text dwca_xxe_message "$T/err" "bathychron: $BAD/dwca-xxe/meta.xml:2: DOCTYPE: refused: a document type declaration ('archive') is not allowed here (no DTD is loaded and no entity is expanded); nothing was imported"
if grep -q 'root:' "$T/out" "$T/err"; then fail dwca_xxe_not_read "/etc/passwd content in output"; else ok dwca_xxe_not_read; fi
dump_same dwca_refusals_db_unchanged "$DB" "$T/before.sql"

# ------------------------------------------------------------------
# Every CSV/TSV the tool writes guards text that a spreadsheet would run
# (OWASP "CSV Injection"), not only export: resolve echoes its input, a
# shift table names bins from a user's file.
# ------------------------------------------------------------------
expect_status 1 resolve_formula_inputs $BC resolve --format csv "=1+2" "@SUM(A1)" "+cmd|' /C calc'!A0" "-Campanian" "a,=b"
same_text resolve_csv_guarded "$T/out" "input,status,from,to,older_ma,younger_ma,note,chart,uncertain
'=1+2,unknown,,,,,not recognised; no chart name is close,ics-2024-12,0
'@SUM(A1),unknown,,,,,not recognised; no chart name is close,ics-2024-12,0
'+cmd|' /C calc'!A0,unknown,,,,,not recognised; no chart name is close,ics-2024-12,0
'-Campanian,exact,Campanian,Campanian,83.6,72.2,,ics-2024-12,0
\"a,=b\",unknown,,,,,\"not recognised; nearest names: Albian, Aptian\",ics-2024-12,0"
expect_status 1 resolve_formula_tsv $BC resolve "=1+2"
contains resolve_tsv_guarded "$T/out" "'=1+2	unknown"
printf 'name\tolder_ma\tyounger_ma\n=HYPERLINK("http://example.invalid")\t90\t60\n' >"$T/bins.tsv"
$BC init "$T/shift.gpkg" >/dev/null
$BC import "$T/shift.gpkg" "$BAD/csv-formulas.csv" >/dev/null 2>&1
expect_status 0 shift_formula_bin $BC shift "$T/shift.gpkg" --bins "$T/bins.tsv" --format csv
contains shift_csv_bin_guarded "$T/out" "\"'=HYPERLINK(\"\"http://example.invalid\"\")\",90,60,3,"
expect_status 0 shift_formula_bin_tsv $BC shift "$T/shift.gpkg" --bins "$T/bins.tsv" --format tsv
contains shift_tsv_bin_guarded "$T/out" "'=HYPERLINK(\"http://example.invalid\")	90	60	3	"
