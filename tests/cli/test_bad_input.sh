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
