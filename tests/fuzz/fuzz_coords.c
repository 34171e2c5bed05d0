/*
 * fuzz_coords.c - libFuzzer target: coordinate text. The first byte picks
 * the reader: the degrees-minutes-seconds parser alone, or the conversion
 * of verbatim text in one of a few CRSs (geographic, UTM, a northing-first
 * CRS, a PROJ string) to WGS 84. The CRS list is fixed so the target
 * exercises our parsing, not PROJ's CRS-definition parser.
 */
#include "fuzz.h"
#include "geo.h"

#include <math.h>

static bc_geo *geo;

static const char *const crs[] = {
	"EPSG:4326", "EPSG:32616", "EPSG:3006", "EPSG:27700", "EPSG:4267",
	"+proj=longlat +datum=WGS84 +no_defs",
};

int LLVMFuzzerInitialize(int *argc, char ***argv)
{
	(void)argc;
	(void)argv;
	bc_err err = {0};
	if (bc_geo__new(&geo, &err) != BC_OK) {
		fprintf(stderr, "fuzz_coords: %s\n", err.msg);
		abort();
	}
	return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	if (size < 1)
		return 0;
	unsigned pick = data[0];
	char *text = fuzz_text(data + 1, size - 1);
	bc_err err = {0};
	double lat = NAN, lon = NAN;
	int rc;
	if (pick % 2 == 0) {
		rc = bc_geo__parse_dms(text, &lat, &lon, &err);
		if (rc == BC_OK && !(fabs(lat) <= 90 && fabs(lon) <= 360))
			abort(); /* accepted text must give a point on the globe */
	} else {
		rc = bc_geo__to_wgs84(geo, crs[(pick / 2) % (sizeof crs / sizeof crs[0])], text, &lon, &lat, &err);
		if (rc == BC_OK && !(fabs(lat) <= 90 && fabs(lon) <= 360))
			abort();
	}
	if (rc != BC_OK && (!err.msg[0] || strchr(err.msg, '\n')))
		abort();
	free(text);
	return 0;
}
