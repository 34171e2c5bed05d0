/*
 * locality.c - localities as a GeoPackage point layer: one record per named
 * place, every coordinate pair kept for checking, extent kept current, and
 * spatial coverage (distinct localities, equal-area cells, latitudinal
 * range, minimum spanning tree) of a set of occurrences or localities.
 */
#include "locality.h"
#include "geo.h"

#include <ctype.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <utf8proc.h>

/* ------------------------------------------------------------------ */
/* Statements                                                          */
/* ------------------------------------------------------------------ */

static const char SQL_FIND_NAMED[] =
	"SELECT l.fid, l.longitude, l.latitude, l.formation FROM locality_keys k JOIN localities l ON l.fid = k.fid "
	"WHERE k.name_key = :name_key AND k.country_key = :country_key";
static const char SQL_FIND_UNNAMED[] =
	"SELECT fid FROM localities WHERE name = '' AND longitude = :lon AND latitude = :lat "
	"AND country = :country AND formation = :formation ORDER BY fid LIMIT 1";
static const char SQL_INSERT[] =
	"INSERT INTO localities (geom, name, country, formation, longitude, latitude, verbatim_coordinates, verbatim_srs, uncertainty_m) "
	"VALUES (:geom, :name, :country, :formation, :lon, :lat, :verbatim, :srs, :unc)";
static const char SQL_INSERT_KEY[] =
	"INSERT INTO locality_keys (name_key, country_key, fid) VALUES (:name_key, :country_key, :fid)";
static const char SQL_SET_COORDS[] =
	"UPDATE localities SET geom = :geom, longitude = :lon, latitude = :lat, verbatim_coordinates = :verbatim, "
	"verbatim_srs = :srs, uncertainty_m = :unc WHERE fid = :fid AND geom IS NULL";
static const char SQL_SET_FORMATION[] =
	"UPDATE localities SET formation = :formation WHERE fid = :fid AND formation = ''";
static const char SQL_INSERT_COORD[] =
	"INSERT INTO locality_coordinates (fid, batch_id, line, longitude, latitude, verbatim_coordinates, verbatim_srs, uncertainty_m) "
	"VALUES (:fid, :batch, :line, :lon, :lat, :verbatim, :srs, :unc)";
/* GeoPackage Req. 13: extent of the layer's content; last_change on every change. */
static const char SQL_EXTENT_ADD[] =
	"UPDATE gpkg_contents SET min_x = min(coalesce(min_x, :lon), :lon), max_x = max(coalesce(max_x, :lon), :lon), "
	"min_y = min(coalesce(min_y, :lat), :lat), max_y = max(coalesce(max_y, :lat), :lat), "
	"last_change = strftime('%Y-%m-%dT%H:%M:%fZ', 'now') WHERE table_name = 'localities'";
static const char SQL_TOUCH[] =
	"UPDATE gpkg_contents SET last_change = strftime('%Y-%m-%dT%H:%M:%fZ', 'now') WHERE table_name = 'localities'";
static const char SQL_EXTENT_ALL[] =
	"UPDATE gpkg_contents SET (min_x, max_x, min_y, max_y) = "
	"(SELECT min(longitude), max(longitude), min(latitude), max(latitude) FROM localities WHERE geom IS NOT NULL), "
	"last_change = strftime('%Y-%m-%dT%H:%M:%fZ', 'now') WHERE table_name = 'localities'";

enum { ST_FIND_NAMED, ST_FIND_UNNAMED, ST_INSERT, ST_INSERT_KEY, ST_SET_COORDS, ST_SET_FORMATION,
       ST_INSERT_COORD, ST_EXTENT_ADD, ST_TOUCH, ST_COUNT };

struct bc_locality_cache {
	bc_db *db;
	sqlite3_stmt *st[ST_COUNT];
};

int bc_locality__cache_new(bc_locality_cache **out, bc_db *db, bc_err *err)
{
	static const char *const sql[ST_COUNT] = {SQL_FIND_NAMED, SQL_FIND_UNNAMED, SQL_INSERT, SQL_INSERT_KEY,
						  SQL_SET_COORDS, SQL_SET_FORMATION, SQL_INSERT_COORD, SQL_EXTENT_ADD, SQL_TOUCH};
	*out = NULL;
	bc_locality_cache *lc = bc__calloc(1, sizeof *lc);
	if (!lc)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	lc->db = db;
	for (int i = 0; i < ST_COUNT; i++) {
		int rc = bc_db__prepare(db, &lc->st[i], sql[i], err);
		if (rc) {
			bc_locality__cache_free(lc);
			return rc;
		}
	}
	*out = lc;
	return BC_OK;
}

void bc_locality__cache_free(bc_locality_cache *lc)
{
	if (!lc)
		return;
	for (int i = 0; i < ST_COUNT; i++)
		sqlite3_finalize(lc->st[i]);
	free(lc);
}

