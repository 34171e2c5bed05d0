/*
 * dwca_entries.c - reading the files of a Darwin Core Archive, from a zip
 * or an unpacked folder: safe relative paths only (no absolute path, "..",
 * backslash, drive letter, URL or symbolic link), every zip entry checked
 * before anything is read, and the size limits (zip-bomb guards) enforced
 * on declared and actual sizes. Each file read is added to the archive's
 * SHA-256.
 */
#include "dwca_impl.h"

#include <ctype.h>
#include <errno.h>
#include <nettle/sha2.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <zip.h>

/* ------------------------------------------------------------------ */
/* Paths and entries.                                                  */
/* ------------------------------------------------------------------ */

/* NULL when `p` is a safe relative path inside the archive, else why not. */
const char *bc_dwca__path_problem(const char *p)
{
	if (!*p)
		return "empty path";
	if (strstr(p, "://") || strncmp(p, "file:", 5) == 0)
		return "a URL (locations on the network or elsewhere are never fetched)";
	if (p[0] == '/')
		return "an absolute path";
	if (strchr(p, '\\'))
		return "a backslash in the path";
	if (isalpha((unsigned char)p[0]) && p[1] == ':')
		return "a drive letter";
	const char *s = p;
	while (*s) {
		const char *e = strchr(s, '/');
		size_t n = e ? (size_t)(e - s) : strlen(s);
		if (n == 2 && s[0] == '.' && s[1] == '.')
			return "'..' leaves the archive folder";
		if (!e)
			break;
		s = e + 1;
	}
	return NULL;
}

static int limit_error(bc_dwca *a, const char *entry, const char *what, uint64_t size, uint64_t limit, bc_err *err)
{
	return bc_err_set(err, BC_EINVALID,
		"%s/%s: refused: %s %llu bytes is over the limit of %llu bytes (possible zip bomb); nothing was imported",
		a->name, entry, what, (unsigned long long)size, (unsigned long long)limit);
}

