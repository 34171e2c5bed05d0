#!/bin/sh
# test_geo_geographiclib.sh - bathychron's coordinate conversions and
# geodesics against GeographicLib's command-line tools (Debian package
# geographiclib-tools: GeoConvert, GeodSolve), an implementation independent
# of the PROJ code the library uses. Values of check-values §6b and §7.
. "$(dirname "$0")/../cli/setup.sh"
for tool in GeoConvert GeodSolve; do
	command -v $tool >/dev/null || { fail "${tool}_available" "$tool not installed (geographiclib-tools)"; exit 0; }
done
. "$TOP/tests/external/build_geo_driver.sh"

# --- UTM: GeoConvert -u (GeographicLib) vs bathychron EPSG:4326 -> EPSG:326zz/327zz.
# Points: the check-values §6b rows, then 40 pseudo-random points (awk seed 7),
# avoiding the Norway/Svalbard zone exceptions and the polar caps (UPS).
{
	printf '50.5 0.5\n0 3\n45 3\n-33.9249 18.4241\n'
	awk 'BEGIN { srand(7); n = 0; while (n < 40) { lat = -79 + rand() * 162; lon = -180 + rand() * 360;
		if (lat >= 56 && lat < 64 && lon >= 0 && lon < 12) continue;
		if (lat >= 72 && lon >= 0 && lon < 42) continue;
		printf "%.6f %.6f\n", lat, lon; n++ } }'
} >"$T/pts"
GeoConvert -u -p 4 <"$T/pts" >"$T/gc"
paste -d ' ' "$T/pts" "$T/gc" | while read -r lat lon zone e n; do
	z=${zone%?}; h=${zone#$z}
	if [ "$h" = n ]; then code=$((32600 + z)); else code=$((32700 + z)); fi
	got=$(echo "$lon $lat" | "$DRIVER" transform EPSG:4326 "EPSG:$code")
	# GeographicLib's Krueger series and PROJ's agree to well under 1 mm here.
	ok_=$(echo "$got $e $n" | awk '{ d1 = $1 - $3; d2 = $2 - $4; print (d1 < 0.001 && d1 > -0.001 && d2 < 0.001 && d2 > -0.001) ? 1 : 0 }')
	if [ "$ok_" = 1 ]; then ok "utm_geoconvert_${lat}_${lon}"; else fail "utm_geoconvert_${lat}_${lon}" "bathychron $got, GeoConvert $zone $e $n"; fi
	# ...and back from verbatim "E N" text in that CRS to WGS 84 (1e-8 deg ~ 1 mm)
	back=$(echo "$e E $n N" | "$DRIVER" towgs "EPSG:$code")
	ok_=$(echo "$back $lon $lat" | awk '{ d1 = $1 - $3; d2 = $2 - $4; print (d1 < 1e-7 && d1 > -1e-7 && d2 < 1e-7 && d2 > -1e-7) ? 1 : 0 }')
	if [ "$ok_" = 1 ]; then ok "utm_back_${lat}_${lon}"; else fail "utm_back_${lat}_${lon}" "bathychron $back, expected $lon $lat"; fi
done

# --- check-values §6b, fixed: GeoConvert -u gives 31n 322708.0339 5597210.8304 for 50.5, 0.5.
printf '0.5 50.5\n' | "$DRIVER" transform EPSG:4326 EPSG:32631 >"$T/o"
ok_=$(awk '{ d1 = $1 - 322708.0339; d2 = $2 - 5597210.8304; print (d1 < 0.001 && d1 > -0.001 && d2 < 0.001 && d2 > -0.001) ? 1 : 0 }' "$T/o")
if [ "$ok_" = 1 ]; then ok utm_check_value_31n; else fail utm_check_value_31n "got $(cat "$T/o")"; fi

# --- IOGP GN7-2 TM example (check-values §6a) through the driver, as the text a
# spreadsheet would hold: EPSG:27700 "577274.99 69740.50" -> OSGB 1936 50.5 N 0.5 E.
echo "577274.99 69740.50" | "$DRIVER" transform EPSG:27700 EPSG:4277 >"$T/o"
ok_=$(awk '{ d1 = $1 - 0.5; d2 = $2 - 50.5; print (d1 < 1e-6 && d1 > -1e-6 && d2 < 1e-6 && d2 > -1e-6) ? 1 : 0 }' "$T/o")
if [ "$ok_" = 1 ]; then ok iogp_gn7_2_tm_reverse; else fail iogp_gn7_2_tm_reverse "got $(cat "$T/o")"; fi

# --- Geodesics: GeodSolve -i vs bathychron (PROJ's geodesic.c), check-values §7
# examples plus 40 pseudo-random pairs (awk seed 11) including near-antipodal ones.
{
	printf -- '-30 0 29.9 179.8\n-30.12345 0 -30.12344 0.00005\n'
	printf '40.639722222 -73.778888889 1.359166667 103.989444444\n0 0 90 0\n0 0 0 180\n40.6 -73.8 51.6 -0.5\n'
	awk 'BEGIN { srand(11); for (i = 0; i < 30; i++) printf "%.6f %.6f %.6f %.6f\n", -90 + rand() * 180, -180 + rand() * 360, -90 + rand() * 180, -180 + rand() * 360;
		for (i = 0; i < 10; i++) { la = -60 + rand() * 120; lo = rand() * 180; printf "%.6f %.6f %.6f %.6f\n", la, lo, -la + rand() * 0.5, lo - 179.5 - rand() * 0.5 } }'
} >"$T/pairs"
GeodSolve -i -p 9 <"$T/pairs" >"$T/gs"
"$DRIVER" inverse <"$T/pairs" >"$T/bc"
paste -d ' ' "$T/pairs" "$T/gs" "$T/bc" | while read -r a b c d az1 az2 s12 bs ba1 ba2; do
	# Karney (2013): both implement the same series to ~15 nm; 0.01 mm allows for printing.
	ok_=$(echo "$s12 $bs" | awk '{ d = $1 - $2; print (d < 1e-5 && d > -1e-5) ? 1 : 0 }')
	if [ "$ok_" = 1 ]; then ok "geodsolve_${a}_${b}_${c}_${d}"; else fail "geodsolve_${a}_${b}_${c}_${d}" "GeodSolve $s12 m, bathychron $bs m"; fi
done
# The antipodal Karney (2013) example by value: 19989832.827610 m (check-values §7).
head -n 1 "$T/bc" | awk '{ d = $1 - 19989832.827610; exit !(d < 1e-3 && d > -1e-3) }' && ok karney_2013_antipodal || fail karney_2013_antipodal "$(head -n 1 "$T/bc")"
sed -n 2p "$T/bc" | awk '{ d = $1 - 4.944208; exit !(d < 1e-6 && d > -1e-6) }' && ok karney_2013_short_line || fail karney_2013_short_line "$(sed -n 2p "$T/bc")"