/* ------------------------------------------------------------------ */
/* Names                                                               */
/* ------------------------------------------------------------------ */

/* Trims and collapses runs of ASCII white space in place. */
static void loc_collapse(char *s)
{
	char *w = s;
	int space = 0;
	for (const char *r = s; *r; r++) {
		if (isspace((unsigned char)*r)) {
			space = 1;
			continue;
		}
		if (space && w != s)
			*w++ = ' ';
		space = 0;
		*w++ = *r;
	}
	*w = '\0';
}

int bc_locality__key(const char *text, char **out, bc_err *err)
{
	*out = NULL;
	utf8proc_uint8_t *mapped = NULL;
	utf8proc_ssize_t n = utf8proc_map((const utf8proc_uint8_t *)(text ? text : ""), 0, &mapped,
		UTF8PROC_NULLTERM | UTF8PROC_STABLE | UTF8PROC_COMPOSE | UTF8PROC_COMPAT | UTF8PROC_CASEFOLD | UTF8PROC_LUMP);
	char *s;
	if (n >= 0) {
		s = bc__strdup((const char *)mapped);
		free(mapped);
	} else {
		/* not UTF-8: compare bytes, ASCII letters folded */
		s = bc__strdup(text ? text : "");
		for (char *p = s; p && *p; p++)
			*p = (char)tolower((unsigned char)*p);
	}
	if (!s)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	loc_collapse(s);
	*out = s;
	return BC_OK;
}

/* A copy of `s` (NULL = "") without leading and trailing white space. */
static char *loc_trim(const char *s)
{
	if (!s)
		s = "";
	while (isspace((unsigned char)*s))
		s++;
	size_t n = strlen(s);
	while (n && isspace((unsigned char)s[n - 1]))
		n--;
	return bc__strndup(s, n);
}

/* ------------------------------------------------------------------ */
/* get or create                                                       */
/* ------------------------------------------------------------------ */

static int loc_step_done(bc_locality_cache *lc, sqlite3_stmt *st, const char *what, bc_err *err)
{
	int rc = sqlite3_step(st) == SQLITE_DONE ? BC_OK : bc_db__error(lc->db, err, what);
	sqlite3_reset(st);
	sqlite3_clear_bindings(st);
	return rc;
}

static void loc_bind_point(sqlite3_stmt *st, const bc_locality_input *in, int has)
{
	unsigned char blob[29];
	if (has) {
		bc_geo__gpkg_point(in->lon, in->lat, blob);
		sqlite3_bind_blob(st, sqlite3_bind_parameter_index(st, ":geom"), blob, sizeof blob, SQLITE_TRANSIENT);
	}
	bc_db__bind_double(st, ":lon", has ? in->lon : NAN);
	bc_db__bind_double(st, ":lat", has ? in->lat : NAN);
	bc_db__bind_text(st, ":verbatim", in->verbatim_coordinates ? in->verbatim_coordinates : "");
	bc_db__bind_text(st, ":srs", in->verbatim_srs ? in->verbatim_srs : "");
	bc_db__bind_double(st, ":unc", in->uncertainty_m);
}

static int loc_record_coord(bc_locality_cache *lc, const bc_locality_input *in, int64_t fid, bc_err *err)
{
	sqlite3_stmt *st = lc->st[ST_INSERT_COORD];
	bc_db__bind_int64(st, ":fid", fid);
	if (in->batch_id > 0)
		bc_db__bind_int64(st, ":batch", in->batch_id);
	if (in->line > 0)
		bc_db__bind_int64(st, ":line", in->line);
	loc_bind_point(st, in, 1);
	return loc_step_done(lc, st, "recording locality coordinates", err);
}

static int loc_extent_add(bc_locality_cache *lc, double lon, double lat, bc_err *err)
{
	sqlite3_stmt *st = lc->st[ST_EXTENT_ADD];
	bc_db__bind_double(st, ":lon", lon);
	bc_db__bind_double(st, ":lat", lat);
	return loc_step_done(lc, st, "updating the localities extent", err);
}

