#!/bin/sh
# test_crash.sh - crash safety: `import` killed with SIGKILL at many points
# of a large import. After every kill PRAGMA integrity_check is ok, the
# batch is wholly present or wholly absent, and the same import then
# completes with the right counts (or, when the kill came after the
# commit, is refused as already imported with the batch complete).
. "$(dirname "$0")/setup.sh"
DB=$T/crash.gpkg
CSV=$T/big.csv
ROWS=${CRASH_ROWS:-20000}
# Invented rows; every 8th has an unknown stage and goes to the quarantine.
awk -v n="$ROWS" 'BEGIN {
	print "occurrenceID,scientificName,taxonGroup,locality,decimalLatitude,decimalLongitude,earliestAgeOrLowestStage,minimumPaleodepthInMeters,maximumPaleodepthInMeters,preservationMode,notes"
	split("Campanian,Maastrichtian,Santonian,Coniacian,Turonian,late Campanian,Cenomanian,Blorptian", st, ",")
	split("crown,calyx,columnal,pluricolumnal,arm", pr, ",")
	for (i = 0; i < n; i++) {
		d = (i * 37) % 900 + 5
		printf "X%d,Fictocrinus sp%d,Crinoidea,Site %d,%.4f,%.4f,%s,%d,%d,%s,row %d\n", i, i % 50, i % 300,
			(i * 7919) % 12000 / 100 - 60, (i * 104729) % 34000 / 100 - 170, st[i % 8 + 1], d, d + i % 100, pr[i % 5 + 1], i
	}
}' >"$CSV"
WANT_Q=$((ROWS / 8))
WANT_S=$((ROWS - WANT_Q))

# How long a whole import takes here, to spread the kills over it.
$BC init "$T/timing.gpkg" >/dev/null
t0=$(date +%s%N)
$BC import "$T/timing.gpkg" "$CSV" >/dev/null 2>&1
t1=$(date +%s%N)
full_ms=$(( (t1 - t0) / 1000000 ))
[ "$full_ms" -gt 0 ] || full_ms=1

$BC init "$DB" >/dev/null
counts() { sqlite3 "$DB" "SELECT (SELECT count(*) FROM import_batches) || ' ' || (SELECT count(*) FROM occurrences) || ' ' || (SELECT count(*) FROM quarantine)" 2>&1; }
committed=0
kills=0
# Kill at 2 %, 10 %, 20 % ... 130 % of the measured time (the last ones
# land in the commit or after it).
for pct in 2 10 20 30 40 50 60 70 80 85 90 95 100 105 110 120 130; do
	[ "$committed" -eq 1 ] && break
	ms=$((full_ms * pct / 100))
	$BC import "$DB" "$CSV" >/dev/null 2>&1 & pid=$!
	sleep "$(awk -v m="$ms" 'BEGIN { printf "%.3f", m / 1000 }')"
	kill -KILL "$pid" 2>/dev/null && kills=$((kills + 1))
	wait "$pid" 2>/dev/null
	r=$(sqlite3 "$DB" "PRAGMA integrity_check" 2>&1)
	[ "$r" = ok ] && ok "kill_${pct}pct_integrity" || fail "kill_${pct}pct_integrity" "$r"
	c=$(counts)
	case $c in
	"0 0 0") ok "kill_${pct}pct_batch_absent_or_whole" ;;
	"1 $WANT_S $WANT_Q") ok "kill_${pct}pct_batch_absent_or_whole"; committed=1 ;;
	*) fail "kill_${pct}pct_batch_absent_or_whole" "batches occurrences quarantine = $c" ;;
	esac
done
[ "$kills" -ge 3 ] && ok killed_mid_import || fail killed_mid_import "only $kills kills landed before the import ended (import took ${full_ms} ms)"

# The same import now completes with the right counts, or, if a killed run
# had already committed, is refused as a duplicate with the batch whole.
$BC import "$DB" "$CSV" >"$T/out" 2>"$T/err"
s=$?
if [ "$committed" -eq 0 ]; then
	[ $s -eq 1 ] && ok reimport_status || fail reimport_status "exit $s: $(head -c 300 "$T/err")"
	contains reimport_summary "$T/out" "$ROWS rows read, $WANT_S stored, $WANT_Q quarantined"
else
	[ $s -eq 1 ] && ok reimport_refused_duplicate || fail reimport_refused_duplicate "exit $s"
	contains reimport_duplicate_message "$T/err" "big.csv: identical content was imported already as batch 1 on "
fi
c=$(counts)
[ "$c" = "1 $WANT_S $WANT_Q" ] && ok final_counts || fail final_counts "batches occurrences quarantine = $c"
r=$(sqlite3 "$DB" "PRAGMA integrity_check" 2>&1)
[ "$r" = ok ] && ok final_integrity || fail final_integrity "$r"
# The database opens cleanly for bathychron after all the kills; check
# reports the quarantined rows (exit 1), each once.
expect_status 1 check_runs_after_kills $BC check "$DB" --format tsv
n=$(grep -c '^quarantined	' "$T/out")
[ "$n" -eq "$WANT_Q" ] && ok check_lists_each_quarantined_row_once || fail check_lists_each_quarantined_row_once "$n rows"
