#!/bin/sh
# test_import.sh - bathychron import from the command line: summary line,
# exact row messages, exit status, refusals, maps, dry run.
. "$(dirname "$0")/setup.sh"
FIX=$TOP/tests/cli/fixtures
cd "$FIX" || exit 3

$BC init "$T/db" >/dev/null
expect_status 0 import_help $BC import --help
contains import_help_text "$T/out" "usage: bathychron import DB FILE..."
expect_status 2 import_usage $BC import "$T/db"
expect_status 2 import_unknown_option $BC import "$T/db" good.csv --frobnicate

expect_status 0 import_good $BC import "$T/db" good.csv
same_text import_good_summary "$T/out" "good.csv: 3 rows read, 3 stored, 0 quarantined"
[ -s "$T/err" ] && fail import_good_quiet_stderr "$(cat "$T/err")" || ok import_good_quiet_stderr
# The first occurrence file of a database is hashed while its rows are
# read (not in a pass before): the stored SHA-256 is still the file's, as
# sha256sum (GNU coreutils) gives it. Later files are hashed first.
got=$(sqlite3 "$T/db" "SELECT sha256 FROM import_batches WHERE batch_id = 1")
want=$(sha256sum <good.csv | cut -d' ' -f1)
[ -n "$want" ] && [ "$got" = "$want" ] && ok import_first_file_sha256 || fail import_first_file_sha256 "stored '$got', sha256sum '$want'"

# Identical content again: refused, naming the earlier batch.
expect_status 1 import_same_again $BC import "$T/db" good.csv
contains import_same_again_message "$T/err" "bathychron: good.csv: identical content was imported already as batch 1 on "

# Every kind of bad row: counts add up, one message per row, exit 1. The
# unknown-age line ends with the resolver's suggestions, cut here.
expect_status 1 import_mixed $BC import "$T/db" mixed.csv
same_text import_mixed_summary "$T/out" "mixed.csv: 17 rows read, 4 stored, 13 quarantined"
sed "s/\(unknown age 'Blorptian'\).*/\1/; s/(known: [^)]*)/(known: ...)/" "$T/err" >"$T/err2"
cat >"$T/expected" <<'EOT'
bathychron: mixed.csv:3: earliestAgeOrLowestStage: unknown age 'Blorptian'
bathychron: mixed.csv:4: earliestChronometricAge: 70 Ma is younger than latestChronometricAge 75 Ma (earliest is the older end: the larger number)
bathychron: mixed.csv:5: earliestChronometricAge: 'about 80' is not a number
bathychron: mixed.csv:6: minimumPaleodepthInMeters: -5 m is negative (palaeodepth is metres below sea level, >= 0)
bathychron: mixed.csv:7: minimumPaleodepthInMeters: 200 m is deeper than maximumPaleodepthInMeters 100 m
bathychron: mixed.csv:8: minimumPaleodepthInMeters: 'deep' is not a number
bathychron: mixed.csv:9: depositionalEnvironment: unknown environment 'moon pool' and no depth given (known: ...)
bathychron: mixed.csv:10: preservationMode: unknown preservation 'smashed' (known: ...)
bathychron: mixed.csv:11: decimalLatitude: 95 is outside -90..90
bathychron: mixed.csv:12: row: 6 cells, but the header has 16 columns (a missing or extra comma, or a line break outside quotes?)
bathychron: mixed.csv:13: scientificName: empty; every occurrence needs a taxon name
bathychron: mixed.csv:17: individualCount: '2.5' is not a whole number >= 0
bathychron: mixed.csv:18: earliestAgeOrLowestStage: no age: give a stage, series or system name, or earliestChronometricAge/latestChronometricAge in Ma
EOT
printf 'bathychron: mixed.csv: 1 rows stored with an age conflict (numbers and names disagree); see bathychron check %s\n' "$T/db" >>"$T/expected"
if cmp -s "$T/err2" "$T/expected"; then ok import_mixed_stderr_exact; else fail import_mixed_stderr_exact "$(diff "$T/expected" "$T/err2" | head -20)"; fi
contains import_mixed_unknown_age_suggests "$T/err" "unknown age 'Blorptian'; "
n=$(sqlite3 "$T/db" "SELECT count(*) FROM quarantine WHERE file = 'mixed.csv'")
[ "$n" = 13 ] && ok import_mixed_quarantine_rows || fail import_mixed_quarantine_rows "$n rows"

# More than 20 bad rows: the first 20 printed, then a pointer to check.
{
	echo "scientificName,earliestAgeOrLowestStage"
	i=0; while [ $i -lt 25 ]; do echo "T$i,"; i=$((i + 1)); done
} >"$T/many.csv"
expect_status 1 import_many_bad $BC import "$T/db" "$T/many.csv"
n=$(grep -c ': earliestAgeOrLowestStage: no age' "$T/err")
[ "$n" = 20 ] && ok import_many_capped || fail import_many_capped "$n printed"
contains import_many_more "$T/err" "bathychron: $T/many.csv: ... and 5 more; see bathychron check $T/db --quarantine"
same_text import_many_summary "$T/out" "$T/many.csv: 25 rows read, 0 stored, 25 quarantined"

# A Latin-1 file: refused as a whole, with its line, nothing written.
printf 'scientificName,locality,earliestAgeOrLowestStage\nA,B,Campanian\nC,K\366ln,Campanian\n' >"$T/latin1.csv"
expect_status 1 import_latin1 $BC import "$T/db" "$T/latin1.csv"
same_text import_latin1_message "$T/err" "bathychron: $T/latin1.csv:3: encoding: not UTF-8 (looks like Latin-1/Windows-1252); save the file as UTF-8"
n=$(sqlite3 "$T/db" "SELECT count(*) FROM import_batches WHERE file LIKE '%latin1.csv'")
[ "$n" = 0 ] && ok import_latin1_nothing_written || fail import_latin1_nothing_written "$n batches"

