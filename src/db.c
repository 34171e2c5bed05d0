/*
 * db.c - the database: create, open, migrate, refuse what is not ours.
 * The file is an OGC GeoPackage 1.3; the project's own schema version is
 * kept in bathychron_meta because GeoPackage reserves user_version.
 */
#include "db.h"

#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define GPKG_APPLICATION_ID 0x47504B47 /* "GPKG", GeoPackage Req. 2 */
#define GPKG_USER_VERSION 10300        /* GeoPackage 1.3.0, Req. 2 */
#define BUSY_TIMEOUT_MS 10000

sqlite3 *bc_db__sqlite(bc_db *db) { return db->sql; }
const char *bc_db_path(const bc_db *db) { return db->path; }

int bc_db__error(bc_db *db, bc_err *err, const char *context)
{
	int ec = sqlite3_extended_errcode(db->sql) & 0xff;
	if (ec == SQLITE_BUSY || ec == SQLITE_LOCKED)
		return bc_err_set(err, BC_EBUSY, "%s: database busy (another bathychron is writing to it); try again when it has finished", db->path);
	if (ec == SQLITE_NOTADB)
		return bc_err_set(err, BC_EFOREIGN, "%s: not a bathychron database (not an SQLite file)", db->path);
	if (ec == SQLITE_CORRUPT)
		return bc_err_set(err, BC_EIO, "%s: %s: the database file is damaged (%s); restore it from a copy",
			db->path, context, sqlite3_errmsg(db->sql));
	if (ec == SQLITE_READONLY || ec == SQLITE_CANTOPEN || ec == SQLITE_IOERR || ec == SQLITE_FULL)
		return bc_err_set(err, BC_EIO, "%s: %s: %s", db->path, context, sqlite3_errmsg(db->sql));
	return bc_err_set(err, BC_EDB, "%s: %s: %s", db->path, context, sqlite3_errmsg(db->sql));
}

int bc_db__exec(bc_db *db, const char *sql, bc_err *err)
{
	char *msg = NULL;
	if (sqlite3_exec(db->sql, sql, NULL, NULL, &msg) != SQLITE_OK) {
		sqlite3_free(msg);
		return bc_db__error(db, err, "running SQL");
	}
	return BC_OK;
}

int bc_db__prepare(bc_db *db, sqlite3_stmt **out, const char *sql, bc_err *err)
{
	if (sqlite3_prepare_v2(db->sql, sql, -1, out, NULL) != SQLITE_OK)
		return bc_db__error(db, err, "preparing SQL");
	return BC_OK;
}

static int param(sqlite3_stmt *st, const char *name)
{
	return sqlite3_bind_parameter_index(st, name);
}

int bc_db__bind_text(sqlite3_stmt *st, const char *name, const char *value)
{
	int i = param(st, name);
	if (i == 0)
		return BC_ERROR;
	return value ? sqlite3_bind_text(st, i, value, -1, SQLITE_TRANSIENT) : sqlite3_bind_null(st, i);
}

int bc_db__bind_double(sqlite3_stmt *st, const char *name, double value)
{
	int i = param(st, name);
	if (i == 0)
		return BC_ERROR;
	return isnan(value) ? sqlite3_bind_null(st, i) : sqlite3_bind_double(st, i, value);
}

int bc_db__bind_int64(sqlite3_stmt *st, const char *name, int64_t value)
{
	int i = param(st, name);
	if (i == 0)
		return BC_ERROR;
	return sqlite3_bind_int64(st, i, value);
}

int bc_db__begin(bc_db *db, bc_err *err) { return bc_db__exec(db, "BEGIN IMMEDIATE", err); }
int bc_db__try_begin(bc_db *db)
{
	sqlite3_busy_timeout(db->sql, 0);
	int rc = sqlite3_exec(db->sql, "BEGIN IMMEDIATE", NULL, NULL, NULL) == SQLITE_OK ? BC_OK : BC_EBUSY;
	sqlite3_busy_timeout(db->sql, BUSY_TIMEOUT_MS);
	return rc;
}
int bc_db__commit(bc_db *db, bc_err *err) { return bc_db__exec(db, "COMMIT", err); }
void bc_db__rollback(bc_db *db)
{
	if (!sqlite3_get_autocommit(db->sql))
		sqlite3_exec(db->sql, "ROLLBACK", NULL, NULL, NULL);
}

/* Migrations are the compiled-in files schema/NNN_name.sql; NNN is the
 * schema version a file brings the database to. */
static int migration_version(const bc_resource *r)
{
	const char *base = r->name + strlen("schema/");
	return atoi(base);
}