/* Reads one file of the archive (whole) into memory, enforcing limits. */
int bc_dwca__read_entry(bc_dwca *a, const char *loc, uint64_t limit, char **out, size_t *len, bc_err *err)
{
	*out = NULL;
	*len = 0;
	const char *why = bc_dwca__path_problem(loc);
	if (why)
		return bc_err_set(err, BC_EINVALID, "%s/meta.xml: location '%s': refused: %s", a->name, loc, why);
	bc_buf b = {0};
	int rc = BC_OK;
	if (a->zip) {
		bc_buf full = {0};
		if (bc__buf_printf(&full, "%s%s", a->prefix, loc))
			return bc_dwca__oom(err);
		zip_int64_t idx = zip_name_locate(a->zip, full.data, 0);
		bc__buf_free(&full);
		if (idx < 0)
			return bc_err_set(err, BC_EINVALID, "%s: file '%s' named in meta.xml is not in the archive", a->name, loc);
		zip_stat_t st;
		zip_stat_init(&st);
		if (zip_stat_index(a->zip, (zip_uint64_t)idx, 0, &st) != 0)
			return bc_err_set(err, BC_EIO, "%s/%s: %s", a->name, loc, zip_strerror(a->zip));
		zip_file_t *zf = zip_fopen_index(a->zip, (zip_uint64_t)idx, 0);
		if (!zf)
			return bc_err_set(err, BC_EINVALID, "%s/%s: cannot read: %s", a->name, loc, zip_strerror(a->zip));
		char block[65536];
		zip_int64_t n;
		while ((n = zip_fread(zf, block, sizeof block)) > 0) {
			uint64_t got = (uint64_t)b.len + (uint64_t)n;
			if (got > limit) {
				rc = limit_error(a, loc, "actual uncompressed size (read so far)", got, limit, err);
				break;
			}
			if (a->total + got > a->lim.max_total) {
				rc = limit_error(a, loc, "uncompressed size of the archive so far", a->total + got, a->lim.max_total, err);
				break;
			}
			if ((st.valid & ZIP_STAT_COMP_SIZE) && got > a->lim.ratio_floor &&
				(double)got > a->lim.max_ratio * (double)(st.comp_size ? st.comp_size : 1)) {
				rc = bc_err_set(err, BC_EINVALID,
					"%s/%s: refused: compression ratio over %.0f:1 (possible zip bomb); nothing was imported",
					a->name, loc, a->lim.max_ratio);
				break;
			}
			if (bc__buf_append(&b, block, (size_t)n)) {
				rc = bc_dwca__oom(err);
				break;
			}
		}
		if (!rc && n < 0)
			rc = bc_err_set(err, BC_EINVALID, "%s/%s: cannot read: %s", a->name, loc, zip_file_strerror(zf));
		zip_fclose(zf);
	} else {
		bc_buf full = {0};
		if (bc__buf_printf(&full, "%s/%s", a->root, loc))
			return bc_dwca__oom(err);
		char *real = realpath(full.data, NULL);
		bc__buf_free(&full);
		if (!real)
			return bc_err_set(err, errno == ENOENT ? BC_EINVALID : BC_EIO, "%s/%s: %s", a->name, loc,
				errno == ENOENT ? "file named in meta.xml is missing" : strerror(errno));
		size_t rl = strlen(a->root);
		if (strncmp(real, a->root, rl) != 0 || real[rl] != '/') {
			free(real);
			return bc_err_set(err, BC_EINVALID, "%s/%s: refused: a symbolic link leads out of the archive folder", a->name, loc);
		}
		struct stat sb;
		FILE *fp = fopen(real, "rb");
		free(real);
		if (!fp)
			return bc_err_set(err, BC_EIO, "%s/%s: %s", a->name, loc, strerror(errno));
		if (fstat(fileno(fp), &sb) != 0 || !S_ISREG(sb.st_mode)) {
			fclose(fp);
			return bc_err_set(err, BC_EINVALID, "%s/%s: not a regular file", a->name, loc);
		}
		if ((uint64_t)sb.st_size > limit) {
			fclose(fp);
			return limit_error(a, loc, "size", (uint64_t)sb.st_size, limit, err);
		}
		if (a->total + (uint64_t)sb.st_size > a->lim.max_total) {
			fclose(fp);
			return limit_error(a, loc, "size of the archive so far", a->total + (uint64_t)sb.st_size, a->lim.max_total, err);
		}
		char block[65536];
		size_t n;
		while ((n = fread(block, 1, sizeof block, fp)) > 0) {
			if ((uint64_t)b.len + n > limit) {
				rc = limit_error(a, loc, "size", (uint64_t)b.len + n, limit, err);
				break;
			}
			if (bc__buf_append(&b, block, n)) {
				rc = bc_dwca__oom(err);
				break;
			}
		}
		if (!rc && ferror(fp))
			rc = bc_err_set(err, BC_EIO, "%s/%s: read error", a->name, loc);
		fclose(fp);
	}
	if (!rc && !b.data && bc__buf_append(&b, "", 0))
		rc = bc_dwca__oom(err);
	if (rc) {
		bc__buf_free(&b);
		return rc;
	}
	a->total += b.len;
	sha256_update(&a->sha, strlen(loc) + 1, (const uint8_t *)loc);
	sha256_update(&a->sha, b.len, (const uint8_t *)b.data);
	*out = b.data;
	*len = b.len;
	return BC_OK;
}

/* 1 when the archive has the file `loc`, 0 when not, BC_ENOMEM. */
int bc_dwca__has_entry(bc_dwca *a, const char *loc)
{
	bc_buf full = {0};
	int r;
	if (a->zip) {
		if (bc__buf_printf(&full, "%s%s", a->prefix, loc))
			return BC_ENOMEM;
		r = zip_name_locate(a->zip, full.data, 0) >= 0;
	} else {
		struct stat sb;
		if (bc__buf_printf(&full, "%s/%s", a->root, loc))
			return BC_ENOMEM;
		r = stat(full.data, &sb) == 0 && S_ISREG(sb.st_mode);
	}
	bc__buf_free(&full);
	return r;
}