int bc_locality__get_or_create(bc_locality_cache *lc, const bc_locality_input *in, int64_t *fid, bc_err *err)
{
	*fid = 0;
	int has_lon = !isnan(in->lon), has_lat = !isnan(in->lat);
	if (has_lon != has_lat)
		return bc_err_set(err, BC_EINVALID, "%s given without %s", has_lon ? "longitude" : "latitude", has_lon ? "latitude" : "longitude");
	int has = has_lon;
	if (has && (!isfinite(in->lon) || !isfinite(in->lat) || fabs(in->lon) > 180 || fabs(in->lat) > 90))
		return bc_err_set(err, BC_EINVALID, "coordinates off the globe (longitude %g, latitude %g)", in->lon, in->lat);
	char *name = loc_trim(in->name), *country = loc_trim(in->country), *formation = loc_trim(in->formation);
	char *name_key = NULL, *country_key = NULL;
	int rc = BC_OK;
	if (!name || !country || !formation) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	int64_t id = 0;
	int changed = 0, point_added = 0, got_coords = 0;
	if (!*name) {
		if (!has)
			goto done; /* nothing to tell this row's place apart */
		sqlite3_stmt *st = lc->st[ST_FIND_UNNAMED];
		bc_db__bind_double(st, ":lon", in->lon);
		bc_db__bind_double(st, ":lat", in->lat);
		bc_db__bind_text(st, ":country", country);
		bc_db__bind_text(st, ":formation", formation);
		int s = sqlite3_step(st);
		if (s == SQLITE_ROW)
			id = sqlite3_column_int64(st, 0);
		else if (s != SQLITE_DONE)
			rc = bc_db__error(lc->db, err, "looking up a locality");
		sqlite3_reset(st);
		sqlite3_clear_bindings(st);
	} else {
		rc = bc_locality__key(name, &name_key, err);
		if (rc == BC_OK)
			rc = bc_locality__key(country, &country_key, err);
		if (rc)
			goto done;
		sqlite3_stmt *st = lc->st[ST_FIND_NAMED];
		bc_db__bind_text(st, ":name_key", name_key);
		bc_db__bind_text(st, ":country_key", country_key);
		int s = sqlite3_step(st);
		if (s == SQLITE_ROW) {
			id = sqlite3_column_int64(st, 0);
			got_coords = sqlite3_column_type(st, 1) != SQLITE_NULL;
			const unsigned char *f = sqlite3_column_text(st, 3);
			if (*formation && (!f || !*f)) {
				/* the locality gets the first formation any row names */
				sqlite3_stmt *u = lc->st[ST_SET_FORMATION];
				bc_db__bind_text(u, ":formation", formation);
				bc_db__bind_int64(u, ":fid", id);
				sqlite3_reset(st);
				rc = loc_step_done(lc, u, "setting a locality's formation", err);
				changed = 1;
			}
		} else if (s != SQLITE_DONE) {
			rc = bc_db__error(lc->db, err, "looking up a locality");
		}
		sqlite3_reset(st);
		sqlite3_clear_bindings(st);
	}
	if (rc)
		goto done;
	if (id == 0) {
		sqlite3_stmt *st = lc->st[ST_INSERT];
		bc_db__bind_text(st, ":name", name);
		bc_db__bind_text(st, ":country", country);
		bc_db__bind_text(st, ":formation", formation);
		loc_bind_point(st, in, has);
		rc = loc_step_done(lc, st, "storing a locality", err);
		if (rc)
			goto done;
		id = sqlite3_last_insert_rowid(bc_db__sqlite(lc->db));
		changed = 1;
		point_added = has;
		if (*name) {
			sqlite3_stmt *k = lc->st[ST_INSERT_KEY];
			bc_db__bind_text(k, ":name_key", name_key);
			bc_db__bind_text(k, ":country_key", country_key);
			bc_db__bind_int64(k, ":fid", id);
			rc = loc_step_done(lc, k, "storing a locality name", err);
		}
	} else if (has && !got_coords && *name) {
		/* first coordinates for a named locality known so far without */
		sqlite3_stmt *st = lc->st[ST_SET_COORDS];
		loc_bind_point(st, in, 1);
		bc_db__bind_int64(st, ":fid", id);
		rc = loc_step_done(lc, st, "setting a locality's coordinates", err);
		changed = point_added = 1;
	}
	if (rc == BC_OK && has)
		rc = loc_record_coord(lc, in, id, err);
	if (rc == BC_OK && point_added)
		rc = loc_extent_add(lc, in->lon, in->lat, err);
	else if (rc == BC_OK && changed)
		rc = loc_step_done(lc, lc->st[ST_TOUCH], "updating the localities last_change", err);
	if (rc == BC_OK)
		*fid = id;
done:
	free(name);
	free(country);
	free(formation);
	free(name_key);
	free(country_key);
	return rc;
}

int bc_locality__refresh_extent(bc_db *db, bc_err *err)
{
	return bc_db__exec(db, SQL_EXTENT_ALL, err);
}

/* ------------------------------------------------------------------ */
/* Reports for check                                                   */
/* ------------------------------------------------------------------ */

static const char *loc_text(sqlite3_stmt *st, int col)
{
	const unsigned char *t = sqlite3_column_text(st, col);
	return t ? (const char *)t : "";
}

