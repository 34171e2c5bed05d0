#!/bin/sh
# test_dwca.sh - Darwin Core Archives from the command line: the demo
# archive (folder and zip) imports to the same occurrences as the demo CSV;
# export --format dwca re-imports losslessly; hostile archives are refused
# and change nothing.
. "$(dirname "$0")/setup.sh"
DEMO=$TOP/import/demo
cd "$T" || exit 3

# Every stored value of every occurrence (not the keys or batch), compared
# between databases with sqlite3.
occ() { # occ DB ORDER
	sqlite3 "$1" "SELECT occurrence_id, scientific_name, taxon_group, \"order\", family, genus,
		earliest_stage, latest_stage, earliest_series, latest_series, earliest_system, latest_system,
		earliest_ma_given, latest_ma_given, age_from, age_to, older_ma, younger_ma, age_status, age_note,
		age_conflict, timescale, o.formation, member, bed, min_depth_m, max_depth_m, depth_source, environment,
		preservation, articulation, individual_count, reference_key, extra, l.name, l.country, l.longitude,
		l.latitude, l.verbatim_coordinates, l.verbatim_srs, l.uncertainty_m
		FROM occurrences o LEFT JOIN localities l ON l.fid = o.locality_id ORDER BY $2"
}
same_db() { # same_db NAME DB1 DB2 ORDER
	occ "$2" "$4" >"$T/a.txt"; occ "$3" "$4" >"$T/b.txt"
	if [ -s "$T/a.txt" ] && cmp -s "$T/a.txt" "$T/b.txt"; then ok "$1"
	else fail "$1" "$(diff "$T/a.txt" "$T/b.txt" | head -c 600)"; fi
}
counts() { sqlite3 "$1" "SELECT (SELECT count(*) FROM import_batches) || ' ' || (SELECT count(*) FROM occurrences) || ' ' || (SELECT count(*) FROM quarantine)"; }

$BC init csv.gpkg >/dev/null
$BC init dir.gpkg >/dev/null
$BC init zip.gpkg >/dev/null
expect_status 1 dwca_demo_csv $BC import csv.gpkg "$DEMO/occurrences.csv"
counts_csv=$(sed 's/^.*: //' "$T/out")   # "310 rows read, N stored, M quarantined"
n_stored=$(sqlite3 csv.gpkg "SELECT count(*) FROM occurrences")

# The unpacked demo archive: same summary, same quarantine lines and reasons.
cp -r "$DEMO/archive" archive
expect_status 1 dwca_demo_folder $BC import dir.gpkg archive
same_text dwca_demo_folder_summary "$T/out" "archive: $counts_csv"
contains dwca_demo_folder_place "$T/err" "bathychron: archive/occurrence.txt:42: earliestAgeOrLowestStage: unknown age 'Jurrasick-ish'"
same_db dwca_demo_folder_same_as_csv csv.gpkg dir.gpkg "o.line"
q="SELECT line, field, reason FROM quarantine ORDER BY line"
if [ "$(sqlite3 csv.gpkg "$q")" = "$(sqlite3 dir.gpkg "$q")" ]; then ok dwca_demo_same_quarantine
else fail dwca_demo_same_quarantine "$(sqlite3 dir.gpkg "$q" | head -3)"; fi
sqlite3 dir.gpkg "SELECT DISTINCT file FROM quarantine" >qfile.txt
same_text dwca_demo_quarantine_file qfile.txt "archive/occurrence.txt"
sqlite3 dir.gpkg "SELECT metadata FROM import_batches" >meta.txt
contains dwca_demo_eml_kept meta.txt "<title>Invented sea-lily occurrences, Jurassic to Neogene (bathychron demo)</title>"

# The same archive zipped (built here from the folder).
/usr/bin/python3 -c 'import sys,os,zipfile
z=zipfile.ZipFile(sys.argv[2],"w",zipfile.ZIP_DEFLATED)
[z.write(os.path.join(sys.argv[1],f),f) for f in sorted(os.listdir(sys.argv[1]))]
z.close()' archive archive.zip
expect_status 1 dwca_demo_zip $BC import zip.gpkg archive.zip
contains dwca_demo_zip_place "$T/err" "bathychron: archive.zip/occurrence.txt:79: minimumPaleodepthInMeters: -40 m is negative"
same_db dwca_demo_zip_same_as_csv csv.gpkg zip.gpkg "o.line"
# the same content again, zipped or not, is recognised
expect_status 1 dwca_zip_again $BC import zip.gpkg archive
contains dwca_zip_again_message "$T/err" "identical content was imported already as batch 1"

# Round trip: CSV -> export dwca (zip and folder) -> a fresh database.
expect_status 0 dwca_export_zip $BC export csv.gpkg --format dwca -o out.zip
contains dwca_export_zip_count "$T/err" "out.zip: $n_stored occurrences written (Darwin Core Archive)"
expect_status 0 dwca_export_folder $BC export csv.gpkg --format dwca -o outdir
for f in meta.xml eml.xml occurrence.txt chronometricage.txt; do
	[ -s "outdir/$f" ] && ok "dwca_export_has_$f" || fail "dwca_export_has_$f" "missing"