/* Checks every entry of a zip before anything is read from it. */
int bc_dwca__check_zip(bc_dwca *a, bc_err *err)
{
	zip_int64_t n = zip_get_num_entries(a->zip, 0);
	if (n < 0)
		return bc_err_set(err, BC_EINVALID, "%s: not a readable zip file", a->name);
	if ((uint64_t)n > a->lim.max_entries)
		return bc_err_set(err, BC_EINVALID, "%s: refused: %lld entries, over the limit of %llu", a->name,
			(long long)n, (unsigned long long)a->lim.max_entries);
	uint64_t total = 0;
	int meta_root = 0, workbook = 0;
	const char *meta_sub = NULL;
	int n_sub = 0;
	for (zip_uint64_t i = 0; i < (zip_uint64_t)n; i++) {
		zip_stat_t st;
		zip_stat_init(&st);
		if (zip_stat_index(a->zip, i, 0, &st) != 0 || !(st.valid & ZIP_STAT_NAME))
			return bc_err_set(err, BC_EINVALID, "%s: entry %llu: unreadable directory record", a->name, (unsigned long long)i);
		const char *why = bc_dwca__path_problem(st.name);
		if (why)
			return bc_err_set(err, BC_EINVALID, "%s: entry '%s': refused: %s; nothing was imported", a->name, st.name, why);
		zip_uint8_t os;
		zip_uint32_t attr;
		if (zip_file_get_external_attributes(a->zip, i, 0, &os, &attr) == 0 && os == ZIP_OPSYS_UNIX &&
			((attr >> 16) & S_IFMT) == S_IFLNK)
			return bc_err_set(err, BC_EINVALID, "%s: entry '%s': refused: a symbolic link; nothing was imported", a->name, st.name);
		if (st.valid & ZIP_STAT_SIZE) {
			if (st.size > a->lim.max_entry)
				return limit_error(a, st.name, "declared uncompressed size", st.size, a->lim.max_entry, err);
			total += st.size;
			if ((st.valid & ZIP_STAT_COMP_SIZE) && st.size > a->lim.ratio_floor &&
				(double)st.size > a->lim.max_ratio * (double)(st.comp_size ? st.comp_size : 1))
				return bc_err_set(err, BC_EINVALID,
					"%s/%s: refused: declared compression ratio %.0f:1 is over %.0f:1 (possible zip bomb); nothing was imported",
					a->name, st.name, (double)st.size / (double)(st.comp_size ? st.comp_size : 1), a->lim.max_ratio);
		}
		if (strcmp(st.name, "[Content_Types].xml") == 0 || strcmp(st.name, "mimetype") == 0)
			workbook = 1; /* Office Open XML (.xlsx) or OpenDocument (.ods) container */
		if (strcmp(st.name, "meta.xml") == 0)
			meta_root = 1;
		else {
			const char *sl = strchr(st.name, '/');
			if (sl && strcmp(sl + 1, "meta.xml") == 0) {
				meta_sub = st.name;
				n_sub++;
			}
		}
	}
	if (total > a->lim.max_total)
		return limit_error(a, "*", "declared uncompressed size of all entries", total, a->lim.max_total, err);
	if (meta_root)
		a->prefix = bc__strdup("");
	else if (n_sub == 1)
		a->prefix = bc__strndup(meta_sub, strlen(meta_sub) - strlen("meta.xml"));
	else if (workbook)
		return bc_err_set(err, BC_EINVALID, "%s: a spreadsheet workbook (.xlsx or .ods), not CSV or a Darwin Core Archive; save the sheet as CSV (UTF-8) and import that", a->name);
	else
		return bc_err_set(err, BC_EINVALID, "%s: not a Darwin Core Archive: no meta.xml at the top of the zip", a->name);
	return a->prefix ? BC_OK : bc_dwca__oom(err);
}