int bc_db_schema_version(void)
{
	const bc_resource *rs[256];
	size_t n = bc__resources("schema/", rs, 256);
	int v = 0;
	for (size_t i = 0; i < n && i < 256; i++)
		if (migration_version(rs[i]) > v)
			v = migration_version(rs[i]);
	return v;
}

static int insert_srs(bc_db *db, bc_err *err)
{
	char *wkt = NULL;
	sqlite3_stmt *st = NULL;
	int rc = bc_geo__srs_definition(4326, &wkt, err);
	if (rc)
		return rc;
	rc = bc_db__prepare(db, &st,
		"INSERT INTO gpkg_spatial_ref_sys (srs_name, srs_id, organization, organization_coordsys_id, definition, description) VALUES "
		"('WGS 84 geodetic', 4326, 'EPSG', 4326, :wkt, 'longitude/latitude coordinates in decimal degrees on the WGS 84 spheroid'),"
		"('Undefined Cartesian SRS', -1, 'NONE', -1, 'undefined', 'undefined Cartesian coordinate reference system'),"
		"('Undefined geographic SRS', 0, 'NONE', 0, 'undefined', 'undefined geographic coordinate reference system')",
		err);
	if (rc == BC_OK) {
		bc_db__bind_text(st, ":wkt", wkt);
		if (sqlite3_step(st) != SQLITE_DONE)
			rc = bc_db__error(db, err, "inserting the GeoPackage spatial reference systems");
	}
	sqlite3_finalize(st);
	free(wkt);
	return rc;
}

static int set_version(bc_db *db, int version, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(db, &st,
		"INSERT INTO bathychron_meta(key, value) VALUES ('schema_version', :v) "
		"ON CONFLICT(key) DO UPDATE SET value = excluded.value", err);
	if (rc)
		return rc;
	char v[32];
	snprintf(v, sizeof v, "%d", version);
	bc_db__bind_text(st, ":v", v);
	if (sqlite3_step(st) != SQLITE_DONE)
		rc = bc_db__error(db, err, "recording the schema version");
	sqlite3_finalize(st);
	return rc;
}

/* Applies every migration newer than `from`, in order. The caller holds
 * the transaction. */
static int migrate(bc_db *db, int from, bc_err *err)
{
	const bc_resource *rs[256];
	size_t n = bc__resources("schema/", rs, 256);
	int rc = BC_OK;
	for (size_t i = 0; rc == BC_OK && i < n && i < 256; i++) {
		int v = migration_version(rs[i]);
		if (v <= from)
			continue;
		if (v == 2 && from < 2) {
			/* 002 registers the layer, which needs the EPSG:4326 row first. */
			rc = insert_srs(db, err);
			if (rc)
				break;
		}
		char *msg = NULL;
		if (sqlite3_exec(db->sql, rs[i]->data, NULL, NULL, &msg) != SQLITE_OK) {
			rc = bc_err_set(err, BC_EDB, "%s: applying %s: %s", db->path, rs[i]->name, msg ? msg : "error");
			sqlite3_free(msg);
			break;
		}
		rc = set_version(db, v, err);
	}
	return rc;
}

static int connect(bc_db **out, const char *path, int flags, bc_err *err)
{
	*out = NULL;
	bc_db *db = bc__calloc(1, sizeof *db);
	if (!db || !(db->path = bc__strdup(path))) {
		free(db);
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	}
	if (sqlite3_open_v2(path, &db->sql, flags, NULL) != SQLITE_OK) {
		int rc = bc_err_set(err, BC_EIO, "%s: cannot open: %s", path, db->sql ? sqlite3_errmsg(db->sql) : "out of memory");
		bc_db_close(db);
		return rc;
	}
	sqlite3_busy_timeout(db->sql, BUSY_TIMEOUT_MS);
	sqlite3_extended_result_codes(db->sql, 1);
	*out = db;
	return BC_OK;
}

