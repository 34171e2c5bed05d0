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