: >"$T/empty.csv"
expect_status 1 import_empty $BC import "$T/db" "$T/empty.csv"
same_text import_empty_message "$T/err" "bathychron: $T/empty.csv: empty file; expected a header row and data rows"
expect_status 3 import_missing_file $BC import "$T/db" "$T/nope.csv"

# TSV with a lab's own headers through the shipped example map; depth in feet.
printf 'Taxon\tStage\tDepth (ft)\tLat\tLon\tSite\tRef\tPreservation\n' >"$T/lab.tsv"
printf 'Fictocrinus epsilon\tMaastrichtian\t100-200\t51\t9\tHill Tarn\tCruz2010\tcalyx\n' >>"$T/lab.tsv"
expect_status 0 import_map_example $BC import "$T/db" "$T/lab.tsv" --map example
v=$(sqlite3 "$T/db" "SELECT min_depth_m || ' ' || max_depth_m || ' ' || taxon_group || ' ' || articulation FROM occurrences WHERE scientific_name = 'Fictocrinus epsilon'")
# 100 ft = 30.48 m, 200 ft = 60.96 m exactly (NIST SP 811, App. B)
[ "$v" = "30.48 60.96 Crinoidea articulated" ] && ok import_map_feet || fail import_map_feet "$v"

printf 'column "Taxon" -> scientificName\ncolumn "D" -> depth unit furlong\n' >"$T/bad.map"
expect_status 1 import_bad_map $BC import "$T/db" "$T/lab.tsv" --map "$T/bad.map"
contains import_bad_map_message "$T/err" "bathychron: $T/bad.map:2: unit: 'furlong' is not a known depth unit"
expect_status 3 import_unknown_map $BC import "$T/db" "$T/lab.tsv" --map nosuchmap
contains import_unknown_map_message "$T/err" "nosuchmap: no such column map (shipped maps: example"

# Dry run: the same report, nothing written.
before=$(sqlite3 "$T/db" "SELECT count(*) FROM occurrences")
printf 'scientificName,earliestAgeOrLowestStage,preservationMode\nA,Campanian,crown\nB,Campanian,squashed\n' >"$T/dry.csv"
expect_status 1 import_dry_run $BC import "$T/db" "$T/dry.csv" --dry-run
same_text import_dry_run_summary "$T/out" "$T/dry.csv: 2 rows read, 1 stored, 1 quarantined (dry run: nothing written)"
after=$(sqlite3 "$T/db" "SELECT count(*) FROM occurrences")
[ "$before" = "$after" ] && ok import_dry_run_wrote_nothing || fail import_dry_run_wrote_nothing "$before -> $after"

# No progress bar when stderr is not a terminal, even for a large file.
{
	echo "scientificName,earliestAgeOrLowestStage,locality"
	i=0; while [ $i -lt 40000 ]; do echo "Fictocrinus sp. $i,Campanian,Site number $((i % 50)) with a long name to make the file larger"; i=$((i + 1)); done
} >"$T/big.csv"
expect_status 0 import_big $BC import "$T/db" "$T/big.csv"
[ -s "$T/err" ] && fail import_big_no_progress "$(head -c 200 "$T/err")" || ok import_big_no_progress

# verbatimCoordinates in UTM zone 16N: the stored WGS 84 point equals what
# PROJ's own cs2cs (Debian proj-bin) gives for the same input.
printf 'scientificName,earliestAgeOrLowestStage,locality,verbatimCoordinates,verbatimSRS\nA,Campanian,UTM site,512345 E 1812345 N,EPSG:32616\n' >"$T/utm.csv"
expect_status 0 import_utm $BC import "$T/db" "$T/utm.csv"
if command -v cs2cs >/dev/null; then
	got=$(sqlite3 "$T/db" "SELECT printf('%.7f %.7f', latitude, longitude) FROM localities WHERE name = 'UTM site'")
	want=$(echo 512345 1812345 | cs2cs -f %.7f EPSG:32616 EPSG:4326 | awk '{ print $1, $2 }')
	[ "$got" = "$want" ] && ok import_utm_matches_cs2cs || fail import_utm_matches_cs2cs "$got vs $want"
else
	fail import_utm_cs2cs_available "cs2cs not installed (proj-bin)"
fi

# An index a user made on occurrences survives a load large enough for the
# importer to drop and rebuild the indexes around it (more rows than are
# stored, over 100,000 expected), and is consistent afterwards.
$BC init "$T/idx.gpkg" >/dev/null
sqlite3 "$T/idx.gpkg" "CREATE INDEX my_by_reference ON occurrences(reference_key)"
/usr/bin/python3 "$TOP/tests/bench/gen_occurrences.py" 110000 "$T/gen.csv" 7 >/dev/null 2>&1
expect_status 0 import_large_with_user_index $BC import "$T/idx.gpkg" "$T/gen.csv"
idx=$(sqlite3 "$T/idx.gpkg" "SELECT sql FROM sqlite_master WHERE name = 'my_by_reference'")
[ "$idx" = "CREATE INDEX my_by_reference ON occurrences(reference_key)" ] && ok import_user_index_kept || fail import_user_index_kept "$idx"
r=$(sqlite3 "$T/idx.gpkg" "PRAGMA integrity_check")
[ "$r" = ok ] && ok import_user_index_consistent || fail import_user_index_consistent "$r"
n=$(sqlite3 "$T/idx.gpkg" "SELECT count(*) FROM occurrences INDEXED BY my_by_reference WHERE reference_key >= ''")
[ "$n" = 110000 ] && ok import_user_index_complete || fail import_user_index_complete "$n rows through the index"
