/*
 * db.h - private view of the database handle for the library's modules.
 */
#ifndef BC_DB_H
#define BC_DB_H

#include "internal.h"
#include <sqlite3.h>

struct bc_db {
	sqlite3 *sql;
	char *path;
};

/** The SQLite connection of a handle. Borrowed. */
sqlite3 *bc_db__sqlite(bc_db *db);

/** Runs one or more statements without results. */
int bc_db__exec(bc_db *db, const char *sql, bc_err *err);

/**
 * Fills err from the connection's last SQLite error, with `context`
 * ("inserting occurrence"), mapping SQLITE_BUSY/LOCKED to BC_EBUSY with
 * the message "database busy". Returns the code.
 */
int bc_db__error(bc_db *db, bc_err *err, const char *context);

/** Prepares `sql` (with named parameters) or fills err. */
int bc_db__prepare(bc_db *db, sqlite3_stmt **out, const char *sql, bc_err *err);

/** Binds text by parameter name (":name"); NULL binds SQL NULL. */
int bc_db__bind_text(sqlite3_stmt *st, const char *name, const char *value);
int bc_db__bind_double(sqlite3_stmt *st, const char *name, double value); /* NaN binds NULL */
int bc_db__bind_int64(sqlite3_stmt *st, const char *name, int64_t value);

/** BEGIN IMMEDIATE / COMMIT / ROLLBACK. */
int bc_db__begin(bc_db *db, bc_err *err);
int bc_db__commit(bc_db *db, bc_err *err);
void bc_db__rollback(bc_db *db);
/** BEGIN IMMEDIATE without waiting: BC_EBUSY when another connection writes (no message). */
int bc_db__try_begin(bc_db *db);

/* Seeding hooks run by bc_db_create inside its transaction. Each module
 * that owns shipped reference data implements one. */
int bc_timescale__seed(bc_db *db, bc_err *err); /* timescale.c: built-in charts */
int bc_vocab__seed(bc_db *db, bc_err *err);     /* vocab.c: shipped vocabularies */

/* geo.c: the WKT definition PROJ gives for EPSG:code. Caller frees. */
int bc_geo__srs_definition(int epsg, char **out, bc_err *err);

#endif
