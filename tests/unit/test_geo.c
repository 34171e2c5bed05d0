/*
 * test_geo.c - coordinates: DMS text, CRS conversion, geodesics and
 * GeoPackage point bytes, each checked against a named outside source.
 */
#include "test.h"
#include "geo.h"
#include "db.h"

#include <stdlib.h>

/* ---- degrees, minutes, seconds ---- */

static const struct {
	const char *text;
	double lat, lon;
} dms_good[] = {
	/* 50°30'N 0°30'E is the IOGP GN7-2 example point (check-values §6a). */
	{"50°30'N 0°30'E", 50.5, 0.5},
	{"50°30′00″N, 0°30′00″E", 50.5, 0.5},
	{"50°30'00\"N 000°30'00\"E", 50.5, 0.5},
	{"50°30'00''N 0°30'00''E", 50.5, 0.5},
	{"N 50°30' E 0°30'", 50.5, 0.5},
	{"N50.5 E0.5", 50.5, 0.5},
	{"50.5N 0.5E", 50.5, 0.5},
	{"50.5 N; 0.5 E", 50.5, 0.5},
	{"0.5E 50.5N", 50.5, 0.5},          /* letters reorder */
	{"E 0°30' N 50°30'", 50.5, 0.5},
	{"50 30 00 N, 0 30 00 E", 50.5, 0.5},
	{"50 30 N / 0 30 E", 50.5, 0.5},
	{"50 30 0 30", 50.5, 0.5},          /* bare numbers split evenly */
	{"50 30 00 0 30 00", 50.5, 0.5},
	{"50d30m N 0d30m E", 50.5, 0.5},
	{"N 50d30.5m E 0d30m", 50.508333333333, 0.5},
	{"50d30m15s N 0d30m0sE", 50.504166666667, 0.5},
	{"50 deg 30 min N, 0 deg 30 min E", 50.5, 0.5},
	{"50º30’N 0º30’E", 50.5, 0.5},
	{"50.5, 0.5", 50.5, 0.5},
	{"50.5 0.5", 50.5, 0.5},
	{"-33.92 18.42", -33.92, 18.42},
	{"−33.92, 18.42", -33.92, 18.42},   /* U+2212 minus sign */
	{"33°55'S 18°25'E", -33.916666666667, 18.416666666667},
	{"33 55 S 18 25 E", -33.916666666667, 18.416666666667},
	{"S 33°55.2' W 70°40.8'", -33.92, -70.68},
	{"-33 55 12, -70 40 48", -33.92, -70.68},
	{"40:38:23N 073:46:44W", 40.639722222222, -73.778888888889},
	{"lat 50.5 lon 0.5", 50.5, 0.5},
	{"lon: 0.5, lat: 50.5", 50.5, 0.5},
	{"-0 30 00, 0 30 00", -0.5, 0.5},   /* sign on zero degrees still counts */
	{"90 N 180 W", 90, -180},
};

TEST(geo_dms_notations)
{
	for (size_t i = 0; i < sizeof dms_good / sizeof dms_good[0]; i++) {
		bc_err err = {0};
		double lat = NAN, lon = NAN;
		int rc = bc_geo__parse_dms(dms_good[i].text, &lat, &lon, &err);
		CHECK_MSG(rc == 0, "\"%s\": %s", dms_good[i].text, err.msg);
		CHECK_MSG(fabs(lat - dms_good[i].lat) < 1e-9 && fabs(lon - dms_good[i].lon) < 1e-9,
			"\"%s\" gave %.12g %.12g, expected %.12g %.12g", dms_good[i].text, lat, lon, dms_good[i].lat, dms_good[i].lon);
	}
}

static const struct {
	const char *text;
	const char *reason; /* must appear in the message */
} dms_bad[] = {
	{"", "no coordinates"},
	{"50°61'N 0°30'E", "minutes must be less than 60"},
	{"50°30'60\"N 0°30'E", "seconds must be less than 60"},
	{"91 N 0 E", "latitude 91 is outside"},
	{"50 N 181 E", "longitude 181 is outside"},
	{"-50.5 0.5 200", "cannot tell where"},
	{"50 30 0", "cannot tell where"},
	{"50.5N 10.5S", "both coordinates are latitudes"},
	{"0.5E 10.5W", "both coordinates are longitudes"},
	{"-33 S 18 E", "both a minus sign and hemisphere"},
	{"50.5 30 N 0 E", "only the last part may have decimals"},
	{"50°30'N 0°30'E 12°", "expected two coordinates"},
	{"50.5", "cannot tell where"},
	{"50.5N", "found one"},
	{"fifty N, 0.5 E", "unexpected word 'fifty'"},
	{"50.5 # 0.5", "unexpected character '#'"},
	{"30' N 0 E", "minutes without degrees"},
	{"° 50 N 0 E", "a degree mark with no number before it"},
	{"50.5 - 0.5", "a sign must be followed by a number"},
	{"50 30' 15° N 0 E", "found more"},
	{"50° 30\" 15 N, 0 E", "out of order"},
	{"N", "no numbers"},
};