int bc_locality__conflicts(bc_db *db, double tolerance_m, bc_locality_conflict_fn fn, void *user, bc_err *err)
{
	/* Each distinct pair at its first appearance, with the kept pair's origin
	 * (the first coordinate row of the locality is the pair it kept). */
	static const char sql[] =
		"SELECT l.fid, l.name, l.country, l.longitude, l.latitude, c.longitude, c.latitude, "
		"coalesce(b.file, ''), coalesce(c.line, 0), c.verbatim_coordinates, "
		"coalesce((SELECT b0.file FROM locality_coordinates c0 LEFT JOIN import_batches b0 ON b0.batch_id = c0.batch_id "
		"          WHERE c0.fid = l.fid ORDER BY c0.coord_id LIMIT 1), ''), "
		"coalesce((SELECT c0.line FROM locality_coordinates c0 WHERE c0.fid = l.fid ORDER BY c0.coord_id LIMIT 1), 0) "
		"FROM locality_coordinates c JOIN localities l ON l.fid = c.fid "
		"LEFT JOIN import_batches b ON b.batch_id = c.batch_id "
		"WHERE l.longitude IS NOT NULL AND (c.longitude <> l.longitude OR c.latitude <> l.latitude) "
		"AND c.coord_id = (SELECT min(c2.coord_id) FROM locality_coordinates c2 "
		"                  WHERE c2.fid = c.fid AND c2.longitude = c.longitude AND c2.latitude = c.latitude) "
		"ORDER BY l.fid, c.coord_id";
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(db, &st, sql, err);
	while (rc == BC_OK) {
		int s = sqlite3_step(st);
		if (s == SQLITE_DONE)
			break;
		if (s != SQLITE_ROW) {
			rc = bc_db__error(db, err, "listing locality coordinates");
			break;
		}
		bc_locality_conflict c = {
			.fid = sqlite3_column_int64(st, 0),
			.name = loc_text(st, 1),
			.country = loc_text(st, 2),
			.kept_lon = sqlite3_column_double(st, 3),
			.kept_lat = sqlite3_column_double(st, 4),
			.lon = sqlite3_column_double(st, 5),
			.lat = sqlite3_column_double(st, 6),
			.file = loc_text(st, 7),
			.line = sqlite3_column_int64(st, 8),
			.verbatim = loc_text(st, 9),
			.kept_file = loc_text(st, 10),
			.kept_line = sqlite3_column_int64(st, 11),
		};
		c.distance_m = bc_geo__distance_m(c.kept_lat, c.kept_lon, c.lat, c.lon);
		if (c.distance_m > tolerance_m)
			rc = fn(&c, user);
	}
	sqlite3_finalize(st);
	return rc;
}

typedef struct loc_pt {
	int64_t fid;
	double lon, lat;
	char *key;          /* normalised formation */
	char *formation, *file;
	int64_t line;
} loc_pt;

static int loc_pt_cmp(const void *a, const void *b)
{
	const loc_pt *p = a, *q = b;
	int c = strcmp(p->key, q->key);
	if (c)
		return c;
	if (p->lat != q->lat)
		return p->lat < q->lat ? -1 : 1;
	return p->fid < q->fid ? -1 : p->fid > q->fid;
}

typedef struct loc_pair {
	int64_t f1, f2;     /* fids, f1 < f2 */
	size_t i, j;        /* their points */
	double d;
} loc_pair;

static int loc_pair_cmp(const void *a, const void *b)
{
	const loc_pair *p = a, *q = b;
	if (p->f1 != q->f1)
		return p->f1 < q->f1 ? -1 : 1;
	return p->f2 < q->f2 ? -1 : p->f2 > q->f2;
}

