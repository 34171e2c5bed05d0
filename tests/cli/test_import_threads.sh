#!/bin/sh
# test_import_threads.sh - a CSV import reads and checks rows on a second
# thread and stores them on the first (src/import_queue.c). The
# result must not depend on it: the same file imported with
# BATHYCHRON_IMPORT_THREADS=1 (one thread) gives the same stored rows,
# quarantine entries (in the same order), messages and summary.
. "$(dirname "$0")/setup.sh"
CSV=$T/mixed.csv
# Invented rows: more than the queue holds (4 x 64), good and bad ones
# interleaved, quoted cells with delimiters and line breaks, a short row.
awk 'BEGIN {
	print "occurrenceID,scientificName,locality,decimalLatitude,decimalLongitude,earliestAgeOrLowestStage,latestAgeOrHighestStage,minimumPaleodepthInMeters,depositionalEnvironment,preservationMode,notes"
	split("Campanian,Maastrichtian,Blorptian,upper Campanian,,Danian", st, ",")
	split("crown,calyx,columnal,fragment,", pr, ",")
	for (i = 0; i < 3000; i++) {
		if (i % 211 == 0) { printf "T%d,Fictocrinus sp\n", i; continue }
		d = (i % 13 == 0) ? "-5" : (i % 17 == 0 ? "" : (i * 37) % 900)
		printf "T%d,%s,Site %d,%.3f,%.3f,%s,%s,%s,%s,%s,\"note %d, \"\"q\"\"\n2nd line\"\n", i,
			(i % 29 == 0) ? "" : "Fictocrinus sp" i % 40, i % 70, (i * 7) % 170 - 85, (i * 13) % 350 - 175,
			st[i % 6 + 1], st[(i + 1) % 6 + 1], d, (i % 17 == 0) ? "outer shelf" : "", pr[i % 5 + 1], i
	}
}' >"$CSV"
$BC init "$T/one.gpkg" >/dev/null
$BC init "$T/two.gpkg" >/dev/null
BATHYCHRON_IMPORT_THREADS=1 $BC import "$T/one.gpkg" "$CSV" >"$T/one.out" 2>"$T/one.err"
s1=$?
$BC import "$T/two.gpkg" "$CSV" >"$T/two.out" 2>"$T/two.err"
s2=$?
[ $s1 -eq 1 ] && [ $s2 -eq 1 ] && ok exit_status_both_1 || fail exit_status_both_1 "one thread $s1, two threads $s2"
grep -q 'quarantined' "$T/one.out" && cmp -s "$T/one.out" "$T/two.out" && ok same_summary || fail same_summary "$(cat "$T/one.out") | $(cat "$T/two.out")"
# (the closing hint names the database, the one difference)
sed 's/one\.gpkg/DB/' "$T/one.err" >"$T/one.msg"
sed 's/two\.gpkg/DB/' "$T/two.err" >"$T/two.msg"
[ "$(wc -l <"$T/one.msg")" -gt 20 ] && cmp -s "$T/one.msg" "$T/two.msg" && ok same_messages || fail same_messages "$(diff "$T/one.msg" "$T/two.msg" | head -c 400)"
# Every table but the batch's time stamps and path-free options.
dump() {
	sqlite3 "$1" "SELECT * FROM occurrences ORDER BY occurrence_pk; SELECT * FROM quarantine ORDER BY rowid;
		SELECT fid, name, country, formation, longitude, latitude FROM localities ORDER BY fid;
		SELECT * FROM locality_coordinates ORDER BY rowid; SELECT n_read, n_stored, n_quarantined FROM import_batches"
}
dump "$T/one.gpkg" >"$T/one.dump"
dump "$T/two.gpkg" >"$T/two.dump"
n=$(sqlite3 "$T/two.gpkg" "SELECT count(*) FROM occurrences")
[ "$n" -gt 500 ] && ok enough_rows_stored || fail enough_rows_stored "$n"
cmp -s "$T/one.dump" "$T/two.dump" && ok same_database || fail same_database "$(diff "$T/one.dump" "$T/two.dump" | head -c 600)"
