/*
 * shift_select.c - the selection that shift and ranges share (doc/shift.md,
 * "Selection" and "Speed"): group, taxon, preservation and region, in
 * occurrence_pk order, with the data hash of what passed, and the name at a
 * taxonomic rank when asked. It reads the column snapshot (snapshot.h)
 * when there is one, else one SELECT of the table; both select the same
 * rows with the same names.
 */
#include "shift.h"

#include "db.h"
#include "snapshot.h"

#include <math.h>
#include <nettle/sha2.h>
#include <stdlib.h>
#include <string.h>

/* The selection shift and ranges share (doc/shift.md, "Selection"): one
 * SELECT of the columns they use and the name at a taxonomic rank when
 * asked (:rank NULL: none); with --region also the locality's coordinates
 * (the join costs a fifth of the time of a plain table, so only then). */
#define SELECT_HEAD \
	"SELECT o.occurrence_pk, o.older_ma, o.younger_ma, o.min_depth_m, o.max_depth_m," \
	" o.reference_key, o.locality_id, o.articulation,"
#define SELECT_TAIL \
	" CASE WHEN :rank IS NULL THEN NULL WHEN :rank = 'family' THEN o.family WHEN :rank = 'order' THEN o.\"order\"" \
	"  WHEN :rank = 'species' THEN o.scientific_name" \
	"  WHEN trim(o.genus) <> '' THEN o.genus" \
	"  WHEN instr(trim(o.scientific_name), ' ') > 0 THEN substr(trim(o.scientific_name), 1, instr(trim(o.scientific_name), ' ') - 1)" \
	"  ELSE o.scientific_name END"
#define SELECT_WHERE \
	" WHERE (:grp IS NULL OR o.taxon_group = :grp COLLATE NOCASE)" \
	" AND (:taxon IS NULL OR o.scientific_name = :taxon COLLATE NOCASE OR o.genus = :taxon COLLATE NOCASE" \
	"  OR o.family = :taxon COLLATE NOCASE OR o.\"order\" = :taxon COLLATE NOCASE" \
	"  OR o.scientific_name LIKE :taxon_prefix ESCAPE '\\')" \
	" AND (:artic IS NULL OR o.articulation = :artic COLLATE NOCASE)" \
	" AND (:pres IS NULL OR o.preservation = :pres COLLATE NOCASE)" \
	" ORDER BY o.occurrence_pk"
static const char SQL_SELECT[] = SELECT_HEAD " NULL, NULL," SELECT_TAIL " FROM occurrences o" SELECT_WHERE;
static const char SQL_SELECT_REGION[] = SELECT_HEAD " l.longitude, l.latitude," SELECT_TAIL
	" FROM occurrences o LEFT JOIN localities l ON l.fid = o.locality_id" SELECT_WHERE;
static int oom(bc_err *err) { return bc_err_set(err, BC_ENOMEM, "out of memory"); }

static int in_region(const double r[4], double lon, double lat)
{
	if (lat < r[1] || lat > r[3])
		return 0;
	if (r[0] <= r[2])
		return lon >= r[0] && lon <= r[2];
	return lon >= r[0] || lon <= r[2]; /* the box crosses the antimeridian */
}

/* --region: 1 when the row stays; else counts why it left. */
static int region_keeps(const bc_shift_options *o, double lon, double lat, bc_shift__selected *out)
{
	if (!o->has_region)
		return 1;
	if (isnan(lon) || isnan(lat)) {
		out->n_no_coordinates++;
		return 0;
	}
	if (!in_region(o->region, lon, lat)) {
		out->n_outside_region++;
		return 0;
	}
	return 1;
}

/* The data hash covers every selected row (after --region) in
 * occurrence_pk order, as little-endian binary: pk int64, older, younger,
 * min depth, max depth as float64 (NULL = the quiet NaN 0x7ff8...0),
 * locality id int64 (-1 = none), then articulation and reference key as
 * uint32 length + UTF-8 bytes (ranges: then the name at the rank the same
 * way). doc/shift.md repeats this layout. */
/* The hash is fed through a buffer: a few calls per 64 KB instead of seven per row. */
typedef struct row_hash {
	struct sha256_ctx h;
	size_t n;
	uint8_t buf[1 << 16];
} row_hash;

