/*
 * geo.c - coordinates with PROJ: the only file that includes proj.h.
 */
#include "db.h"

#include <proj.h>
#include <stdlib.h>

int bc_geo__srs_definition(int epsg, char **out, bc_err *err)
{
	*out = NULL;
	PJ_CONTEXT *ctx = proj_context_create();
	if (!ctx)
		return bc_err_set(err, BC_ENOMEM, "PROJ: cannot create a context");
	proj_log_level(ctx, PJ_LOG_NONE);
	char code[16];
	snprintf(code, sizeof code, "%d", epsg);
	PJ *crs = proj_create_from_database(ctx, "EPSG", code, PJ_CATEGORY_CRS, 0, NULL);
	int rc = BC_OK;
	if (!crs) {
		rc = bc_err_set(err, BC_EIO, "PROJ: EPSG:%d not found in PROJ's database (is proj-data installed?)", epsg);
	} else {
		/* GeoPackage 1.3 gpkg_spatial_ref_sys.definition holds OGC WKT 1. */
		const char *wkt = proj_as_wkt(ctx, crs, PJ_WKT1_GDAL, NULL);
		if (!wkt)
			rc = bc_err_set(err, BC_EIO, "PROJ: cannot write EPSG:%d as WKT", epsg);
		else if (!(*out = bc__strdup(wkt)))
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
	}
	proj_destroy(crs);
	proj_context_destroy(ctx);
	return rc;
}