int bc_locality__near_unnamed(bc_db *db, double within_m, bc_locality_near_fn fn, void *user, bc_err *err)
{
	static const char sql[] =
		"SELECT l.fid, l.longitude, l.latitude, l.formation, "
		"coalesce((SELECT b0.file FROM locality_coordinates c0 LEFT JOIN import_batches b0 ON b0.batch_id = c0.batch_id "
		"          WHERE c0.fid = l.fid ORDER BY c0.coord_id LIMIT 1), ''), "
		"coalesce((SELECT c0.line FROM locality_coordinates c0 WHERE c0.fid = l.fid ORDER BY c0.coord_id LIMIT 1), 0) "
		"FROM localities l WHERE l.name = '' AND l.longitude IS NOT NULL AND l.latitude IS NOT NULL";
	sqlite3_stmt *st = NULL;
	loc_pt *pts = NULL;
	loc_pair *pairs = NULL;
	size_t n = 0, cap = 0, np = 0, pcap = 0;
	int rc = bc_db__prepare(db, &st, sql, err);
	while (rc == BC_OK) {
		int s = sqlite3_step(st);
		if (s == SQLITE_DONE)
			break;
		if (s != SQLITE_ROW) {
			rc = bc_db__error(db, err, "listing unnamed localities");
			break;
		}
		loc_pt *grown = bc__grow(pts, n, &cap, sizeof *pts, 64);
		if (!grown) {
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			break;
		}
		pts = grown;
		loc_pt *p = &pts[n];
		memset(p, 0, sizeof *p);
		n++;
		p->fid = sqlite3_column_int64(st, 0);
		p->lon = sqlite3_column_double(st, 1);
		p->lat = sqlite3_column_double(st, 2);
		p->formation = bc__strdup(loc_text(st, 3));
		p->file = bc__strdup(loc_text(st, 4));
		p->line = sqlite3_column_int64(st, 5);
		if (!p->formation || !p->file)
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		else
			rc = bc_locality__key(p->formation, &p->key, err);
	}
	sqlite3_finalize(st);
	if (rc == BC_OK && n > 1)
		qsort(pts, n, sizeof *pts, loc_pt_cmp);
	/* A degree of latitude is at least 110574 m (WGS 84, at the equator),
	 * so points further apart in latitude than this cannot be within. */
	double dlat_max = within_m / 110574.0 + 1e-9;
	for (size_t i = 0; rc == BC_OK && i < n; i++) {
		for (size_t j = i + 1; rc == BC_OK && j < n && !strcmp(pts[i].key, pts[j].key) && pts[j].lat - pts[i].lat <= dlat_max; j++) {
			double d = bc_geo__distance_m(pts[i].lat, pts[i].lon, pts[j].lat, pts[j].lon);
			if (d > within_m)
				continue;
			loc_pair *q = bc__grow(pairs, np, &pcap, sizeof *pairs, 16);
			if (!q) {
				rc = bc_err_set(err, BC_ENOMEM, "out of memory");
				break;
			}
			pairs = q;
			size_t a = pts[i].fid < pts[j].fid ? i : j, b = a == i ? j : i;
			pairs[np++] = (loc_pair){pts[a].fid, pts[b].fid, a, b, d};
		}
	}
	if (rc == BC_OK && np > 1)
		qsort(pairs, np, sizeof *pairs, loc_pair_cmp);
	for (size_t k = 0; rc == BC_OK && k < np; k++) {
		const loc_pt *a = &pts[pairs[k].i], *b = &pts[pairs[k].j];
		bc_locality_near r = {a->fid, b->fid, a->lon, a->lat, b->lon, b->lat, a->file, b->file,
				      a->line, b->line, a->formation, pairs[k].d};
		rc = fn(&r, user);
	}
	for (size_t i = 0; i < n; i++) {
		free(pts[i].key);
		free(pts[i].formation);
		free(pts[i].file);
	}
	free(pts);
	free(pairs);
	return rc;
}

/* ------------------------------------------------------------------ */
/* Coverage                                                            */
/* ------------------------------------------------------------------ */

static int loc_i64_cmp(const void *a, const void *b)
{
	int64_t x = *(const int64_t *)a, y = *(const int64_t *)b;
	return x < y ? -1 : x > y;
}

typedef struct loc_ll {
	double lon, lat;
} loc_ll;

static int loc_ll_cmp(const void *a, const void *b)
{
	const loc_ll *p = a, *q = b;
	if (p->lat != q->lat)
		return p->lat < q->lat ? -1 : 1;
	return p->lon < q->lon ? -1 : p->lon > q->lon;
}

/* Prim's algorithm on the complete graph of distinct points: O(n^2) time,
 * O(n) memory. The tree is chosen by chord length on the unit sphere (a
 * monotonic function of great-circle distance, so it is the great-circle
 * minimum spanning tree, computed without a geodesic call per pair); its
 * n - 1 edges are then measured as geodesics on WGS 84. On the ellipsoid the
 * geodesic tree can differ only where two candidate edges are within the
 * sphere-ellipsoid difference (< 0.5 %) of each other, and then its length
 * differs by less than that. Returns metres. */
static int loc_mst_m(const loc_ll *p, size_t n, double *out, bc_err *err)
{
	*out = 0;
	if (n < 2)
		return BC_OK;
	double *best = bc__malloc(n * sizeof *best);
	double *xyz = bc__malloc(3 * n * sizeof *xyz);
	size_t *from = bc__malloc(n * sizeof *from);
	unsigned char *in = bc__calloc(n, 1);
	if (!best || !in || !xyz || !from) {
		free(best);
		free(in);
		free(xyz);
		free(from);
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	}
	const double rad = M_PI / 180.0;
	for (size_t i = 0; i < n; i++) {
		best[i] = INFINITY;
		from[i] = 0;
		double la = p[i].lat * rad, lo = p[i].lon * rad;
		xyz[3 * i] = cos(la) * cos(lo);
		xyz[3 * i + 1] = cos(la) * sin(lo);
		xyz[3 * i + 2] = sin(la);
	}
	size_t cur = 0;
	in[0] = 1;
	double total = 0;
	for (size_t step = 1; step < n; step++) {
		size_t next = n;
		const double *c = xyz + 3 * cur;
		for (size_t j = 0; j < n; j++) {
			if (in[j])
				continue;
			const double *q = xyz + 3 * j;
			double dx = c[0] - q[0], dy = c[1] - q[1], dz = c[2] - q[2];
			double d = dx * dx + dy * dy + dz * dz;
			if (d < best[j]) {
				best[j] = d;
				from[j] = cur;
			}
			if (next == n || best[j] < best[next])
				next = j;
		}
		size_t f = from[next];
		total += bc_geo__distance_m(p[f].lat, p[f].lon, p[next].lat, p[next].lon);
		in[next] = 1;
		cur = next;
	}
	free(best);
	free(in);
	free(xyz);
	free(from);
	*out = total;
	return BC_OK;
}