static void hash_bytes(row_hash *rh, const void *p, size_t n)
{
	if (rh->n + n > sizeof rh->buf) {
		sha256_update(&rh->h, rh->n, rh->buf);
		rh->n = 0;
		if (n > sizeof rh->buf) {
			sha256_update(&rh->h, n, p);
			return;
		}
	}
	memcpy(rh->buf + rh->n, p, n);
	rh->n += n;
}

static void put_le64(row_hash *rh, uint64_t v)
{
	uint8_t b[8];
#if defined(__BYTE_ORDER__) && defined(__ORDER_LITTLE_ENDIAN__) && __BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__
	memcpy(b, &v, 8);
#else
	for (int i = 0; i < 8; i++)
		b[i] = (uint8_t)(v >> (8 * i));
#endif
	hash_bytes(rh, b, 8);
}

static void put_str(row_hash *rh, const char *s)
{
	size_t n = strlen(s);
	uint8_t b[4] = {(uint8_t)n, (uint8_t)(n >> 8), (uint8_t)(n >> 16), (uint8_t)(n >> 24)};
	hash_bytes(rh, b, 4);
	hash_bytes(rh, s, n);
}

static void put_double(row_hash *rh, double v)
{
	uint64_t bits = 0x7ff8000000000000ULL; /* NULL (SQLite stores no NaN) */
	if (!isnan(v))
		memcpy(&bits, &v, sizeof bits);
	put_le64(rh, bits);
}

/* Hashes one selected row and hands it to the caller. */
static int emit_row(row_hash *rh, const bc_shift__row *r, bc_shift__row_fn fn, void *ctx, bc_err *err)
{
	put_le64(rh, (uint64_t)r->pk);
	put_double(rh, r->older);
	put_double(rh, r->younger);
	put_double(rh, r->dmin);
	put_double(rh, r->dmax);
	put_le64(rh, (uint64_t)r->loc);
	put_str(rh, r->art);
	put_str(rh, r->ref);
	if (r->name)
		put_str(rh, r->name);
	return fn(ctx, r, err);
}

static void hash_hex(row_hash *rh, char out[65])
{
	uint8_t d[SHA256_DIGEST_SIZE];
	sha256_update(&rh->h, rh->n, rh->buf);
	rh->n = 0;
	sha256_digest(&rh->h, sizeof d, d);
	for (int i = 0; i < SHA256_DIGEST_SIZE; i++)
		snprintf(out + 2 * i, 3, "%02x", d[i]);
}

/* ---- the selection read from the column snapshot (snapshot.h) ---------- */

enum { F_GROUP = 1, F_TAXON = 2, F_TAXON_PREFIX = 4, F_ARTIC = 8, F_PRES = 16 };

/* Each distinct string once against the selection, with SQLite's own
 * comparisons so both paths select the same rows: COLLATE NOCASE is
 * sqlite3_stricmp, and LIKE 'taxon %' a case-blind (ASCII) prefix followed
 * by a space. */
static uint8_t *string_flags(const bc_snapshot *sn, const bc_shift_options *o, const char *artic)
{
	size_t n;
	const char *const *str = bc_snapshot__strings(sn, &n);
	uint8_t *f = bc__calloc(n ? n : 1, 1);
	size_t tn = o->taxon ? strlen(o->taxon) : 0;
	for (size_t i = 0; f && i < n; i++) {
		const char *t = str[i];
		if (o->group && sqlite3_stricmp(t, o->group) == 0)
			f[i] |= F_GROUP;
		if (o->taxon && sqlite3_stricmp(t, o->taxon) == 0)
			f[i] |= F_TAXON;
		if (o->taxon && sqlite3_strnicmp(t, o->taxon, (int)tn) == 0 && t[tn] == ' ')
			f[i] |= F_TAXON_PREFIX;
		if (artic && sqlite3_stricmp(t, artic) == 0)
			f[i] |= F_ARTIC;
		if (!artic && o->preservation && sqlite3_stricmp(t, o->preservation) == 0)
			f[i] |= F_PRES;
	}
	return f;
}

/* Locality coordinates by fid for --region: sorted fids, NaN when none. */
typedef struct fid_coords {
	int64_t *fid;
	double *lon, *lat;
	size_t n;
} fid_coords;