int bc_db_create(bc_db **out, const char *path, bc_err *err)
{
	*out = NULL;
	/* O_EXCL: never overwrite, even if another process races us. */
	int fd = open(path, O_WRONLY | O_CREAT | O_EXCL, 0644);
	if (fd < 0) {
		if (errno == EEXIST)
			return bc_err_set(err, BC_EEXISTS, "%s: already exists; init never overwrites a file (choose a new name, or delete it yourself)", path);
		return bc_err_set(err, BC_EIO, "%s: cannot create: %s", path, strerror(errno));
	}
	close(fd);
	bc_db *db = NULL;
	int rc = connect(&db, path, SQLITE_OPEN_READWRITE | SQLITE_OPEN_NOMUTEX, err);
	if (rc == BC_OK)
		rc = bc_db__exec(db, "PRAGMA foreign_keys = ON", err);
	if (rc == BC_OK) {
		char pragmas[128];
		snprintf(pragmas, sizeof pragmas, "PRAGMA application_id = %d; PRAGMA user_version = %d",
			GPKG_APPLICATION_ID, GPKG_USER_VERSION);
		rc = bc_db__exec(db, pragmas, err);
	}
	if (rc == BC_OK)
		rc = bc_db__begin(db, err);
	if (rc == BC_OK)
		rc = migrate(db, 0, err);
	if (rc == BC_OK)
		rc = bc_timescale__seed(db, err);
	if (rc == BC_OK)
		rc = bc_vocab__seed(db, err);
	if (rc == BC_OK)
		rc = bc_db__commit(db, err);
	if (rc) {
		if (db)
			bc_db__rollback(db);
		bc_db_close(db);
		unlink(path);
		return rc;
	}
	*out = db;
	return BC_OK;
}

/* Reads our schema version; 0 with BC_EFOREIGN filled if the file is not ours. */
static int read_version(bc_db *db, int *version, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	*version = 0;
	if (sqlite3_prepare_v2(db->sql, "PRAGMA application_id", -1, &st, NULL) != SQLITE_OK)
		return bc_db__error(db, err, "reading the file header");
	int hstep = sqlite3_step(st);
	int app = hstep == SQLITE_ROW ? sqlite3_column_int(st, 0) : 0;
	if (hstep != SQLITE_ROW) { /* not an SQLite file, or busy: say which */
		int rc = bc_db__error(db, err, "reading the file header");
		sqlite3_finalize(st);
		return rc;
	}
	sqlite3_finalize(st);
	st = NULL;
	if (app != GPKG_APPLICATION_ID)
		return bc_err_set(err, BC_EFOREIGN, "%s: not a bathychron database (no GeoPackage application id); refusing to touch it", db->path);
	if (sqlite3_prepare_v2(db->sql, "SELECT value FROM bathychron_meta WHERE key = 'schema_version'", -1, &st, NULL) != SQLITE_OK) {
		int ec = sqlite3_errcode(db->sql);
		sqlite3_finalize(st);
		if (ec == SQLITE_BUSY || ec == SQLITE_LOCKED)
			return bc_db__error(db, err, "reading the schema version");
		return bc_err_set(err, BC_EFOREIGN, "%s: a GeoPackage, but not a bathychron database (no bathychron_meta table); refusing to touch it", db->path);
	}
	int step = sqlite3_step(st);
	if (step == SQLITE_ROW)
		*version = atoi((const char *)sqlite3_column_text(st, 0));
	sqlite3_finalize(st);
	if (step != SQLITE_ROW && step != SQLITE_DONE)
		return bc_db__error(db, err, "reading the schema version");
	if (*version <= 0)
		return bc_err_set(err, BC_EFOREIGN, "%s: bathychron_meta has no schema version; refusing to touch it", db->path);
	return BC_OK;
}

int bc_db_open(bc_db **out, const char *path, bc_err *err)
{
	*out = NULL;
	struct stat sb;
	if (stat(path, &sb) != 0)
		return bc_err_set(err, BC_ENOTFOUND, "%s: no such database (create one with: bathychron init %s)", path, path);
	if (!S_ISREG(sb.st_mode))
		return bc_err_set(err, BC_EFOREIGN, "%s: not a regular file", path);
	bc_db *db = NULL;
	int rc = connect(&db, path, SQLITE_OPEN_READWRITE | SQLITE_OPEN_NOMUTEX, err);
	int version = 0;
	if (rc == BC_OK)
		rc = read_version(db, &version, err);
	if (rc == BC_OK && version > bc_db_schema_version())
		rc = bc_err_set(err, BC_EFOREIGN, "%s: schema version %d is newer than this bathychron (%s) understands (%d); use a newer bathychron",
			path, version, BC_VERSION, bc_db_schema_version());
	if (rc == BC_OK)
		rc = bc_db__exec(db, "PRAGMA foreign_keys = ON", err);
	if (rc == BC_OK && version < bc_db_schema_version()) {
		rc = bc_db__begin(db, err);
		if (rc == BC_OK)
			rc = read_version(db, &version, err); /* another process may have migrated it */
		if (rc == BC_OK)
			rc = migrate(db, version, err);
		if (rc == BC_OK)
			rc = bc_db__commit(db, err);
		if (rc)
			bc_db__rollback(db);
	}
	if (rc) {
		bc_db_close(db);
		return rc;
	}
	*out = db;
	return BC_OK;
}

void bc_db_close(bc_db *db)
{
	if (!db)
		return;
	sqlite3_close_v2(db->sql);
	free(db->path);
	free(db);
}
