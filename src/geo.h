/*
 * geo.h - coordinates, geodesics and GeoPackage geometry (private).
 * Only geo.c includes proj.h.
 */
#ifndef BC_GEO_H
#define BC_GEO_H

#include "internal.h"

/** A PROJ context with a cache of transformations per source CRS. */
typedef struct bc_geo bc_geo;
int bc_geo__new(bc_geo **out, bc_err *err);
void bc_geo__free(bc_geo *g);

/**
 * Parses a degrees-minutes-seconds or decimal pair ("50°30'N 0°30'E",
 * "50 30 00 N, 0 30 00 E", "-33.92 18.42", "N 50d30.5m E 0d30m") into
 * latitude and longitude in decimal degrees. BC_EINVALID with a reason.
 */
int bc_geo__parse_dms(const char *text, double *lat, double *lon, bc_err *err);

/**
 * Converts `verbatim` coordinates given in CRS `srs` (any CRS PROJ knows:
 * "EPSG:32616", "EPSG:4326", a PROJ string) to WGS 84 longitude/latitude,
 * respecting the CRS's axis order. Geographic CRSs accept DMS text.
 */
int bc_geo__to_wgs84(bc_geo *g, const char *srs, const char *verbatim, double *lon, double *lat, bc_err *err);

/** Geodesic distance in metres on the WGS 84 ellipsoid (Karney 2013 via PROJ). */
double bc_geo__distance_m(double lat1, double lon1, double lat2, double lon2);

/** GeoPackageBinary point (GeoPackage Req. 19; srs 4326, little-endian, no envelope): 29 bytes. */
void bc_geo__gpkg_point(double lon, double lat, unsigned char out[29]);

#endif