static int fid_coords_load(fid_coords *fc, bc_db *db, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	size_t cap = 0;
	int rc = bc_db__prepare(db, &st, "SELECT fid, longitude, latitude FROM localities ORDER BY fid", err), step = SQLITE_DONE;
	while (rc == BC_OK && (step = sqlite3_step(st)) == SQLITE_ROW) {
		size_t c = cap;
		int64_t *f = bc__grow(fc->fid, fc->n, &c, sizeof *f, 1024);
		double *x = f ? bc__realloc(fc->lon, c * sizeof *x) : NULL;
		double *y = x ? bc__realloc(fc->lat, c * sizeof *y) : NULL;
		fc->fid = f ? f : fc->fid;
		fc->lon = x ? x : fc->lon;
		fc->lat = y ? y : fc->lat;
		if (!y) {
			rc = oom(err);
			break;
		}
		cap = c;
		fc->fid[fc->n] = sqlite3_column_int64(st, 0);
		fc->lon[fc->n] = sqlite3_column_type(st, 1) == SQLITE_NULL ? NAN : sqlite3_column_double(st, 1);
		fc->lat[fc->n] = sqlite3_column_type(st, 2) == SQLITE_NULL ? NAN : sqlite3_column_double(st, 2);
		fc->n++;
	}
	if (rc == BC_OK && step != SQLITE_DONE)
		rc = bc_db__error(db, err, "reading locality coordinates");
	sqlite3_finalize(st);
	return rc;
}

static void fid_coords_find(const fid_coords *fc, int64_t fid, double *lon, double *lat)
{
	size_t lo = 0, hi = fc->n;
	while (lo < hi) {
		size_t mid = (lo + hi) / 2;
		if (fc->fid[mid] < fid)
			lo = mid + 1;
		else
			hi = mid;
	}
	int hit = fid >= 0 && lo < fc->n && fc->fid[lo] == fid;
	*lon = hit ? fc->lon[lo] : NAN;
	*lat = hit ? fc->lat[lo] : NAN;
}

/* The name at a rank from the snapshot, as SQL_SELECT's CASE gives it:
 * family, order or the scientific name as stored; for a genus the genus
 * when it has more than spaces, else the first word of the scientific
 * name (spaces trimmed) when it has two, else the name as stored. Each
 * distinct string is looked at once. */
enum { RANK_GENUS, RANK_SPECIES, RANK_FAMILY, RANK_ORDER };

typedef struct rank_namer {
	int kind;
	const char *const *str;
	size_t n;
	uint8_t *has_text;   /* per string: 0 not yet, 1 more than spaces, 2 only spaces */
	char **first_word;   /* per string: the genus taken from a scientific name */
} rank_namer;

static int rank_kind(const char *rank)
{
	return strcmp(rank, "family") == 0 ? RANK_FAMILY : strcmp(rank, "order") == 0 ? RANK_ORDER
		: strcmp(rank, "species") == 0 ? RANK_SPECIES : RANK_GENUS;
}

static const char *rank_name(rank_namer *rn, const uint32_t *const *t, size_t i)
{
	if (rn->kind == RANK_SPECIES)
		return rn->str[t[BC_SNAP_NAME][i]];
	if (rn->kind == RANK_FAMILY)
		return rn->str[t[BC_SNAP_FAMILY][i]];
	if (rn->kind == RANK_ORDER)
		return rn->str[t[BC_SNAP_ORDER][i]];
	uint32_t g = t[BC_SNAP_GENUS][i], sci = t[BC_SNAP_NAME][i];
	if (!rn->has_text[g])
		rn->has_text[g] = (uint8_t)(rn->str[g][strspn(rn->str[g], " ")] ? 1 : 2);
	if (rn->has_text[g] == 1)
		return rn->str[g];
	if (!rn->first_word[sci]) {
		const char *a = rn->str[sci] + strspn(rn->str[sci], " ");
		size_t len = strlen(a);
		while (len && a[len - 1] == ' ')
			len--;
		const char *sp = memchr(a, ' ', len);
		rn->first_word[sci] = sp ? bc__strndup(a, (size_t)(sp - a)) : bc__strdup(rn->str[sci]);
		if (!rn->first_word[sci])
			return NULL;
	}
	return rn->first_word[sci];
}

