#!/bin/sh
# test_concurrent.sh - two bathychron processes on one database at once.
# Each must finish correctly, or wait and then proceed, or fail with the
# clear "database busy" message (exit 3); never corruption, never a
# half-written batch. A third case holds a write lock from outside for
# longer than bathychron waits (10 s), which must give exactly that
# message and leave the database unchanged.
. "$(dirname "$0")/setup.sh"
FIX=$TOP/tests/fixtures
DB=$T/c.gpkg
$BC init "$DB" >/dev/null
BUSY="bathychron: $DB: database busy (another bathychron is writing to it); try again when it has finished"

integrity() { # integrity NAME: PRAGMA integrity_check says ok
	r=$(sqlite3 "$DB" "PRAGMA integrity_check" 2>&1)
	[ "$r" = ok ] && ok "$1" || fail "$1" "$r"
}
# outcome NAME STATUS ERRFILE: 0, or 3 with exactly the busy message.
outcome() {
	if [ "$2" -eq 0 ]; then ok "$1"
	elif [ "$2" -eq 3 ] && [ "$(cat "$3")" = "$BUSY" ]; then ok "$1"
	else fail "$1" "exit $2: $(head -c 300 "$3")"; fi
}
# chart_complete NAME CHART STATUS: a chart either fully stored (5
# intervals, 10 labels, as in mini.skos.rdf) after success, or absent
# after a refusal.
chart_complete() {
	n=$(sqlite3 "$DB" "SELECT (SELECT count(*) FROM chart_intervals WHERE timescale = '$2') || '/' || (SELECT count(*) FROM timescales WHERE name = '$2')" 2>&1)
	if [ "$3" -eq 0 ] && [ "$n" = "5/1" ]; then ok "$1"
	elif [ "$3" -ne 0 ] && [ "$n" = "0/0" ]; then ok "$1"
	else fail "$1" "exit $3 but intervals/charts = $n"; fi
}

# 1. Two chart loads at once, several rounds.
for round in 1 2 3; do
	$BC timescale load "$DB" "$FIX/charts/mini.skos.rdf" --name "a$round" >"$T/o1" 2>"$T/e1" & p1=$!
	$BC timescale load "$DB" "$FIX/charts/mini.skos.rdf" --name "b$round" >"$T/o2" 2>"$T/e2" & p2=$!
	wait $p1; s1=$?
	wait $p2; s2=$?
	outcome "two_loads_${round}_first" $s1 "$T/e1"
	outcome "two_loads_${round}_second" $s2 "$T/e2"
	chart_complete "two_loads_${round}_first_whole" "a$round" $s1
	chart_complete "two_loads_${round}_second_whole" "b$round" $s2
done
integrity two_loads_integrity

# 2. A chart load and a shift table at once: the shift either sees the
# database before or after the load, never a broken one.
for round in 1 2; do
	$BC timescale load "$DB" "$FIX/charts/mini.skos.rdf" --name "s$round" >"$T/o1" 2>"$T/e1" & p1=$!
	$BC shift "$DB" --format csv >"$T/o2" 2>"$T/e2" & p2=$!
	wait $p1; s1=$?
	wait $p2; s2=$?
	outcome "load_and_shift_${round}_load" $s1 "$T/e1"
	chart_complete "load_and_shift_${round}_whole" "s$round" $s1
	# The database has no occurrences yet: shift says so (exit 1), or busy.
	if [ $s2 -eq 1 ] && grep -qF "no occurrences match the selection" "$T/e2"; then ok "load_and_shift_${round}_shift"
	else outcome "load_and_shift_${round}_shift" $s2 "$T/e2"; fi
done
integrity load_and_shift_integrity