done
$BC init rt1.gpkg >/dev/null
$BC init rt2.gpkg >/dev/null
expect_status 0 dwca_reimport_zip $BC import rt1.gpkg out.zip
same_text dwca_reimport_summary "$T/out" "out.zip: $n_stored rows read, $n_stored stored, 0 quarantined"
same_db dwca_round_trip_zip csv.gpkg rt1.gpkg "o.occurrence_pk"
expect_status 0 dwca_reimport_folder $BC import rt2.gpkg outdir
same_db dwca_round_trip_folder csv.gpkg rt2.gpkg "o.occurrence_pk"
# archive -> export -> import keeps the archive's metadata too
expect_status 0 dwca_export_from_archive $BC export dir.gpkg --format dwca -o again.zip
$BC init rt3.gpkg >/dev/null
expect_status 0 dwca_reimport_again $BC import rt3.gpkg again.zip
same_db dwca_round_trip_from_archive dir.gpkg rt3.gpkg "o.occurrence_pk"
sqlite3 rt3.gpkg "SELECT metadata FROM import_batches" >meta3.txt
cmp -s meta.txt meta3.txt && ok dwca_eml_round_trip || fail dwca_eml_round_trip "$(head -c 300 meta3.txt)"

expect_status 3 dwca_export_no_overwrite $BC export csv.gpkg --format dwca -o out.zip
same_text dwca_export_no_overwrite_message "$T/err" "bathychron: out.zip: already exists; not overwritten (remove it or choose another name)"
expect_status 2 dwca_export_stdout $BC export csv.gpkg --format dwca -o -
expect_status 0 dwca_export_help $BC export --help
contains dwca_export_help_text "$T/out" "--format dwca writes a Darwin Core Archive"

# Hostile archives: refused with a clear message, nothing changes.
$BC init h.gpkg >/dev/null
before=$(counts h.gpkg)
hostile() { # hostile NAME ZIP EXPECTED_MESSAGE
	expect_status 1 "$1" $BC import h.gpkg "$2"
	same_text "$1_message" "$T/err" "$3"
	after=$(counts h.gpkg)
	[ "$after" = "$before" ] && ok "$1_changes_nothing" || fail "$1_changes_nothing" "$before -> $after"
}
mkzip() { # mkzip ZIP PYTHON: a valid archive plus whatever PYTHON adds to z
	/usr/bin/python3 -c "import sys,zipfile
z=zipfile.ZipFile(sys.argv[1],'w',zipfile.ZIP_DEFLATED)
z.write('archive/meta.xml','meta.xml')
z.write('archive/occurrence.txt','occurrence.txt')
z.write('archive/measurementorfact.txt','measurementorfact.txt')
z.write('archive/chronometricage.txt','chronometricage.txt')
$2
z.close()" "$1"
}
mkzip slip.zip "z.writestr('../../evil.sh','echo owned')"
hostile dwca_zip_slip slip.zip "bathychron: slip.zip: entry '../../evil.sh': refused: '..' leaves the archive folder; nothing was imported"
mkzip abs.zip "z.writestr('/tmp/evil','x')"
hostile dwca_zip_absolute abs.zip "bathychron: abs.zip: entry '/tmp/evil': refused: an absolute path; nothing was imported"
# 64 MiB of zeros: bzip2 squeezes it far beyond 1000:1
mkzip bomb.zip "z.writestr('zeros.txt',bytes(64<<20),compress_type=zipfile.ZIP_BZIP2)"
expect_status 1 dwca_zip_bomb $BC import h.gpkg bomb.zip
contains dwca_zip_bomb_message "$T/err" "bathychron: bomb.zip/zeros.txt: refused: declared compression ratio"
contains dwca_zip_bomb_reason "$T/err" "is over 1000:1 (possible zip bomb); nothing was imported"
[ "$(counts h.gpkg)" = "$before" ] && ok dwca_zip_bomb_changes_nothing || fail dwca_zip_bomb_changes_nothing "$(counts h.gpkg)"
# hostile meta.xml: an entity declaration ("billion laughs") and an external entity
cp -r archive evil
printf '%s\n' '<?xml version="1.0"?>' '<!DOCTYPE archive [<!ENTITY a "aaaaaaaaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;">]>' \
	'<archive xmlns="http://rs.tdwg.org/dwc/text/"><core rowType="&b;"/></archive>' >evil/meta.xml
hostile dwca_meta_entities evil "bathychron: evil/meta.xml:2: DOCTYPE: refused: a document type declaration ('archive') is not allowed here (no DTD is loaded and no entity is expanded); nothing was imported"
printf '%s\n' '<?xml version="1.0"?>' '<!DOCTYPE archive [<!ENTITY x SYSTEM "file:///etc/passwd">]>' \
	'<archive xmlns="http://rs.tdwg.org/dwc/text/"><core rowType="&x;"/></archive>' >evil/meta.xml
hostile dwca_meta_external_entity evil "bathychron: evil/meta.xml:2: DOCTYPE: refused: a document type declaration ('archive') is not allowed here (no DTD is loaded and no entity is expanded); nothing was imported"
# a location that leaves the folder
sed 's|<location>occurrence.txt</location>|<location>../archive/occurrence.txt</location>|' archive/meta.xml >evil/meta.xml
hostile dwca_location_dotdot evil "bathychron: evil/meta.xml: location '../archive/occurrence.txt': refused: '..' leaves the archive folder"

# A dry run of an archive validates and counts, and writes nothing.
expect_status 1 dwca_dry_run $BC import --dry-run h.gpkg archive.zip
contains dwca_dry_run_summary "$T/out" "(dry run: nothing written)"
[ "$(counts h.gpkg)" = "$before" ] && ok dwca_dry_run_changes_nothing || fail dwca_dry_run_changes_nothing "$(counts h.gpkg)"