static void rank_namer_free(rank_namer *rn)
{
	for (size_t i = 0; rn->first_word && i < rn->n; i++)
		free(rn->first_word[i]);
	free(rn->first_word);
	free(rn->has_text);
}

static int select_snapshot(bc_snapshot *sn, bc_db *db, const bc_shift_options *o, const char *rank, bc_shift__row_fn fn,
			   void *ctx, bc_shift__selected *out, row_hash *rh, bc_err *err)
{
	int artic = bc_shift__art_class(o->preservation);
	uint8_t *f = string_flags(sn, o, artic >= 0 ? bc_shift__art_name(artic) : NULL);
	size_t n_str;
	const char *const *str = bc_snapshot__strings(sn, &n_str);
	fid_coords fc = {0};
	rank_namer rn = {rank ? rank_kind(rank) : 0, str, n_str, NULL, NULL};
	int rc = f ? BC_OK : oom(err), more = 0;
	if (rc == BC_OK && rank && (!(rn.has_text = bc__calloc(n_str ? n_str : 1, 1)) ||
				    !(rn.first_word = bc__calloc(n_str ? n_str : 1, sizeof *rn.first_word))))
		rc = oom(err);
	if (rc == BC_OK && o->has_region)
		rc = fid_coords_load(&fc, db, err);
	bc_snapshot_rows c;
	while (rc == BC_OK && (more = bc_snapshot__next(sn, &c, err)) == 1) {
		const uint32_t *const *t = c.text;
		for (size_t i = 0; rc == BC_OK && i < c.n; i++) {
			if (o->group && !(f[t[BC_SNAP_GROUP][i]] & F_GROUP))
				continue;
			if (o->taxon && !((f[t[BC_SNAP_NAME][i]] & (F_TAXON | F_TAXON_PREFIX)) || (f[t[BC_SNAP_GENUS][i]] & F_TAXON) ||
					  (f[t[BC_SNAP_FAMILY][i]] & F_TAXON) || (f[t[BC_SNAP_ORDER][i]] & F_TAXON)))
				continue;
			if (artic >= 0 && !(f[t[BC_SNAP_ARTICULATION][i]] & F_ARTIC))
				continue;
			if (artic < 0 && o->preservation && !(f[t[BC_SNAP_PRESERVATION][i]] & F_PRES))
				continue;
			out->n_selected++;
			bc_shift__row r;
			r.lon = r.lat = NAN;
			if (o->has_region)
				fid_coords_find(&fc, c.loc[i], &r.lon, &r.lat);
			if (!region_keeps(o, r.lon, r.lat, out))
				continue;
			r.pk = c.pk[i];
			r.older = c.older[i];
			r.younger = c.younger[i];
			r.dmin = c.dmin[i];
			r.dmax = c.dmax[i];
			r.loc = c.loc[i];
			r.art_id = t[BC_SNAP_ARTICULATION][i];
			r.ref_id = t[BC_SNAP_REFERENCE][i];
			r.n_ids = n_str;
			r.art = str[r.art_id];
			r.ref = str[r.ref_id];
			r.name = NULL;
			if (rank && !(r.name = rank_name(&rn, t, i))) {
				rc = oom(err);
				break;
			}
			rc = emit_row(rh, &r, fn, ctx, err);
		}
	}
	if (rc == BC_OK && more < 0)
		rc = more;
	rank_namer_free(&rn);
	free(f);
	free(fc.fid);
	free(fc.lon);
	free(fc.lat);
	return rc;
}

/* The text columns the selection needs from the snapshot. */
static unsigned snapshot_want(const bc_shift_options *o, const char *rank)
{
	unsigned w = 0;
	if (rank) {
		int k = rank_kind(rank);
		w |= k == RANK_FAMILY ? BC_SNAP_BIT(BC_SNAP_FAMILY) : k == RANK_ORDER ? BC_SNAP_BIT(BC_SNAP_ORDER)
			: k == RANK_SPECIES ? BC_SNAP_BIT(BC_SNAP_NAME) : BC_SNAP_BIT(BC_SNAP_NAME) | BC_SNAP_BIT(BC_SNAP_GENUS);
	}
	if (o->group)
		w |= BC_SNAP_BIT(BC_SNAP_GROUP);
	if (o->taxon)
		w |= BC_SNAP_BIT(BC_SNAP_NAME) | BC_SNAP_BIT(BC_SNAP_GENUS) | BC_SNAP_BIT(BC_SNAP_FAMILY) | BC_SNAP_BIT(BC_SNAP_ORDER);
	if (o->preservation && bc_shift__art_class(o->preservation) < 0)
		w |= BC_SNAP_BIT(BC_SNAP_PRESERVATION);
	return w;
}

