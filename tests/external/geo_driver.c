/*
 * geo_driver.c - a tiny driver over the library's internal coordinate and
 * locality calls, built by tests/external/test_geo_*.sh against
 * build/libbathychron.a so outside tools can check its answers. Reads one
 * case per line on stdin; prints one answer per line ("ERR message" on error).
 *
 *   geo_driver transform FROM TO      lines: x y            -> x y
 *   geo_driver towgs SRS              lines: verbatim text  -> lon lat
 *   geo_driver inverse                lines: lat1 lon1 lat2 lon2 -> s12 azi1 azi2
 *   geo_driver localities DB          lines: name|country|formation|lon|lat -> fid
 */
#include "geo.h"
#include "locality.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static double num(const char *s) { return *s ? strtod(s, NULL) : NAN; }

int main(int argc, char **argv)
{
	char line[1024];
	bc_err err = {0};
	if (argc < 2)
		return 2;
	if (!strcmp(argv[1], "inverse")) {
		while (fgets(line, sizeof line, stdin)) {
			double a, b, c, d, z1, z2;
			if (sscanf(line, "%lf %lf %lf %lf", &a, &b, &c, &d) != 4)
				return 2;
			double s = bc_geo__inverse(a, b, c, d, &z1, &z2);
			printf("%.9f %.11f %.11f\n", s, z1, z2);
		}
		return 0;
	}
	if (!strcmp(argv[1], "localities") && argc == 3) {
		bc_db *db = NULL;
		bc_locality_cache *lc = NULL;
		int rc = bc_db_open(&db, argv[2], &err);
		if (rc == 0)
			rc = bc_db__begin(db, &err);
		if (rc == 0)
			rc = bc_locality__cache_new(&lc, db, &err);
		long n = 0;
		while (rc == 0 && fgets(line, sizeof line, stdin)) {
			line[strcspn(line, "\n")] = '\0';
			char *f[5] = {0};
			char *p = line;
			for (int i = 0; i < 5; i++) {
				f[i] = p;
				p = strchr(p, '|');
				if (!p && i < 4)
					return 2;
				if (p)
					*p++ = '\0';
			}
			bc_locality_input in = {f[0], f[1], f[2], num(f[3]), num(f[4]), "", "", NAN, 0, ++n};
			int64_t fid = 0;
			rc = bc_locality__get_or_create(lc, &in, &fid, &err);
			if (rc == 0)
				printf("%lld\n", (long long)fid);
		}
		bc_locality__cache_free(lc);
		if (rc == 0)
			rc = bc_db__commit(db, &err);
		if (rc)
			printf("ERR %s\n", err.msg);
		bc_db_close(db);
		return rc ? 1 : 0;
	}
	bc_geo *g = NULL;
	if (bc_geo__new(&g, &err) != 0)
		return 3;
	int status = 0;
	if (!strcmp(argv[1], "transform") && argc == 4) {
		while (fgets(line, sizeof line, stdin)) {
			double x, y;
			if (sscanf(line, "%lf %lf", &x, &y) != 2)
				return 2;
			if (bc_geo__transform(g, argv[2], argv[3], &x, &y, &err) == 0)
				printf("%.6f %.6f\n", x, y);
			else
				printf("ERR %s\n", err.msg), status = 1;
		}
	} else if (!strcmp(argv[1], "towgs") && argc == 3) {
		while (fgets(line, sizeof line, stdin)) {
			line[strcspn(line, "\n")] = '\0';
			double lon, lat;
			if (bc_geo__to_wgs84(g, argv[2], line, &lon, &lat, &err) == 0)
				printf("%.10f %.10f\n", lon, lat);
			else
				printf("ERR %s\n", err.msg), status = 1;
		}
	} else {
		status = 2;
	}
	bc_geo__free(g);
	return status;
}