TEST(geo_dms_rejects_with_reason)
{
	for (size_t i = 0; i < sizeof dms_bad / sizeof dms_bad[0]; i++) {
		bc_err err = {0};
		double lat = NAN, lon = NAN;
		int rc = bc_geo__parse_dms(dms_bad[i].text, &lat, &lon, &err);
		CHECK_MSG(rc == BC_EINVALID, "\"%s\" accepted as %g %g", dms_bad[i].text, lat, lon);
		CHECK_MSG(strstr(err.msg, dms_bad[i].reason) != NULL, "\"%s\": message \"%s\" lacks \"%s\"",
			dms_bad[i].text, err.msg, dms_bad[i].reason);
	}
}

/* ---- CRS conversion ---- */

/* IOGP Geomatics Guidance Note 7-2 (IOGP Publication 373-7-2), Transverse
 * Mercator (EPSG method 9807) reverse example: OSGB 1936 / British National
 * Grid E 577274.99 N 69740.50 -> OSGB 1936 50°30'N 0°30'E; tolerance 1e-6°
 * per check-values §6a (PROJ gives 50.500000068, 0.500000091). */
TEST(geo_iogp_tm_reverse_example)
{
	bc_err err = {0};
	bc_geo *g = NULL;
	CHECK_OK(bc_geo__new(&g, &err), &err);
	double x = 577274.99, y = 69740.50;
	int rc = bc_geo__transform(g, "EPSG:27700", "EPSG:4277", &x, &y, &err);
	bc_geo__free(g);
	CHECK_MSG(rc == 0, "%s", err.msg);
	CHECK_NEAR(y, 50.5, 1e-6);
	CHECK_NEAR(x, 0.5, 1e-6);
}

/* Same example forward: 50°30'N 0°30'E (OSGB 1936) -> E 577274.99,
 * N 69740.50 to ±0.01 m (GN7-2 prints values from k0 rounded to 0.9996013;
 * the EPSG k0 gives 577274.9838, 69740.4923: check-values §6a). */
TEST(geo_iogp_tm_forward_example)
{
	bc_err err = {0};
	bc_geo *g = NULL;
	CHECK_OK(bc_geo__new(&g, &err), &err);
	double x = 0.5, y = 50.5;
	int rc = bc_geo__transform(g, "EPSG:4277", "EPSG:27700", &x, &y, &err);
	bc_geo__free(g);
	CHECK_MSG(rc == 0, "%s", err.msg);
	CHECK_NEAR(x, 577274.99, 0.01);
	CHECK_NEAR(y, 69740.50, 0.01);
}

/* UTM rows of check-values §6b (PROJ = GeographicLib GeoConvert -u), read
 * back as verbatim text in the UTM CRS and converted to WGS 84; 1e-8° is
 * about 1 mm. */
TEST(geo_utm_verbatim_to_wgs84)
{
	static const struct { const char *srs, *text; double lat, lon; } rows[] = {
		{"EPSG:32631", "322708.0339 5597210.8304", 50.5, 0.5},
		{"EPSG:32631", "322708.0339 E 5597210.8304 N", 50.5, 0.5},
		{"EPSG:32631", "E 322708.0339 N 5597210.8304", 50.5, 0.5},
		{"EPSG:32631", "5597210.8304 N, 322708.0339 E", 50.5, 0.5},
		{"EPSG:32631", "322708.0339mE 5597210.8304mN", 50.5, 0.5},
		{"EPSG:32631", "500000, 4982950.4002", 45, 3},
		{"EPSG:32734", "261881.5985 6243182.3545", -33.9249, 18.4241},
		{"32734", "261881.5985; 6243182.3545", -33.9249, 18.4241},
		{"+proj=utm +zone=31 +datum=WGS84", "322708.0339 5597210.8304", 50.5, 0.5},
	};
	bc_err err = {0};
	bc_geo *g = NULL;
	CHECK_OK(bc_geo__new(&g, &err), &err);
	for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
		double lon = NAN, lat = NAN;
		int rc = bc_geo__to_wgs84(g, rows[i].srs, rows[i].text, &lon, &lat, &err);
		if (rc != 0 || fabs(lat - rows[i].lat) > 1e-8 || fabs(lon - rows[i].lon) > 1e-8) {
			bc_geo__free(g);
			CHECK_MSG(0, "%s \"%s\": rc %d (%s) gave %.10f %.10f", rows[i].srs, rows[i].text, rc, err.msg, lat, lon);
		}
	}
	bc_geo__free(g);
}

