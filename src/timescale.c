/*
 * timescale.c - charts in the database (placeholder seed until the
 * chart loader lands; replaced whole).
 */
#include "db.h"

int bc_timescale__seed(bc_db *db, bc_err *err)
{
	(void)db;
	(void)err;
	return BC_OK;
}