static void loc_coverage_zero(bc_coverage *out, double cell_km)
{
	memset(out, 0, sizeof *out);
	out->cell_km = cell_km;
	out->min_lat = out->max_lat = out->lat_range = NAN;
}

/* Points prepared once for the coverage of many subsets: each point's
 * equal-area cell and its distinct position as dense indices, so a subset
 * needs neither PROJ nor a sort. */
struct bc_coverage__set {
	size_t n, n_cells, n_pts;
	double cell_km;
	size_t mst_max_points;
	double *lat;         /* per point */
	uint32_t *cell;      /* per point: dense cell index */
	uint32_t *pt;        /* per point: dense distinct-position index, in (lat, lon) order */
	uint8_t *bad;        /* per point: off the globe */
	loc_ll *pos;         /* per distinct position */
	uint32_t *cell_seen, *pt_seen, stamp; /* which cells and positions the current subset has */
	loc_ll *tree;        /* the subset's distinct positions, for the tree */
};

/* Dense ranks of `n` keys: equal keys, equal rank, in key order. */
typedef struct loc_rank {
	int64_t cell;
	loc_ll ll;
	size_t i;
} loc_rank;

static int loc_rank_cell(const void *a, const void *b)
{
	return loc_i64_cmp(&((const loc_rank *)a)->cell, &((const loc_rank *)b)->cell);
}

static int loc_rank_ll(const void *a, const void *b)
{
	return loc_ll_cmp(&((const loc_rank *)a)->ll, &((const loc_rank *)b)->ll);
}

void bc_coverage__set_free(bc_coverage__set *c)
{
	if (!c)
		return;
	free(c->lat);
	free(c->cell);
	free(c->pt);
	free(c->bad);
	free(c->pos);
	free(c->cell_seen);
	free(c->pt_seen);
	free(c->tree);
	free(c);
}

int bc_coverage__set_new(bc_coverage__set **out, bc_geo *geo, const double *lon, const double *lat, size_t n,
			 const bc_coverage_options *opts, bc_err *err)
{
	bc_coverage_options def = BC_COVERAGE_OPTIONS_INIT;
	*out = NULL;
	if (!opts)
		opts = &def;
	if (!(opts->cell_km > 0) || !isfinite(opts->cell_km))
		return bc_err_set(err, BC_EINVALID, "cell size must be a positive number of km, got %g", opts->cell_km);
	if (n >= UINT32_MAX)
		return bc_err_set(err, BC_EINVALID, "too many points for a coverage");
	bc_coverage__set *c = bc__calloc(1, sizeof *c);
	size_t m = n ? n : 1;
	loc_rank *r = bc__malloc(m * sizeof *r);
	bc_geo *g = geo;
	int rc = BC_OK;
	if (!c || !r || !(c->lat = bc__malloc(m * sizeof *c->lat)) || !(c->cell = bc__malloc(m * sizeof *c->cell)) ||
	    !(c->pt = bc__malloc(m * sizeof *c->pt)) || !(c->bad = bc__calloc(m, 1)) || !(c->pos = bc__malloc(m * sizeof *c->pos)) ||
	    !(c->cell_seen = bc__calloc(m, sizeof *c->cell_seen)) || !(c->pt_seen = bc__calloc(m, sizeof *c->pt_seen)) ||
	    !(c->tree = bc__malloc(m * sizeof *c->tree)))
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
	if (rc == BC_OK && !g && n)
		rc = bc_geo__new(&g, err);
	double size_m = opts->cell_km * 1000.0;
	for (size_t i = 0; rc == BC_OK && i < n; i++) {
		c->lat[i] = lat[i];
		r[i] = (loc_rank){0, {lon[i], lat[i]}, i};
		if (!isfinite(lon[i]) || !isfinite(lat[i]) || fabs(lon[i]) > 180 || fabs(lat[i]) > 90) {
			c->bad[i] = 1;
			continue;
		}
		double x = lon[i], y = lat[i];
		/* EPSG:6933, WGS 84 / NSIDC EASE-Grid 2.0 Global: Lambert
		 * cylindrical equal-area, so equal cells in metres are equal areas. */
		rc = bc_geo__transform(g, "EPSG:4326", "EPSG:6933", &x, &y, err);
		int64_t cx = (int64_t)floor(x / size_m), cy = (int64_t)floor(y / size_m);
		r[i].cell = cx * 4000003 + cy; /* |cy| < 2e6 even for 1 m cells at +-86 */
	}
	if (rc == BC_OK) {
		qsort(r, n, sizeof *r, loc_rank_cell);
		for (size_t i = 0; i < n; i++) {
			c->n_cells += i == 0 || r[i].cell != r[i - 1].cell;
			c->cell[r[i].i] = (uint32_t)(c->n_cells - 1);
		}
		qsort(r, n, sizeof *r, loc_rank_ll);
		for (size_t i = 0; i < n; i++) {
			if (i == 0 || loc_ll_cmp(&r[i].ll, &r[i - 1].ll) != 0)
				c->pos[c->n_pts++] = r[i].ll;
			c->pt[r[i].i] = (uint32_t)(c->n_pts - 1);
		}
		c->n = n;
		c->cell_km = opts->cell_km;
		c->mst_max_points = opts->mst_max_points;
		*out = c;
		c = NULL;
	}
	if (g != geo)
		bc_geo__free(g);
	free(r);
	bc_coverage__set_free(c);
	return rc;
}

