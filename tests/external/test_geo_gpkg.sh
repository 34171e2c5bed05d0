#!/bin/sh
# test_geo_gpkg.sh - the localities layer as GDAL sees it (Debian gdal-bin's
# ogrinfo and python3-gdal's GeoPackage validator): localities stored through
# the library show up as points with the right coordinates and extent, and
# the file passes GDAL's validate_gpkg (OGC GeoPackage 1.3, check-values §9).
. "$(dirname "$0")/../cli/setup.sh"
command -v ogrinfo >/dev/null || { fail ogrinfo_available "ogrinfo not installed (gdal-bin)"; exit 0; }
. "$TOP/tests/external/build_geo_driver.sh"

DB="$T/loc.gpkg"
expect_status 0 gpkg_init $BC init "$DB"
# name|country|formation|lon|lat ; the second row repeats the first locality
# with other coordinates (kept: the first), the fourth is unnamed.
cat >"$T/rows" <<'ROWS'
Grey Cliff|Freedonia|Marl Fm|0.5|50.5
grey  cliff|FREEDONIA||0.6|50.6
Kettle Hollow|Freedonia||-3.25|52
|Freedonia|Marl Fm|4|49
Dry Gulch|Sylvania|||
ROWS
"$DRIVER" localities "$DB" <"$T/rows" >"$T/fids" 2>&1
same_text gpkg_driver_fids "$T/fids" "1
1
2
3
4"

ogrinfo -ro -al "$DB" localities >"$T/ogr" 2>&1
contains gpkg_ogr_feature_count "$T/ogr" "Feature Count: 4"
# GDAL prints the gpkg_contents extent: -3.25..4 by 49..52.
contains gpkg_ogr_extent "$T/ogr" "Extent: (-3.250000, 49.000000) - (4.000000, 52.000000)"
contains gpkg_ogr_point_kept_first "$T/ogr" "POINT (0.5 50.5)"
# GDAL 3.6 writes whole numbers as "52.0" in some places and "52" in others.
if grep -qE 'POINT \(-3\.25 52(\.0)?\)' "$T/ogr"; then ok gpkg_ogr_point_2; else fail gpkg_ogr_point_2 "no POINT (-3.25 52)"; fi
if grep -qE 'POINT \(4(\.0)? 49(\.0)?\)' "$T/ogr"; then ok gpkg_ogr_point_unnamed; else fail gpkg_ogr_point_unnamed "no POINT (4 49)"; fi
if grep -qF "POINT (0.6 50.6)" "$T/ogr"; then fail gpkg_ogr_second_pair_not_kept "found POINT (0.6 50.6)"; else ok gpkg_ogr_second_pair_not_kept; fi
contains gpkg_ogr_srs "$T/ogr" "WGS 84"

# The disagreement stays in the database for `check`.
if command -v sqlite3 >/dev/null; then
	sqlite3 "$DB" "SELECT fid, longitude, latitude, line FROM locality_coordinates ORDER BY coord_id" >"$T/coords"
	same_text gpkg_every_pair_recorded "$T/coords" "1|0.5|50.5|1
1|0.6|50.6|2
2|-3.25|52.0|3
3|4.0|49.0|4"
fi

# GDAL's validator (python3-gdal): no output and exit 0 when valid.
if /usr/bin/python3 -c "import osgeo_utils.samples.validate_gpkg" 2>/dev/null; then
	/usr/bin/python3 -m osgeo_utils.samples.validate_gpkg "$DB" >"$T/val" 2>&1
	rc=$?
	if [ $rc -eq 0 ] && ! grep -q . "$T/val"; then ok gpkg_validate_gpkg; else fail gpkg_validate_gpkg "exit $rc: $(head -c 600 "$T/val")"; fi
else
	fail gpkg_validate_available "python3-gdal not installed (apt-get install python3-gdal)"
fi
