#!/bin/sh
# test_snapshot.sh - the column snapshot that shift reads (src/snapshot.c,
# schema/030): the first shift stores it, later ones read it, and every
# table is the same, byte for byte, as one computed straight from the
# occurrences table (BATHYCHRON_SNAPSHOT=off), for every kind of selection
# and after every way the occurrences can change.
. "$(dirname "$0")/setup.sh"

PY=/usr/bin/python3
DB="$T/s.gpkg"
DEMO="$TOP/import/demo"
$BC init "$DB" >/dev/null 2>&1 || { fail snapshot_setup "init failed"; exit 0; }
$BC refs "$DB" "$DEMO/references.bib" >/dev/null 2>&1
$BC import "$DB" "$DEMO/occurrences.csv" >/dev/null 2>&1
parts() { sqlite3 "$DB" "SELECT count(*) FROM occurrence_snapshot"; }

[ "$(parts)" = 0 ] && ok snapshot_none_after_import || fail snapshot_none_after_import "parts: $(parts)"

# same_as_table NAME ARGS...: shift with the snapshot equals shift without.
same_as_table() {
	name=$1; shift
	$BC shift "$DB" "$@" >"$T/with.csv" 2>"$T/with.err"; a=$?
	BATHYCHRON_SNAPSHOT=off $BC shift "$DB" "$@" >"$T/without.csv" 2>"$T/without.err"; b=$?
	if [ "$a" = "$b" ] && cmp -s "$T/with.csv" "$T/without.csv" && cmp -s "$T/with.err" "$T/without.err"; then
		ok "$name"
	else
		fail "$name" "exit $a/$b; $(diff "$T/with.csv" "$T/without.csv" | head -c 400) $(head -c 200 "$T/with.err")"
	fi
}

same_as_table snapshot_first_run
parts_n=$(parts)
[ "$parts_n" = 16 ] && ok snapshot_stored || fail snapshot_stored "parts after the first shift: $parts_n"
rows=$(sqlite3 "$DB" "SELECT DISTINCT rows FROM occurrence_snapshot")
[ "$rows" = "$(sqlite3 "$DB" "SELECT count(*) FROM occurrences")" ] && ok snapshot_covers_every_row || fail snapshot_covers_every_row "rows: $rows"
same_as_table snapshot_second_run
same_as_table snapshot_group --group stalked
same_as_table snapshot_group_nocase --group STALKED
same_as_table snapshot_taxon_genus --taxon somnicrinus
same_as_table snapshot_taxon_family --taxon Chimaerocrinidae
same_as_table snapshot_taxon_order --taxon fictocrinida
same_as_table snapshot_taxon_species --taxon "Ficticrinus placidus"
same_as_table snapshot_articulation --preservation articulated
same_as_table snapshot_articulation_unknown --preservation unknown
same_as_table snapshot_preservation_term --preservation calyx
same_as_table snapshot_region --region -10,30,30,60
same_as_table snapshot_region_antimeridian --region 170,-90,30,90
same_as_table snapshot_nothing_left --taxon Nonesuchia
same_as_table snapshot_split_zones --split 100 --span split --bins epoch
same_as_table snapshot_json --format json --span all

# ranges reads the same copy, with the name at its rank.
ranges_as_table() {
	name=$1; shift
	$BC ranges "$DB" "$@" >"$T/with.csv" 2>"$T/with.err"; a=$?
	BATHYCHRON_SNAPSHOT=off $BC ranges "$DB" "$@" >"$T/without.csv" 2>"$T/without.err"; b=$?
	if [ "$a" = "$b" ] && [ "$a" = 0 ] && cmp -s "$T/with.csv" "$T/without.csv" && cmp -s "$T/with.err" "$T/without.err"; then
		ok "$name"
	else
		fail "$name" "exit $a/$b; $(diff "$T/with.csv" "$T/without.csv" | head -c 400) $(head -c 200 "$T/with.err")"
	fi
}
ranges_as_table snapshot_ranges_genus
ranges_as_table snapshot_ranges_species --rank species
ranges_as_table snapshot_ranges_family --rank family --group stalked
ranges_as_table snapshot_ranges_order --rank order --region -10,30,30,60

# Every change to the table empties the copy; the next shift sees it.
[ "$(parts)" = 16 ] || $BC shift "$DB" >/dev/null 2>&1
sqlite3 "$DB" "UPDATE occurrences SET min_depth_m = 900, max_depth_m = 950 WHERE occurrence_pk = 3"
[ "$(parts)" = 0 ] && ok snapshot_emptied_by_update || fail snapshot_emptied_by_update "parts: $(parts)"
same_as_table snapshot_after_update
sqlite3 "$DB" "DELETE FROM occurrences WHERE occurrence_pk = 7"
[ "$(parts)" = 0 ] && ok snapshot_emptied_by_delete || fail snapshot_emptied_by_delete "parts: $(parts)"
same_as_table snapshot_after_delete
$BC shift "$DB" >/dev/null 2>&1
# a row put back into the gap with its own key, below the highest key
sqlite3 "$DB" "INSERT INTO occurrences(occurrence_pk, batch_id, line, scientific_name, older_ma, younger_ma, age_status, timescale, min_depth_m, max_depth_m)
 VALUES (7, 1, 9999, 'Gapfill us', 20, 19, 'numeric', 't', 1500, 1600)"