int bc_coverage__set_of(bc_coverage *out, bc_coverage__set *c, const size_t *idx, size_t m, bc_err *err)
{
	loc_coverage_zero(out, c->cell_km);
	if (m == 0)
		return BC_OK;
	if (++c->stamp == 0) { /* wrapped: start the marks again */
		memset(c->cell_seen, 0, (c->n ? c->n : 1) * sizeof *c->cell_seen);
		memset(c->pt_seen, 0, (c->n ? c->n : 1) * sizeof *c->pt_seen);
		c->stamp = 1;
	}
	out->min_lat = out->max_lat = c->lat[idx[0]];
	for (size_t k = 0; k < m; k++) {
		size_t i = idx[k];
		if (c->bad[i])
			return bc_err_set(err, BC_EINVALID, "point %zu is off the globe (latitude %g)", k + 1, c->lat[i]);
		out->min_lat = fmin(out->min_lat, c->lat[i]);
		out->max_lat = fmax(out->max_lat, c->lat[i]);
		if (c->cell_seen[c->cell[i]] != c->stamp) {
			c->cell_seen[c->cell[i]] = c->stamp;
			out->n_cells++;
		}
		c->pt_seen[c->pt[i]] = c->stamp;
	}
	out->n_localities = m;
	out->lat_range = out->max_lat - out->min_lat;
	/* identical points add nothing to the tree; in (lat, lon) order */
	size_t np = 0;
	for (size_t p = 0; p < c->n_pts; p++)
		if (c->pt_seen[p] == c->stamp)
			c->tree[np++] = c->pos[p];
	double mst = 0;
	int rc = BC_OK;
	if (c->mst_max_points && np > c->mst_max_points)
		mst = NAN; /* the caller's limit on the O(n^2) tree */
	else
		rc = loc_mst_m(c->tree, np, &mst, err);
	out->mst_km = mst / 1000.0;
	return rc;
}

int bc_coverage_points(bc_coverage *out, const double *lon, const double *lat, size_t n,
		       const bc_coverage_options *opts, bc_err *err)
{
	bc_coverage__set *c = NULL;
	bc_coverage_options def = BC_COVERAGE_OPTIONS_INIT;
	loc_coverage_zero(out, opts ? opts->cell_km : def.cell_km);
	for (size_t i = 0; i < n; i++)
		if (!isfinite(lon[i]) || !isfinite(lat[i]) || fabs(lon[i]) > 180 || fabs(lat[i]) > 90)
			return bc_err_set(err, BC_EINVALID, "point %zu is off the globe (longitude %g, latitude %g)", i + 1, lon[i], lat[i]);
	size_t *idx = bc__malloc((n ? n : 1) * sizeof *idx);
	if (!idx)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	for (size_t i = 0; i < n; i++)
		idx[i] = i;
	int rc = bc_coverage__set_new(&c, NULL, lon, lat, n, opts, err);
	if (rc == BC_OK)
		rc = bc_coverage__set_of(out, c, idx, n, err);
	bc_coverage__set_free(c);
	free(idx);
	return rc;
}

/* Collected coordinates of localities, for the db forms. */
typedef struct loc_item {
	int64_t fid;
	double lon, lat;    /* NaN when the locality has none */
} loc_item;

typedef struct loc_set {
	loc_item *it;
	size_t n, cap;
	size_t without_locality;
} loc_set;

static int loc_item_cmp(const void *a, const void *b)
{
	int64_t x = ((const loc_item *)a)->fid, y = ((const loc_item *)b)->fid;
	return x < y ? -1 : x > y;
}