int bc_shift__select(bc_db *db, const bc_shift_options *o, const char *rank, bc_shift__row_fn fn, void *ctx,
		     bc_shift__selected *out, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	char *prefix = NULL;
	row_hash *rh = bc__malloc(sizeof *rh);
	memset(out, 0, sizeof *out);
	if (!rh)
		return oom(err);
	sha256_init(&rh->h);
	rh->n = 0;
	/* From the column snapshot when there is one. */
	bc_snapshot *sn = NULL;
	int rc = bc_snapshot__load(&sn, db, snapshot_want(o, rank), err);
	if (rc == BC_OK && sn) {
		rc = select_snapshot(sn, db, o, rank, fn, ctx, out, rh, err);
		bc_snapshot__free(sn);
		if (rc == BC_OK)
			hash_hex(rh, out->data_sha256);
		free(rh);
		return rc;
	}
	if (rc == BC_OK)
		rc = bc_db__prepare(db, &st, o->has_region ? SQL_SELECT_REGION : SQL_SELECT, err);
	if (rc) {
		free(rh);
		return rc;
	}
	int artic = bc_shift__art_class(o->preservation);
	if (o->taxon) {
		/* "Genus" also matches "Genus species ..." in scientific_name. */
		bc_buf b = {0};
		int bad = 0;
		for (const char *p = o->taxon; *p && !bad; p++) {
			if (*p == '%' || *p == '_' || *p == '\\')
				bad |= bc__buf_puts(&b, "\\");
			bad |= bc__buf_append(&b, p, 1);
		}
		bad |= bc__buf_puts(&b, " %");
		if (bad) {
			bc__buf_free(&b);
			rc = oom(err);
			goto done;
		}
		prefix = b.data;
	}
	bc_db__bind_text(st, ":rank", rank);
	bc_db__bind_text(st, ":grp", o->group);
	bc_db__bind_text(st, ":taxon", o->taxon);
	bc_db__bind_text(st, ":taxon_prefix", prefix);
	bc_db__bind_text(st, ":artic", artic >= 0 ? bc_shift__art_name(artic) : NULL);
	bc_db__bind_text(st, ":pres", artic >= 0 ? NULL : o->preservation);
	int step;
	while ((step = sqlite3_step(st)) == SQLITE_ROW) {
		out->n_selected++;
		/* Each column is read once, in order. */
		bc_shift__row r;
		r.n_ids = 0;
		r.lon = sqlite3_column_type(st, 8) == SQLITE_NULL ? NAN : sqlite3_column_double(st, 8);
		r.lat = sqlite3_column_type(st, 9) == SQLITE_NULL ? NAN : sqlite3_column_double(st, 9);
		if (!region_keeps(o, r.lon, r.lat, out))
			continue;
		r.pk = sqlite3_column_int64(st, 0);
		double *v[4] = {&r.older, &r.younger, &r.dmin, &r.dmax};
		for (int c = 0; c < 4; c++)
			*v[c] = sqlite3_column_type(st, c + 1) == SQLITE_NULL ? NAN : sqlite3_column_double(st, c + 1);
		r.ref = (const char *)sqlite3_column_text(st, 5);
		r.loc = sqlite3_column_type(st, 6) == SQLITE_NULL ? -1 : sqlite3_column_int64(st, 6);
		r.art = (const char *)sqlite3_column_text(st, 7);
		r.name = rank ? (const char *)sqlite3_column_text(st, 10) : NULL;
		r.ref = r.ref ? r.ref : "";
		r.art = r.art ? r.art : "";
		if (rank && !r.name)
			r.name = "";
		if ((rc = emit_row(rh, &r, fn, ctx, err)) != BC_OK)
			goto done;
	}
	if (step != SQLITE_DONE) {
		rc = bc_db__error(db, err, "reading occurrences");
		goto done;
	}
	hash_hex(rh, out->data_sha256);
done:
	sqlite3_finalize(st);
	free(prefix);
	free(rh);
	return rc;
}
