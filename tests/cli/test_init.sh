#!/bin/sh
# test_init.sh - bathychron init from the command line.
. "$(dirname "$0")/setup.sh"

expect_status 0 init_creates $BC init "$T/a.gpkg"
expect_status 3 init_refuses_existing $BC init "$T/a.gpkg"
same_text init_refuses_existing_message "$T/err" "bathychron: $T/a.gpkg: already exists; init never overwrites a file (choose a new name, or delete it yourself)"
expect_status 2 init_usage $BC init
expect_status 0 init_help $BC init --help
contains init_help_text "$T/out" "usage: bathychron init DB"

# External check: GDAL's ogrinfo (Debian gdal-bin) opens the fresh database
# as a GeoPackage and lists the localities point layer. GeoPackage 1.3.0.
if command -v ogrinfo >/dev/null; then
	ogrinfo -ro "$T/a.gpkg" >"$T/ogr" 2>&1
	contains ogrinfo_driver_gpkg "$T/ogr" "using driver \`GPKG' successful"
	contains ogrinfo_lists_localities "$T/ogr" "localities (Point)"
else
	fail ogrinfo_available "ogrinfo not installed (gdal-bin)"
fi