static int loc_set_add(loc_set *s, int64_t fid, double lon, double lat, bc_err *err)
{
	loc_item *it = bc__grow(s->it, s->n, &s->cap, sizeof *it, 64);
	if (!it)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	s->it = it;
	s->it[s->n++] = (loc_item){fid, lon, lat};
	return BC_OK;
}

/* Reads rows (fid, lon, lat) of `st` into the set; fid NULL counts an
 * occurrence without locality. `expect_row`: a missing row is an error. */
static int loc_set_read(loc_set *s, bc_db *db, sqlite3_stmt *st, int expect_row, const char *what, int64_t key, bc_err *err)
{
	int rc = BC_OK, rows = 0;
	for (;;) {
		int r = sqlite3_step(st);
		if (r == SQLITE_DONE)
			break;
		if (r != SQLITE_ROW) {
			rc = bc_db__error(db, err, "reading localities for coverage");
			break;
		}
		rows++;
		if (sqlite3_column_type(st, 0) == SQLITE_NULL) {
			s->without_locality++;
			continue;
		}
		int64_t fid = sqlite3_column_int64(st, 0);
		int has = sqlite3_column_type(st, 1) != SQLITE_NULL && sqlite3_column_type(st, 2) != SQLITE_NULL;
		rc = loc_set_add(s, fid, has ? sqlite3_column_double(st, 1) : NAN, has ? sqlite3_column_double(st, 2) : NAN, err);
		if (rc)
			break;
	}
	if (rc == BC_OK && expect_row && rows == 0)
		rc = bc_err_set(err, BC_ENOTFOUND, "no %s %lld in %s", what, (long long)key, bc_db_path(db));
	sqlite3_reset(st);
	return rc;
}

/* Distinct fids of the set -> coverage. Entries with the same fid carry
 * the same coordinates (one localities row), so any one of them will do. */
static int loc_set_coverage(bc_coverage *out, loc_set *s, const bc_coverage_options *opts, bc_err *err)
{
	size_t n = s->n;
	double *lon = bc__malloc((n ? n : 1) * sizeof *lon), *lat = bc__malloc((n ? n : 1) * sizeof *lat);
	int rc = BC_OK;
	if (!lon || !lat) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	if (n > 1)
		qsort(s->it, n, sizeof *s->it, loc_item_cmp);
	size_t m = 0, unloc = 0;
	for (size_t i = 0; i < n; i++) {
		if (i > 0 && s->it[i].fid == s->it[i - 1].fid)
			continue;
		if (isnan(s->it[i].lon))
			unloc++;
		else
			lon[m] = s->it[i].lon, lat[m] = s->it[i].lat, m++;
	}
	rc = bc_coverage_points(out, lon, lat, m, opts, err);
	if (rc == BC_OK) {
		out->n_unlocated = unloc;
		out->n_without_locality = s->without_locality;
	}
done:
	free(lon);
	free(lat);
	return rc;
}

static int loc_coverage_query(bc_coverage *out, bc_db *db, const int64_t *keys, size_t n, const char *sql_all,
			      const char *sql_one, const char *what, const bc_coverage_options *opts, bc_err *err)
{
	loc_set s = {0};
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(db, &st, keys ? sql_one : sql_all, err);
	if (rc == BC_OK && !keys) {
		rc = loc_set_read(&s, db, st, 0, what, 0, err);
	} else {
		for (size_t i = 0; rc == BC_OK && i < n; i++) {
			bc_db__bind_int64(st, ":key", keys[i]);
			rc = loc_set_read(&s, db, st, 1, what, keys[i], err);
		}
	}
	sqlite3_finalize(st);
	if (rc == BC_OK)
		rc = loc_set_coverage(out, &s, opts, err);
	free(s.it);
	return rc;
}

int bc_coverage_localities(bc_coverage *out, bc_db *db, const int64_t *fids, size_t n,
			   const bc_coverage_options *opts, bc_err *err)
{
	return loc_coverage_query(out, db, fids, n,
		"SELECT fid, longitude, latitude FROM localities",
		"SELECT fid, longitude, latitude FROM localities WHERE fid = :key",
		"locality", opts, err);
}

int bc_coverage_occurrences(bc_coverage *out, bc_db *db, const int64_t *pks, size_t n,
			    const bc_coverage_options *opts, bc_err *err)
{
	return loc_coverage_query(out, db, pks, n,
		"SELECT o.locality_id, l.longitude, l.latitude FROM occurrences o LEFT JOIN localities l ON l.fid = o.locality_id",
		"SELECT o.locality_id, l.longitude, l.latitude FROM occurrences o LEFT JOIN localities l ON l.fid = o.locality_id "
		"WHERE o.occurrence_pk = :key",
		"occurrence", opts, err);
}