[ "$(parts)" = 0 ] && ok snapshot_emptied_by_insert || fail snapshot_emptied_by_insert "parts: $(parts)"
same_as_table snapshot_after_insert
ranges_as_table snapshot_ranges_after_insert
sqlite3 "$DB" "UPDATE occurrences SET genus = '  ', scientific_name = '  Spaced  name ' WHERE occurrence_pk = 11;
 UPDATE occurrences SET genus = '', scientific_name = 'Lonely ' WHERE occurrence_pk = 12;
 UPDATE occurrences SET genus = ' Padded', scientific_name = 'X y' WHERE occurrence_pk = 13"
$BC shift "$DB" >/dev/null 2>&1
ranges_as_table snapshot_ranges_odd_spacing
$BC shift "$DB" >/dev/null 2>&1
# REPLACE deletes without delete triggers (recursive_triggers is off); the insert trigger still fires
sqlite3 "$DB" "INSERT OR REPLACE INTO occurrences(occurrence_pk, batch_id, line, scientific_name, older_ma, younger_ma, age_status, timescale, min_depth_m, max_depth_m)
 VALUES (5, 1, 9998, 'Replaced us', 40, 39, 'numeric', 't', 10, 20)"
[ "$(parts)" = 0 ] && ok snapshot_emptied_by_replace || fail snapshot_emptied_by_replace "parts: $(parts)"
same_as_table snapshot_after_replace

# An import empties it inside its own transaction; a dry run leaves it.
$BC shift "$DB" >/dev/null 2>&1
$BC import "$DB" --dry-run "$DEMO/lab-sheet.csv" --map example >/dev/null 2>&1
[ "$(parts)" = 16 ] && ok snapshot_kept_by_dry_run || fail snapshot_kept_by_dry_run "parts: $(parts)"
trig=$(sqlite3 "$DB" "SELECT count(*) FROM sqlite_master WHERE type = 'trigger' AND name LIKE 'occurrence_snapshot_stale_%'")
$BC import "$DB" "$DEMO/lab-sheet.csv" --map example >/dev/null 2>&1
[ "$(parts)" = 0 ] && ok snapshot_emptied_by_import || fail snapshot_emptied_by_import "parts: $(parts)"
trig2=$(sqlite3 "$DB" "SELECT count(*) FROM sqlite_master WHERE type = 'trigger' AND name LIKE 'occurrence_snapshot_stale_%'")
[ "$trig" = 3 ] && [ "$trig2" = 3 ] && ok snapshot_triggers_kept_by_import || fail snapshot_triggers_kept_by_import "triggers before/after: $trig/$trig2"
same_as_table snapshot_after_import

# Another writer holds the lock: shift neither waits nor stores, and is right.
sqlite3 "$DB" "DELETE FROM occurrence_snapshot"
$PY - "$DB" "$T/locked" <<'EOF' &
import sqlite3, sys, time
con = sqlite3.connect(sys.argv[1], isolation_level=None)
con.execute("BEGIN IMMEDIATE")
open(sys.argv[2], "w").close()
time.sleep(4)
con.execute("ROLLBACK")
EOF
pid=$!
i=0
while [ ! -e "$T/locked" ] && [ $i -lt 50 ]; do sleep 0.1; i=$((i + 1)); done
$BC shift "$DB" >"$T/locked.csv" 2>"$T/locked.err"; st=$?
during=$(parts)
wait $pid
BATHYCHRON_SNAPSHOT=off $BC shift "$DB" >"$T/free.csv" 2>/dev/null
if [ "$st" = 0 ] && [ "$during" = 0 ] && cmp -s "$T/locked.csv" "$T/free.csv"; then ok snapshot_other_writer; else
	fail snapshot_other_writer "exit $st, parts $during, $(head -c 300 "$T/locked.err")"; fi

# A damaged copy is named, never read as data.
$BC shift "$DB" >/dev/null 2>&1
$PY - "$DB" <<'EOF'
import sqlite3, sys
con = sqlite3.connect(sys.argv[1])
d = con.execute("SELECT data FROM occurrence_snapshot WHERE part = 'reference_key'").fetchone()[0]
con.execute("UPDATE occurrence_snapshot SET data = ? WHERE part = 'reference_key'", (b"\xff\xff\xff\xff" + d[4:],))
con.commit()
EOF
expect_status 3 snapshot_damaged_refused $BC shift "$DB"
contains snapshot_damaged_message "$T/err" "the occurrence snapshot is damaged"
