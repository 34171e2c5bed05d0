/*
 * test_sql.h - one number from the test database, for the unit tests that
 * check what a module stored.
 */
#ifndef BC_TEST_SQL_H
#define BC_TEST_SQL_H

#include "db.h"

#include <math.h>

/** The first column of the first row of `sql` as a double; NaN when the
 * query fails, returns no row or gives NULL. */
static inline double test_query_num(bc_db *db, const char *sql)
{
	sqlite3_stmt *st = NULL;
	double v = NAN;
	if (sqlite3_prepare_v2(bc_db__sqlite(db), sql, -1, &st, NULL) == SQLITE_OK && sqlite3_step(st) == SQLITE_ROW &&
	    sqlite3_column_type(st, 0) != SQLITE_NULL)
		v = sqlite3_column_double(st, 0);
	sqlite3_finalize(st);
	return v;
}

#endif