/* Geographic CRSs take DMS text in their own axis order: EPSG:4326 is
 * latitude first, OGC:CRS84 longitude first (EPSG/OGC definitions). */
TEST(geo_geographic_axis_order)
{
	bc_err err = {0};
	bc_geo *g = NULL;
	CHECK_OK(bc_geo__new(&g, &err), &err);
	double lon = NAN, lat = NAN;
	int ok = bc_geo__to_wgs84(g, "EPSG:4326", "50°30'N 0°30'E", &lon, &lat, &err) == 0 &&
		 fabs(lat - 50.5) < 1e-12 && fabs(lon - 0.5) < 1e-12;
	ok = ok && bc_geo__to_wgs84(g, "WGS84", "10.25 20.5", &lon, &lat, &err) == 0 && lat == 10.25 && lon == 20.5;
	ok = ok && bc_geo__to_wgs84(g, "OGC:CRS84", "10.25 20.5", &lon, &lat, &err) == 0 && lat == 20.5 && lon == 10.25;
	ok = ok && bc_geo__to_wgs84(g, "OGC:CRS84", "20.5N 10.25E", &lon, &lat, &err) == 0 && lat == 20.5 && lon == 10.25;
	bc_geo__free(g);
	CHECK_MSG(ok, "got lat %g lon %g: %s", lat, lon, err.msg);
}

TEST(geo_to_wgs84_errors_name_the_crs)
{
	bc_err err = {0};
	bc_geo *g = NULL;
	CHECK_OK(bc_geo__new(&g, &err), &err);
	double lon, lat;
	int rc1 = bc_geo__to_wgs84(g, "EPSG:999999", "1 2", &lon, &lat, &err);
	char m1[1024];
	snprintf(m1, sizeof m1, "%s", err.msg);
	int rc2 = bc_geo__to_wgs84(g, "foo", "1 2", &lon, &lat, &err);
	char m2[1024];
	snprintf(m2, sizeof m2, "%s", err.msg);
	/* Swapped easting/northing lands far outside UTM zone 16N. */
	int rc3 = bc_geo__to_wgs84(g, "EPSG:32616", "1812345 E 512345 N", &lon, &lat, &err);
	char m3[1024];
	snprintf(m3, sizeof m3, "%s", err.msg);
	int rc4 = bc_geo__to_wgs84(g, "EPSG:32616", "512345 E 1812345 E", &lon, &lat, &err);
	char m4[1024];
	snprintf(m4, sizeof m4, "%s", err.msg);
	int rc5 = bc_geo__to_wgs84(g, "", "1 2", &lon, &lat, &err);
	int rc6 = bc_geo__to_wgs84(g, "EPSG:32616", "512345 E 1812345 N", &lon, &lat, &err);
	bc_geo__free(g);
	CHECK_INT(rc1, BC_EINVALID);
	CHECK_MSG(strstr(m1, "EPSG:999999") != NULL, "%s", m1);
	CHECK_INT(rc2, BC_EINVALID);
	CHECK_MSG(strstr(m2, "'foo' is not the name") != NULL, "%s", m2);
	CHECK_INT(rc3, BC_EINVALID);
	CHECK_MSG(strstr(m3, "WGS 84 / UTM zone 16N") != NULL && strstr(m3, "swapped") != NULL, "%s", m3);
	CHECK_INT(rc4, BC_EINVALID);
	CHECK_MSG(strstr(m4, "both numbers are marked 'E'") != NULL, "%s", m4);
	CHECK_INT(rc5, BC_EINVALID);
	CHECK_OK(rc6, &err);
	/* design.md's example: `echo 512345 1812345 | cs2cs -f %.9f EPSG:32616
	 * EPSG:4326` (PROJ 9.1.1, proj-bin) gives 16.392401913 -86.884388813. */
	CHECK_NEAR(lon, -86.884388813, 1e-8);
	CHECK_NEAR(lat, 16.392401913, 1e-8);
}