# 3. A write lock held from outside for longer than bathychron waits.
sqlite3 "$DB" .dump >"$T/before.sql"
mkfifo "$T/lock"
sqlite3 "$DB" <"$T/lock" >"$T/lock.out" 2>&1 & holder=$!
exec 9>"$T/lock"
echo "BEGIN EXCLUSIVE; SELECT 'locked';" >&9
i=0; until grep -q locked "$T/lock.out" || [ $i -ge 50 ]; do sleep 0.1; i=$((i + 1)); done
start=$(date +%s)
expect_status 3 locked_load_status $BC timescale load "$DB" "$FIX/charts/mini.skos.rdf" --name locked
same_text locked_load_message "$T/err" "$BUSY"
waited=$(( $(date +%s) - start ))
[ "$waited" -ge 9 ] && ok locked_load_waited_first || fail locked_load_waited_first "gave up after ${waited}s"
echo "COMMIT;" >&9
exec 9>&-
wait "$holder"
integrity locked_integrity
sqlite3 "$DB" .dump >"$T/after.sql"
cmp -s "$T/before.sql" "$T/after.sql" && ok locked_db_unchanged || fail locked_db_unchanged "dump differs"

# ------------------------------------------------------------------
# Imports (a large file made here; every 8th row goes to the quarantine).
# ------------------------------------------------------------------
mkcsv() { # mkcsv FILE ROWS PREFIX
	awk -v n="$2" -v p="$3" 'BEGIN {
		print "occurrenceID,scientificName,taxonGroup,locality,decimalLatitude,decimalLongitude,earliestAgeOrLowestStage,minimumPaleodepthInMeters,maximumPaleodepthInMeters,preservationMode"
		split("Campanian,Maastrichtian,Santonian,Coniacian,Turonian,late Campanian,Cenomanian,Blorptian", st, ",")
		for (i = 0; i < n; i++) {
			d = (i * 37) % 900 + 5
			printf "%s%d,Fictocrinus sp%d,Crinoidea,Site %d,%.4f,%.4f,%s,%d,%d,crown\n", p, i, i % 50, i % 300,
				(i * 7919) % 12000 / 100 - 60, (i * 104729) % 34000 / 100 - 170, st[i % 8 + 1], d, d + i % 100
		}
	}' >"$1"
}
mkcsv "$T/a.csv" 8000 A
mkcsv "$T/b.csv" 8000 B
batch_whole() { # batch_whole NAME FILE STATUS: after exit 0/1 the file's batch holds 7000 + 1000 rows; after 3 none
	c=$(sqlite3 "$DB" "SELECT count(*) || ' ' || coalesce(sum(n_stored), 0) || ' ' ||
		coalesce(sum((SELECT count(*) FROM occurrences o WHERE o.batch_id = b.batch_id)), 0) || ' ' ||
		coalesce(sum((SELECT count(*) FROM quarantine q WHERE q.batch_id = b.batch_id)), 0)
		FROM import_batches b WHERE b.file = '$2'" 2>&1)
	if [ "$3" -le 1 ] && [ "$c" = "1 7000 7000 1000" ]; then ok "$1"
	elif [ "$3" -eq 3 ] && [ "$c" = "0 0 0 0" ]; then ok "$1"
	else fail "$1" "exit $3; batches, n_stored, occurrences, quarantined = $c"; fi
}
# import exits 1 here (rows quarantined), or 3 with the busy message.
import_outcome() {
	if [ "$2" -eq 1 ] && grep -qF "8000 rows read, 7000 stored, 1000 quarantined" "$4"; then ok "$1"
	elif [ "$2" -eq 3 ] && [ "$(cat "$3")" = "$BUSY" ]; then ok "$1"
	else fail "$1" "exit $2: $(head -c 300 "$3")"; fi
}

# 4. Two imports of different files at once: both stored, whole.
$BC import "$DB" "$T/a.csv" >"$T/o1" 2>"$T/e1" & p1=$!
$BC import "$DB" "$T/b.csv" >"$T/o2" 2>"$T/e2" & p2=$!
wait $p1; s1=$?
wait $p2; s2=$?
import_outcome two_imports_first $s1 "$T/e1" "$T/o1"
import_outcome two_imports_second $s2 "$T/e2" "$T/o2"
batch_whole two_imports_first_whole "$T/a.csv" $s1
batch_whole two_imports_second_whole "$T/b.csv" $s2
integrity two_imports_integrity

# 5. The same file imported twice at once: one batch, never two.
mkcsv "$T/same.csv" 8000 S
$BC import "$DB" "$T/same.csv" >"$T/o1" 2>"$T/e1" & p1=$!
$BC import "$DB" "$T/same.csv" >"$T/o2" 2>"$T/e2" & p2=$!
wait $p1; s1=$?
wait $p2; s2=$?
n=$(sqlite3 "$DB" "SELECT count(*) FROM import_batches WHERE file = '$T/same.csv'")
[ "$n" = 1 ] && ok same_file_twice_one_batch || fail same_file_twice_one_batch "$n batches (exits $s1, $s2)"
batch_whole same_file_twice_whole "$T/same.csv" 1
if grep -qF "identical content was imported already as batch" "$T/e1" "$T/e2"; then ok same_file_twice_refusal_says_why
else fail same_file_twice_refusal_says_why "$(head -c 200 "$T/e1") | $(head -c 200 "$T/e2")"; fi

# 6. An import and a shift table at once: the table is computed on the
# database before or after the batch, never in between.
mkcsv "$T/c.csv" 8000 C
before=$($BC shift "$DB" --format csv 2>/dev/null | awk -F, 'NR > 1 && $1 !~ /^#/ { s += $4 } END { print s + 0 }')
$BC import "$DB" "$T/c.csv" >"$T/o1" 2>"$T/e1" & p1=$!
$BC shift "$DB" --format csv >"$T/o2" 2>"$T/e2" & p2=$!
wait $p1; s1=$?
wait $p2; s2=$?
import_outcome import_and_shift_import $s1 "$T/e1" "$T/o1"
batch_whole import_and_shift_whole "$T/c.csv" $s1
after=$($BC shift "$DB" --format csv 2>/dev/null | awk -F, 'NR > 1 && $1 !~ /^#/ { s += $4 } END { print s + 0 }')
during=$(awk -F, 'NR > 1 && $1 !~ /^#/ { s += $4 } END { print s + 0 }' "$T/o2")
if [ $s2 -eq 3 ] && [ "$(cat "$T/e2")" = "$BUSY" ]; then ok import_and_shift_shift_consistent
elif [ $s2 -eq 0 ] && { [ "$during" = "$before" ] || [ "$during" = "$after" ]; }; then ok import_and_shift_shift_consistent
else fail import_and_shift_shift_consistent "exit $s2; n before $before, during $during, after $after"; fi
[ "$after" -gt "$before" ] && ok import_and_shift_counts_grew || fail import_and_shift_counts_grew "$before -> $after"
integrity import_and_shift_integrity

# 7. The same BibTeX file loaded twice at once: one batch, and the other
# load says it was loaded already (or busy).
$BC refs "$DB" "$TOP/tests/cli/fixtures/refs.bib" >"$T/o1" 2>"$T/e1" & p1=$!
$BC refs "$DB" "$TOP/tests/cli/fixtures/refs.bib" >"$T/o2" 2>"$T/e2" & p2=$!
wait $p1; s1=$?
wait $p2; s2=$?
n=$(sqlite3 "$DB" "SELECT count(*) FROM import_batches WHERE kind = 'references'")
[ "$n" = 1 ] && ok same_refs_twice_one_batch || fail same_refs_twice_one_batch "$n batches (exits $s1, $s2)"
if grep -qF "identical content was loaded already as batch" "$T/e1" "$T/e2"; then ok same_refs_twice_refusal_says_why
else fail same_refs_twice_refusal_says_why "$(head -c 200 "$T/e1") | $(head -c 200 "$T/e2")"; fi
integrity same_refs_twice_integrity
