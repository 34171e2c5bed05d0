/*
 * geo.h - coordinates, geodesics and GeoPackage geometry (private).
 * Only geo.c includes proj.h.
 *
 * Axis order, stated once: every x/y pair that crosses this interface is in
 * "GIS order", x = longitude or easting, y = latitude or northing, whatever
 * order the CRS's authority defines. Text (verbatim coordinates) is read in
 * the CRS's own axis order as its authority defines it (EPSG:4326 "lat lon",
 * EPSG:32616 "easting northing", EPSG:3006 "northing easting"), unless
 * hemisphere or E/N letters in the text say otherwise.
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
 * Latitude comes first unless hemisphere letters or lat/lon words say
 * otherwise.
 */
int bc_geo__parse_dms(const char *text, double *lat, double *lon, bc_err *err);

/**
 * Converts `verbatim` coordinates given in CRS `srs` (any CRS PROJ knows:
 * "EPSG:32616", "EPSG:4326", a PROJ string) to WGS 84 longitude/latitude,
 * respecting the CRS's axis order. Geographic CRSs accept DMS text.
 * A point that falls more than 1 degree outside the CRS's area of use is
 * refused (swapped or wrong-zone coordinates).
 */
int bc_geo__to_wgs84(bc_geo *g, const char *srs, const char *verbatim, double *lon, double *lat, bc_err *err);

/**
 * Converts one point between any two CRSs PROJ knows, in GIS order on both
 * sides (x = longitude/easting, y = latitude/northing; degrees for
 * geographic CRSs). Uses PROJ's best available operation with no grids
 * downloaded. *x and *y are replaced on success.
 */
int bc_geo__transform(bc_geo *g, const char *from, const char *to, double *x, double *y, bc_err *err);

/** Geodesic distance in metres on the WGS 84 ellipsoid (Karney 2013 via PROJ). */
double bc_geo__distance_m(double lat1, double lon1, double lat2, double lon2);

/** As bc_geo__distance_m, also giving the forward azimuths at both ends (degrees). */
double bc_geo__inverse(double lat1, double lon1, double lat2, double lon2, double *azi1, double *azi2);

/** GeoPackageBinary point (GeoPackage Req. 19; srs 4326, little-endian, no envelope): 29 bytes. */
void bc_geo__gpkg_point(double lon, double lat, unsigned char out[29]);

/**
 * Reads a GeoPackageBinary point written as above (or with any envelope),
 * giving its longitude and latitude. BC_EINVALID for anything else.
 */
int bc_geo__gpkg_point_read(const unsigned char *blob, size_t n, double *lon, double *lat, bc_err *err);

#endif