/* ---- geodesics: Karney (2013) examples, check-values §7 ---- */

TEST(geo_geodesic_karney_examples)
{
	double a1, a2;
	/* Karney CFF (2013) J. Geodesy 87:43-55, inverse example (nearly
	 * antipodal): 19989832.827610 m, azimuths 161.890524736, 18.090737246. */
	double s = bc_geo__inverse(-30, 0, 29.9, 179.8, &a1, &a2);
	CHECK_NEAR(s, 19989832.827610, 1e-3);
	CHECK_NEAR(a1, 161.890524736, 1e-9);
	CHECK_NEAR(a2, 18.090737246, 1e-9);
	/* Karney 2013 short-line example (Table 3): 4.944208 m. */
	CHECK_NEAR(bc_geo__distance_m(-30.12345, 0, -30.12344, 0.00005), 4.944208, 1e-6);
	/* GeodSolve(1) manual example, JFK -> Singapore Changi: 15347628 m (±1 m),
	 * GeodSolve -p 6 gives 15347627.659636. */
	double jfk_lat = 40 + 38 / 60.0 + 23 / 3600.0, jfk_lon = -(73 + 46 / 60.0 + 44 / 3600.0);
	double sin_lat = 1 + 21 / 60.0 + 33 / 3600.0, sin_lon = 103 + 59 / 60.0 + 22 / 3600.0;
	CHECK_NEAR(bc_geo__distance_m(jfk_lat, jfk_lon, sin_lat, sin_lon), 15347627.659636, 1e-3);
	/* Quarter meridian and equatorial antipodes (GeodSolve, check-values §7). */
	CHECK_NEAR(bc_geo__distance_m(0, 0, 90, 0), 10001965.729313, 1e-6);
	CHECK_NEAR(bc_geo__distance_m(0, 0, 0, 180), 20003931.458625, 1e-6);
	/* 1° of longitude on the equator = a·π/180. */
	CHECK_NEAR(bc_geo__distance_m(0, 0, 0, 1), 6378137.0 * M_PI / 180, 1e-6);
}

/* ---- GeoPackage point bytes: check-values §9, GeoPackage 1.3 Req. 19 ---- */

TEST(geo_gpkg_point_bytes)
{
	/* POINT(0.5 50.5): 4750 00 01 e6100000 01 01000000 000000000000e03f 0000000000404940
	 * (read from a file made by ogr2ogr, GDAL 3.6.2). */
	static const unsigned char want[29] = {
		0x47, 0x50, 0x00, 0x01, 0xe6, 0x10, 0x00, 0x00,
		0x01, 0x01, 0x00, 0x00, 0x00,
		0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0xe0, 0x3f,
		0x00, 0x00, 0x00, 0x00, 0x00, 0x40, 0x49, 0x40};
	unsigned char got[29];
	bc_geo__gpkg_point(0.5, 50.5, got);
	CHECK(memcmp(got, want, 29) == 0);
	bc_err err = {0};
	double lon, lat;
	CHECK_OK(bc_geo__gpkg_point_read(got, 29, &lon, &lat, &err), &err);
	CHECK(lon == 0.5 && lat == 50.5);
	/* The same point with an [minx,maxx,miny,maxy] envelope (61 bytes, §9). */
	unsigned char env[61];
	memcpy(env, want, 8);
	env[3] = 0x03;
	double box[4] = {0.5, 0.5, 50.5, 50.5};
	memcpy(env + 8, box, 32); /* host is little-endian on every platform we test */
	memcpy(env + 40, want + 8, 21);
	CHECK_OK(bc_geo__gpkg_point_read(env, 61, &lon, &lat, &err), &err);
	CHECK(lon == 0.5 && lat == 50.5);
	CHECK_INT(bc_geo__gpkg_point_read(want, 20, &lon, &lat, &err), BC_EINVALID);
}

TEST(geo_srs_definition_is_wkt)
{
	bc_err err = {0};
	char *wkt = NULL;
	CHECK_OK(bc_geo__srs_definition(4326, &wkt, &err), &err);
	int ok = strncmp(wkt, "GEOGCS[\"WGS 84\"", 15) == 0;
	free(wkt);
	CHECK(ok);
}
