/*
 * geo.c - coordinates with PROJ: the only file that includes proj.h.
 * Verbatim coordinates in any CRS PROJ knows -> WGS 84 longitude/latitude,
 * degrees-minutes-seconds text, geodesics, GeoPackageBinary points.
 *
 * Accuracy: no transformation grids are downloaded (no network at run time),
 * so a datum change uses PROJ's best operation available offline, which may
 * be a Helmert or a "ballpark" transformation good to a few metres or, for
 * an unknown datum, worse. That is far below the uncertainty of nearly every
 * fossil locality, but it is not survey-grade.
 */
#include "geo.h"
#include "db.h"

#include <ctype.h>
#include <geodesic.h>
#include <math.h>
#include <proj.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#define GEO_CACHE_SIZE 8
/* Degrees a converted point may lie outside its CRS's area of use. */
#define GEO_AREA_MARGIN_DEG 1.0
#define GEO_MAX_TOKENS 64

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

/* ------------------------------------------------------------------ */
/* The PROJ context and its cache                                      */
/* ------------------------------------------------------------------ */

/* What to_wgs84 needs to know about a source CRS. */
typedef struct geo_crs_info {
	int geographic;    /* 1: text may be DMS */
	int north_first;   /* the authority's first axis is north/south */
	int has_area;
	double west, south, east, north;
	char name[160];
} geo_crs_info;

typedef struct geo_entry {
	char *key;         /* "from\x1fto" */
	PJ *op;            /* normalised for visualisation: GIS order in and out */
	geo_crs_info src;
} geo_entry;

struct bc_geo {
	PJ_CONTEXT *ctx;
	geo_entry cache[GEO_CACHE_SIZE];
	size_t next;       /* round-robin replacement */
};

int bc_geo__new(bc_geo **out, bc_err *err)
{
	*out = NULL;
	bc_geo *g = bc__calloc(1, sizeof *g);
	if (!g)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	g->ctx = proj_context_create();
	if (!g->ctx) {
		free(g);
		return bc_err_set(err, BC_ENOMEM, "PROJ: cannot create a context");
	}
	proj_log_level(g->ctx, PJ_LOG_NONE);
	/* Never reach for the network, whatever PROJ's configuration says. */
	proj_context_set_enable_network(g->ctx, 0);
	*out = g;
	return BC_OK;
}

void bc_geo__free(bc_geo *g)
{
	if (!g)
		return;
	for (size_t i = 0; i < GEO_CACHE_SIZE; i++) {
		free(g->cache[i].key);
		proj_destroy(g->cache[i].op);
	}
	proj_context_destroy(g->ctx);
	free(g);
}

static int geo_ieq(const char *a, const char *b)
{
	for (; *a && *b; a++, b++)
		if (tolower((unsigned char)*a) != tolower((unsigned char)*b))
			return 0;
	return *a == *b;
}

/* Lowercase letters and digits only, for comparing CRS names. */
static void geo_squash(const char *s, char *out, size_t cap)
{
	size_t n = 0;
	for (; *s && n + 1 < cap; s++)
		if (isalnum((unsigned char)*s))
			out[n++] = (char)tolower((unsigned char)*s);
	out[n] = '\0';
}

/* The text to hand PROJ for a CRS as users write it: WGS 84 spellings and
 * bare EPSG numbers become "EPSG:n"; a PROJ string gets +type=crs. */
static int geo_crs_text(const char *srs, char *out, size_t cap)
{
	while (isspace((unsigned char)*srs))
		srs++;
	size_t n = strlen(srs);
	while (n && isspace((unsigned char)srs[n - 1]))
		n--;
	if (n == 0 || n + 12 >= cap)
		return -1;
	char t[256];
	if (n >= sizeof t)
		n = sizeof t - 1;
	memcpy(t, srs, n);
	t[n] = '\0';
	char sq[256];
	geo_squash(t, sq, sizeof sq);
	if (!strcmp(sq, "wgs84") || !strcmp(sq, "wgs1984") || !strcmp(sq, "epsg4326")) {
		snprintf(out, cap, "EPSG:4326");
		return 0;
	}
	size_t digits = strspn(t, "0123456789");
	if (digits == n) {
		snprintf(out, cap, "EPSG:%s", t);
		return 0;
	}
	if ((t[0] == '+' || !strncmp(t, "proj=", 5)) && !strstr(t, "type=crs")) {
		snprintf(out, cap, "%s +type=crs", t);
		return 0;
	}
	snprintf(out, cap, "%s", t);
	return 0;
}

/* True when PROJ would read `t` as a code, URN, PROJ string, WKT or
 * PROJJSON rather than as a name to look up (which PROJ matches loosely). */
static int geo_is_structured(const char *t)
{
	if (t[0] == '+' || t[0] == '{' || !strncmp(t, "proj=", 5) || !strncmp(t, "urn:", 4) || !strncmp(t, "http", 4))
		return 1;
	const char *colon = strchr(t, ':');
	if (colon && colon > t && strspn(t, "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz_-") == (size_t)(colon - t))
		return 1;
	const char *br = strchr(t, '[');
	return br && br > t && br - t < 16; /* WKT: KEYWORD[... */
}

static void geo_proj_reason(bc_geo *g, char *buf, size_t cap)
{
	int e = proj_context_errno(g->ctx);
	const char *s = e ? proj_context_errno_string(g->ctx, e) : NULL;
	snprintf(buf, cap, "%s", s ? s : "unknown reason");
}

/* Creates the CRS object for `srs` and fills `info`. */
static int geo_crs_create(bc_geo *g, const char *srs, PJ **out, geo_crs_info *info, bc_err *err)
{
	*out = NULL;
	char text[512];
	if (geo_crs_text(srs, text, sizeof text) != 0)
		return bc_err_set(err, BC_EINVALID, "no coordinate reference system given (write one such as EPSG:4326 or EPSG:32616)");
	PJ *crs = proj_create(g->ctx, text);
	if (!crs) {
		char why[256];
		geo_proj_reason(g, why, sizeof why);
		return bc_err_set(err, BC_EINVALID, "'%s' is not a coordinate reference system PROJ knows (%s)", srs, why);
	}
	if (!proj_is_crs(crs)) {
		proj_destroy(crs);
		return bc_err_set(err, BC_EINVALID, "'%s' is a coordinate operation, not a coordinate reference system", srs);
	}
	const char *name = proj_get_name(crs);
	if (!geo_is_structured(text)) {
		/* A name: PROJ finds the closest one ("foo" gives Amersfoort),
		 * so insist on an exact match. */
		char a[256], b[256];
		geo_squash(text, a, sizeof a);
		geo_squash(name ? name : "", b, sizeof b);
		if (strcmp(a, b) != 0) {
			int rc = bc_err_set(err, BC_EINVALID, "'%s' is not the name of a coordinate reference system (PROJ's nearest is '%s'); write an authority code such as EPSG:4326",
				srs, name ? name : "?");
			proj_destroy(crs);
			return rc;
		}
	}
	memset(info, 0, sizeof *info);
	snprintf(info->name, sizeof info->name, "%s", name ? name : srs);
	PJ *horiz = NULL;
	PJ_TYPE type = proj_get_type(crs);
	if (type == PJ_TYPE_COMPOUND_CRS)
		horiz = proj_crs_get_sub_crs(g->ctx, crs, 0);
	else if (type == PJ_TYPE_BOUND_CRS)
		horiz = proj_get_source_crs(g->ctx, crs);
	const PJ *h = horiz ? horiz : crs;
	type = proj_get_type(h);
	info->geographic = type == PJ_TYPE_GEOGRAPHIC_2D_CRS || type == PJ_TYPE_GEOGRAPHIC_3D_CRS;
	PJ *cs = proj_crs_get_coordinate_system(g->ctx, h);
	const char *dir = NULL;
	if (cs && proj_cs_get_axis_info(g->ctx, cs, 0, NULL, NULL, &dir, NULL, NULL, NULL, NULL) && dir)
		info->north_first = geo_ieq(dir, "north") || geo_ieq(dir, "south");
	else
		info->north_first = info->geographic;
	proj_destroy(cs);
	proj_destroy(horiz);
	double w, s, e, n;
	if (proj_get_area_of_use(g->ctx, crs, &w, &s, &e, &n, NULL) && w > -1000 && s > -1000) {
		info->has_area = 1;
		info->west = w, info->south = s, info->east = e, info->north = n;
	}
	*out = crs;
	return BC_OK;
}

/* The cached operation from -> to, created on first use. Borrowed. */
static int geo_entry_get(bc_geo *g, const char *from, const char *to, geo_entry **out, bc_err *err)
{
	*out = NULL;
	size_t kl = strlen(from) + strlen(to) + 2;
	char *key = bc__malloc(kl);
	if (!key)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	snprintf(key, kl, "%s\x1f%s", from, to);
	for (size_t i = 0; i < GEO_CACHE_SIZE; i++) {
		if (g->cache[i].key && !strcmp(g->cache[i].key, key)) {
			free(key);
			*out = &g->cache[i];
			return BC_OK;
		}
	}
	PJ *src = NULL, *dst = NULL, *op = NULL;
	geo_crs_info si, di;
	int rc = geo_crs_create(g, from, &src, &si, err);
	if (rc == BC_OK)
		rc = geo_crs_create(g, to, &dst, &di, err);
	if (rc == BC_OK) {
		op = proj_create_crs_to_crs_from_pj(g->ctx, src, dst, NULL, NULL);
		if (op) {
			PJ *norm = proj_normalize_for_visualization(g->ctx, op);
			proj_destroy(op);
			op = norm;
		}
		if (!op) {
			char why[256];
			geo_proj_reason(g, why, sizeof why);
			rc = bc_err_set(err, BC_EINVALID, "PROJ knows no way from %s (%s) to %s (%s): %s", from, si.name, to, di.name, why);
		}
	}
	proj_destroy(src);
	proj_destroy(dst);
	if (rc) {
		free(key);
		return rc;
	}
	geo_entry *e = &g->cache[g->next];
	g->next = (g->next + 1) % GEO_CACHE_SIZE;
	free(e->key);
	proj_destroy(e->op);
	e->key = key;
	e->op = op;
	e->src = si;
	*out = e;
	return BC_OK;
}

static int geo_apply(bc_geo *g, geo_entry *e, const char *from, const char *to, double *x, double *y, bc_err *err)
{
	proj_errno_reset(e->op);
	PJ_COORD c = proj_trans(e->op, PJ_FWD, proj_coord(*x, *y, 0, HUGE_VAL));
	if (proj_errno(e->op) || !isfinite(c.xy.x) || !isfinite(c.xy.y) || c.xy.x == HUGE_VAL) {
		const char *why = proj_errno(e->op) ? proj_context_errno_string(g->ctx, proj_errno(e->op)) : "no result";
		proj_errno_reset(e->op);
		return bc_err_set(err, BC_EINVALID, "cannot convert (%.10g, %.10g) from %s (%s) to %s: %s", *x, *y, from, e->src.name, to, why ? why : "no result");
	}
	*x = c.xy.x;
	*y = c.xy.y;
	return BC_OK;
}

int bc_geo__transform(bc_geo *g, const char *from, const char *to, double *x, double *y, bc_err *err)
{
	geo_entry *e = NULL;
	int rc = geo_entry_get(g, from, to, &e, err);
	return rc ? rc : geo_apply(g, e, from, to, x, y, err);
}

/* ------------------------------------------------------------------ */
/* Degrees, minutes, seconds                                           */
/* ------------------------------------------------------------------ */

enum { TK_NUM, TK_UNIT, TK_HEMI, TK_SEP, TK_AXIS };
enum { U_NONE = 0, U_DEG = 1, U_MIN = 2, U_SEC = 3 };
enum { AX_NONE = 0, AX_LAT, AX_LON };

typedef struct dms_tok {
	int kind;
	double v;          /* TK_NUM: absolute value */
	int neg, frac;     /* TK_NUM: minus sign given; has decimals */
	int unit;          /* TK_UNIT */
	char hemi;         /* TK_HEMI: N S E W */
	int axis;          /* TK_AXIS */
	int glued;         /* no space before this token */
} dms_tok;

/* Units and marks as UTF-8: which unit each stands for. */
static const struct { const char *s; int unit; } dms_marks[] = {
	{"\xc2\xb0", U_DEG}, {"\xc2\xba", U_DEG}, {"\xcb\x9a", U_DEG},              /* ° º ˚ */
	{"\xe2\x80\xb2\xe2\x80\xb2", U_SEC}, {"\xe2\x80\x99\xe2\x80\x99", U_SEC},   /* ′′ ’’ */
	{"''", U_SEC}, {"\xe2\x80\xb3", U_SEC}, {"\xe2\x80\x9d", U_SEC},            /* '' ″ ” */
	{"\xe2\x80\x9c", U_SEC}, {"\xcb\x9d", U_SEC}, {"\"", U_SEC},                 /* “ ˝ " */
	{"\xe2\x80\xb2", U_MIN}, {"\xe2\x80\x99", U_MIN}, {"\xe2\x80\x98", U_MIN},   /* ′ ’ ‘ */
	{"\xc2\xb4", U_MIN}, {"'", U_MIN},                                           /* ´ ' */
};

static const struct { const char *w; int kind; int unit; char hemi; int axis; } dms_words[] = {
	{"d", TK_UNIT, U_DEG, 0, 0}, {"deg", TK_UNIT, U_DEG, 0, 0}, {"degs", TK_UNIT, U_DEG, 0, 0},
	{"degree", TK_UNIT, U_DEG, 0, 0}, {"degrees", TK_UNIT, U_DEG, 0, 0},
	{"m", TK_UNIT, U_MIN, 0, 0}, {"min", TK_UNIT, U_MIN, 0, 0}, {"mins", TK_UNIT, U_MIN, 0, 0},
	{"minute", TK_UNIT, U_MIN, 0, 0}, {"minutes", TK_UNIT, U_MIN, 0, 0},
	{"sec", TK_UNIT, U_SEC, 0, 0}, {"secs", TK_UNIT, U_SEC, 0, 0},
	{"second", TK_UNIT, U_SEC, 0, 0}, {"seconds", TK_UNIT, U_SEC, 0, 0},
	{"n", TK_HEMI, 0, 'N', 0}, {"north", TK_HEMI, 0, 'N', 0}, {"s", TK_HEMI, 0, 'S', 0},
	{"south", TK_HEMI, 0, 'S', 0}, {"e", TK_HEMI, 0, 'E', 0}, {"east", TK_HEMI, 0, 'E', 0},
	{"w", TK_HEMI, 0, 'W', 0}, {"west", TK_HEMI, 0, 'W', 0},
	{"lat", TK_AXIS, 0, 0, AX_LAT}, {"latitude", TK_AXIS, 0, 0, AX_LAT},
	{"lon", TK_AXIS, 0, 0, AX_LON}, {"long", TK_AXIS, 0, 0, AX_LON}, {"lng", TK_AXIS, 0, 0, AX_LON},
	{"longitude", TK_AXIS, 0, 0, AX_LON},
};

typedef struct dms_lex {
	dms_tok t[GEO_MAX_TOKENS];
	int n;
} dms_lex;

static int dms_push(dms_lex *lx, dms_tok tk, const char *text, bc_err *err)
{
	if (lx->n == GEO_MAX_TOKENS)
		return bc_err_set(err, BC_EINVALID, "too many parts for a coordinate pair in \"%s\"", text);
	lx->t[lx->n++] = tk;
	return BC_OK;
}

/* A letter directly after a number: 's' is seconds when that number
 * follows a minutes mark ("30m15s"), otherwise the southern hemisphere. */
static int dms_word(dms_lex *lx, const char *w, size_t len, int glued, const char *text, bc_err *err)
{
	char low[16];
	if (len < sizeof low) {
		for (size_t i = 0; i < len; i++)
			low[i] = (char)tolower((unsigned char)w[i]);
		low[len] = '\0';
		if (!strcmp(low, "s") && glued && lx->n >= 2 && lx->t[lx->n - 1].kind == TK_NUM &&
		    lx->t[lx->n - 2].kind == TK_UNIT && lx->t[lx->n - 2].unit == U_MIN)
			return dms_push(lx, (dms_tok){.kind = TK_UNIT, .unit = U_SEC, .glued = 1}, text, err);
		for (size_t i = 0; i < sizeof dms_words / sizeof dms_words[0]; i++) {
			if (!strcmp(low, dms_words[i].w)) {
				dms_tok tk = {.kind = dms_words[i].kind, .unit = dms_words[i].unit,
					      .hemi = dms_words[i].hemi, .axis = dms_words[i].axis, .glued = glued};
				return dms_push(lx, tk, text, err);
			}
		}
	}
	/* "0d30m0sE": a run of single unit and hemisphere letters. */
	if (len <= 4 && strspn(w, "dmsNSEWnew") >= len) {
		for (size_t i = 0; i < len; i++) {
			int rc = dms_word(lx, w + i, 1, i == 0 ? glued : 1, text, err);
			if (rc)
				return rc;
		}
		return BC_OK;
	}
	return bc_err_set(err, BC_EINVALID, "unexpected word '%.*s' in \"%s\"", (int)len, w, text);
}

static int dms_tokenize(const char *text, dms_lex *lx, bc_err *err)
{
	lx->n = 0;
	const char *p = text;
	int glued = 0;
	while (*p) {
		unsigned char c = (unsigned char)*p;
		if (c == ' ' || c == '\t' || c == '\n' || c == '\r' || c == ':' || c == '=') {
			p++, glued = 0;
			continue;
		}
		if (c == 0xc2 && (unsigned char)p[1] == 0xa0) { /* no-break space */
			p += 2, glued = 0;
			continue;
		}
		if (c == ',' || c == ';' || c == '/') {
			int rc = dms_push(lx, (dms_tok){.kind = TK_SEP}, text, err);
			if (rc)
				return rc;
			p++, glued = 0;
			continue;
		}
		int neg = 0, signlen = 0;
		if (c == '-' || c == '+')
			neg = c == '-', signlen = 1;
		else if (!strncmp(p, "\xe2\x88\x92", 3)) /* minus sign */
			neg = 1, signlen = 3;
		const char *q = p + signlen;
		if (isdigit((unsigned char)*q) || (*q == '.' && isdigit((unsigned char)q[1]))) {
			char *end = NULL;
			double v = strtod(q, &end);
			/* strtod would also take exponents, hex and "inf": digits and one point only */
			const char *e = q;
			while (isdigit((unsigned char)*e))
				e++;
			int frac = 0;
			if (*e == '.') {
				frac = 1;
				e++;
				while (isdigit((unsigned char)*e))
					e++;
			}
			if (end != e) {
				char num[64];
				snprintf(num, sizeof num, "%.*s", (int)(e - q), q);
				v = strtod(num, NULL);
			}
			int rc = dms_push(lx, (dms_tok){.kind = TK_NUM, .v = v, .neg = neg, .frac = frac, .glued = glued}, text, err);
			if (rc)
				return rc;
			p = e, glued = 1;
			continue;
		}
		if (signlen)
			return bc_err_set(err, BC_EINVALID, "a sign must be followed by a number in \"%s\"", text);
		int matched = 0;
		for (size_t i = 0; i < sizeof dms_marks / sizeof dms_marks[0]; i++) {
			size_t l = strlen(dms_marks[i].s);
			if (!strncmp(p, dms_marks[i].s, l)) {
				int rc = dms_push(lx, (dms_tok){.kind = TK_UNIT, .unit = dms_marks[i].unit, .glued = glued}, text, err);
				if (rc)
					return rc;
				p += l, glued = 1, matched = 1;
				break;
			}
		}
		if (matched)
			continue;
		if (isalpha(c)) {
			const char *w = p;
			while (isalpha((unsigned char)*p))
				p++;
			int rc = dms_word(lx, w, (size_t)(p - w), glued, text, err);
			if (rc)
				return rc;
			glued = 1;
			if (*p == '.') /* "N." "deg." */
				p++;
			continue;
		}
		int l = c < 0x80 ? 1 : c >= 0xf0 ? 4 : c >= 0xe0 ? 3 : 2;
		return bc_err_set(err, BC_EINVALID, "unexpected character '%.*s' in \"%s\"", l, p, text);
	}
	return BC_OK;
}

typedef struct dms_group {
	double v[3];
	int unit[3];       /* U_NONE until a mark says */
	int frac[3];
	int neg[3];
	int n;
	char hemi;
	int axis;
} dms_group;

typedef struct dms_pair {
	dms_group g[2];
	int n;             /* groups filled; more than 2 is an error */
	int extra;         /* groups beyond 2 */
} dms_pair;

static dms_group *dms_cur(dms_pair *pr)
{
	return pr->n < 2 ? &pr->g[pr->n] : NULL;
}

static void dms_close(dms_pair *pr)
{
	if (pr->n < 2)
		pr->n++;
	else
		pr->extra++;
	if (pr->n < 2)
		memset(&pr->g[pr->n], 0, sizeof pr->g[pr->n]);
}

static int dms_group_empty(const dms_group *g) { return g->n == 0 && !g->hemi && !g->axis; }

/* Splits the tokens into two coordinates. Bare numbers (no marks at all)
 * split evenly. Otherwise a coordinate ends at a separator (, ; /), after a
 * trailing hemisphere letter, before a leading hemisphere letter or lat/lon
 * word, before a signed number, after three numbers, or where a unit mark
 * does not follow the previous one (a second degree mark). */
static int dms_group_tokens(const dms_lex *lx, dms_pair *pr, const char *text, bc_err *err)
{
	memset(pr, 0, sizeof *pr);
	int nnum = 0, marks = 0;
	for (int i = 0; i < lx->n; i++) {
		if (lx->t[i].kind == TK_NUM)
			nnum++;
		else
			marks++;
	}
	if (nnum == 0)
		return bc_err_set(err, BC_EINVALID, "no numbers in \"%s\"", text);
	if (marks == 0) {
		/* Bare numbers: 2, 4 or 6 split evenly (d d, d m d m, d m s d m s). */
		if (nnum != 2 && nnum != 4 && nnum != 6)
			return bc_err_set(err, BC_EINVALID, "%d bare numbers: cannot tell where latitude ends and longitude begins in \"%s\" (separate them with a comma or add N/S/E/W)",
				nnum, text);
		for (int i = 0; i < nnum; i++) {
			dms_group *g = &pr->g[i < nnum / 2 ? 0 : 1];
			g->v[g->n] = lx->t[i].v, g->neg[g->n] = lx->t[i].neg, g->frac[g->n] = lx->t[i].frac;
			g->n++;
		}
		pr->n = 2;
		return BC_OK;
	}
	int first = 0;
	while (first < lx->n && lx->t[first].kind == TK_SEP)
		first++;
	int prefix = first < lx->n && (lx->t[first].kind == TK_HEMI || lx->t[first].kind == TK_AXIS);
	int just_closed = 0; /* a group was closed by a suffix letter */
	for (int i = 0; i < lx->n; i++) {
		const dms_tok *t = &lx->t[i];
		dms_group *g = dms_cur(pr);
		if (!g) {
			pr->extra++;
			break;
		}
		switch (t->kind) {
		case TK_SEP:
			if (dms_group_empty(g)) {
				if (!just_closed)
					return bc_err_set(err, BC_EINVALID, "a separator with no coordinate before it in \"%s\"", text);
			} else {
				dms_close(pr);
			}
			just_closed = 0;
			continue;
		case TK_HEMI:
		case TK_AXIS:
			if (prefix || t->kind == TK_AXIS) {
				if (g->n > 0 || (t->kind == TK_HEMI ? g->hemi != 0 : g->axis != 0)) {
					dms_close(pr);
					if (!(g = dms_cur(pr))) {
						pr->extra++;
						continue;
					}
				}
			} else if (g->n == 0) {
				return bc_err_set(err, BC_EINVALID, "hemisphere letter '%c' with no number before it in \"%s\"", t->hemi, text);
			}
			if (t->kind == TK_HEMI)
				g->hemi = t->hemi;
			else
				g->axis = t->axis;
			if (!prefix && t->kind == TK_HEMI) {
				dms_close(pr);
				just_closed = 1;
				continue;
			}
			break;
		case TK_UNIT: {
			if (i == 0 || lx->t[i - 1].kind != TK_NUM || g->n == 0 || g->unit[g->n - 1] != U_NONE) {
				/* the number may have started the group this mark belongs to */
				return bc_err_set(err, BC_EINVALID, "a %s mark with no number before it in \"%s\"",
					t->unit == U_DEG ? "degree" : t->unit == U_MIN ? "minute" : "second", text);
			}
			int k = g->n - 1;
			if (k > 0 && g->unit[k - 1] != U_NONE && t->unit <= g->unit[k - 1]) {
				/* "50°30' 0°30'": this number opens the next coordinate */
				dms_tok moved = lx->t[i - 1];
				g->n--;
				dms_close(pr);
				if (!(g = dms_cur(pr))) {
					pr->extra++;
					continue;
				}
				g->v[0] = moved.v, g->neg[0] = moved.neg, g->frac[0] = moved.frac, g->n = 1;
				k = 0;
			}
			g->unit[k] = t->unit;
			break;
		}
		case TK_NUM:
			if (g->n == 3 || (t->neg && g->n > 0)) {
				dms_close(pr);
				if (!(g = dms_cur(pr))) {
					pr->extra++;
					continue;
				}
			}
			g->v[g->n] = t->v, g->neg[g->n] = t->neg, g->frac[g->n] = t->frac, g->unit[g->n] = U_NONE;
			g->n++;
			break;
		}
		just_closed = 0;
	}
	dms_group *g = dms_cur(pr);
	if (g && !dms_group_empty(g))
		dms_close(pr);
	if (pr->extra || pr->n != 2)
		return bc_err_set(err, BC_EINVALID, "expected two coordinates (latitude and longitude), found %s in \"%s\"",
			pr->extra ? "more" : "one", text);
	return BC_OK;
}

/* One coordinate's value in degrees and its axis. */
static int dms_value(const dms_group *g, double *out, int *axis, const char *text, bc_err *err)
{
	static const char *names[] = {"", "degrees", "minutes", "seconds"};
	if (g->n == 0)
		return bc_err_set(err, BC_EINVALID, "a hemisphere letter with no number in \"%s\"", text);
	int pos = 0;
	double parts[4] = {0, 0, 0, 0};
	for (int k = 0; k < g->n; k++) {
		int u = g->unit[k] ? g->unit[k] : pos + 1;
		if (u <= pos || u > U_SEC)
			return bc_err_set(err, BC_EINVALID, "%s out of order in \"%s\"", names[u > U_SEC ? U_SEC : u], text);
		if (k == 0 && u != U_DEG)
			return bc_err_set(err, BC_EINVALID, "%s without degrees in \"%s\"", names[u], text);
		if (g->frac[k] && k != g->n - 1)
			return bc_err_set(err, BC_EINVALID, "only the last part may have decimals: %s %g followed by more in \"%s\"", names[u], g->v[k], text);
		if (k > 0 && g->neg[k])
			return bc_err_set(err, BC_EINVALID, "a minus sign on %s in \"%s\" (put the sign before the degrees)", names[u], text);
		if (u != U_DEG && g->v[k] >= 60)
			return bc_err_set(err, BC_EINVALID, "%s must be less than 60, got %g in \"%s\"", names[u], g->v[k], text);
		parts[u] = g->v[k];
		pos = u;
	}
	double v = parts[U_DEG] + parts[U_MIN] / 60.0 + parts[U_SEC] / 3600.0;
	if (g->neg[0] && g->hemi)
		return bc_err_set(err, BC_EINVALID, "both a minus sign and hemisphere '%c' in \"%s\" (give one)", g->hemi, text);
	if (g->neg[0] || g->hemi == 'S' || g->hemi == 'W')
		v = -v;
	int ax = g->hemi == 'N' || g->hemi == 'S' ? AX_LAT : g->hemi ? AX_LON : AX_NONE;
	if (g->axis && ax && g->axis != ax)
		return bc_err_set(err, BC_EINVALID, "'%s' with hemisphere '%c' in \"%s\"", g->axis == AX_LAT ? "lat" : "lon", g->hemi, text);
	*out = v;
	*axis = ax ? ax : g->axis;
	return BC_OK;
}

/* Parses a pair; `lat_first` is the order when no letter says. */
static int dms_parse(const char *text, int lat_first, double *lat, double *lon, bc_err *err)
{
	if (!text)
		text = "";
	dms_lex lx;
	dms_pair pr;
	int rc = dms_tokenize(text, &lx, err);
	if (rc == BC_OK && lx.n == 0)
		rc = bc_err_set(err, BC_EINVALID, "no coordinates given");
	if (rc == BC_OK)
		rc = dms_group_tokens(&lx, &pr, text, err);
	double v[2];
	int ax[2];
	for (int i = 0; rc == BC_OK && i < 2; i++)
		rc = dms_value(&pr.g[i], &v[i], &ax[i], text, err);
	if (rc)
		return rc;
	if (ax[0] && ax[0] == ax[1])
		return bc_err_set(err, BC_EINVALID, "both coordinates are %s in \"%s\"", ax[0] == AX_LAT ? "latitudes (N/S)" : "longitudes (E/W)", text);
	if (!ax[0] && !ax[1]) {
		ax[0] = lat_first ? AX_LAT : AX_LON;
		ax[1] = lat_first ? AX_LON : AX_LAT;
	} else if (!ax[0]) {
		ax[0] = ax[1] == AX_LAT ? AX_LON : AX_LAT;
	} else if (!ax[1]) {
		ax[1] = ax[0] == AX_LAT ? AX_LON : AX_LAT;
	}
	double la = ax[0] == AX_LAT ? v[0] : v[1];
	double lo = ax[0] == AX_LAT ? v[1] : v[0];
	if (fabs(la) > 90)
		return bc_err_set(err, BC_EINVALID, "latitude %g is outside -90..90 in \"%s\"", la, text);
	if (fabs(lo) > 180)
		return bc_err_set(err, BC_EINVALID, "longitude %g is outside -180..180 in \"%s\"", lo, text);
	*lat = la;
	*lon = lo;
	return BC_OK;
}

int bc_geo__parse_dms(const char *text, double *lat, double *lon, bc_err *err)
{
	return dms_parse(text, 1, lat, lon, err);
}

/* ------------------------------------------------------------------ */
/* Projected coordinates as text                                       */
/* ------------------------------------------------------------------ */

/* Reads "512345 E 1812345 N", "E 512345 N 1812345", "512345, 1812345",
 * "512345mE 1812345mN" into easting and northing; without letters the
 * numbers are in the CRS's axis order (`north_first`). */
static int xy_parse(const char *text, int north_first, double *east, double *north, bc_err *err)
{
	double v[2];
	char lab[2] = {0, 0};
	int nv = 0, prefix = -1;
	char pending = 0; /* prefix label waiting for its number */
	const char *p = text ? text : "";
	while (*p) {
		unsigned char c = (unsigned char)*p;
		if (isspace(c) || c == ',' || c == ';' || c == '/' || c == ':' || c == '=') {
			p++;
			continue;
		}
		int sl = (c == '-' || c == '+') ? 1 : 0;
		if (isdigit((unsigned char)p[sl]) || (p[sl] == '.' && isdigit((unsigned char)p[sl + 1]))) {
			const char *e = p + sl;
			while (isdigit((unsigned char)*e))
				e++;
			if (*e == '.') {
				e++;
				while (isdigit((unsigned char)*e))
					e++;
			}
			if (nv == 2)
				return bc_err_set(err, BC_EINVALID, "more than two numbers in \"%s\" (expected easting and northing)", text);
			char num[64];
			snprintf(num, sizeof num, "%.*s", (int)(e - p), p);
			v[nv] = strtod(num, NULL);
			if (prefix == -1)
				prefix = 0;
			if (pending)
				lab[nv] = pending, pending = 0;
			nv++;
			p = e;
			continue;
		}
		if (isalpha(c)) {
			const char *w = p;
			while (isalpha((unsigned char)*p))
				p++;
			char low[16] = "";
			size_t len = (size_t)(p - w);
			for (size_t i = 0; i < len && i + 1 < sizeof low; i++)
				low[i] = (char)tolower((unsigned char)w[i]), low[i + 1] = '\0';
			char l = 0;
			if (len < sizeof low && (!strcmp(low, "e") || !strcmp(low, "me") || !strcmp(low, "east") || !strcmp(low, "easting")))
				l = 'E';
			else if (len < sizeof low && (!strcmp(low, "n") || !strcmp(low, "mn") || !strcmp(low, "north") || !strcmp(low, "northing")))
				l = 'N';
			else if (len < sizeof low && !strcmp(low, "m"))
				continue; /* metres */
			else
				return bc_err_set(err, BC_EINVALID, "unexpected word '%.*s' in \"%s\" (expected easting and northing, optionally marked E and N)", (int)len, w, text);
			if (prefix == -1)
				prefix = 1;
			if (prefix) {
				if (pending)
					return bc_err_set(err, BC_EINVALID, "two letters in a row in \"%s\"", text);
				pending = l;
			} else {
				if (nv == 0 || lab[nv - 1])
					return bc_err_set(err, BC_EINVALID, "letter '%c' with no number before it in \"%s\"", l, text);
				lab[nv - 1] = l;
			}
			continue;
		}
		return bc_err_set(err, BC_EINVALID, "unexpected character '%c' in \"%s\" (expected easting and northing)", c, text);
	}
	if (pending)
		return bc_err_set(err, BC_EINVALID, "letter '%c' with no number after it in \"%s\"", pending, text);
	if (nv != 2)
		return bc_err_set(err, BC_EINVALID, "%s in \"%s\" (expected easting and northing)", nv ? "only one number" : "no numbers", text);
	if (lab[0] && lab[0] == lab[1])
		return bc_err_set(err, BC_EINVALID, "both numbers are marked '%c' in \"%s\"", lab[0], text);
	if (!lab[0] && !lab[1]) {
		lab[0] = north_first ? 'N' : 'E';
		lab[1] = north_first ? 'E' : 'N';
	} else if (!lab[0]) {
		lab[0] = lab[1] == 'E' ? 'N' : 'E';
	} else if (!lab[1]) {
		lab[1] = lab[0] == 'E' ? 'N' : 'E';
	}
	*east = lab[0] == 'E' ? v[0] : v[1];
	*north = lab[0] == 'E' ? v[1] : v[0];
	return BC_OK;
}

int bc_geo__to_wgs84(bc_geo *g, const char *srs, const char *verbatim, double *lon, double *lat, bc_err *err)
{
	if (!srs || !*srs)
		return bc_err_set(err, BC_EINVALID, "coordinates \"%s\" given without a coordinate reference system (verbatimSRS)", verbatim ? verbatim : "");
	geo_entry *e = NULL;
	int rc = geo_entry_get(g, srs, "EPSG:4326", &e, err);
	if (rc)
		return rc;
	double x, y;
	if (e->src.geographic) {
		double la, lo;
		rc = dms_parse(verbatim, e->src.north_first, &la, &lo, err);
		if (rc)
			return rc;
		x = lo, y = la;
	} else {
		rc = xy_parse(verbatim, e->src.north_first, &x, &y, err);
		if (rc)
			return rc;
	}
	rc = geo_apply(g, e, srs, "WGS 84", &x, &y, err);
	if (rc)
		return rc;
	if (fabs(y) > 90 || fabs(x) > 180 + 1e-9)
		return bc_err_set(err, BC_EINVALID, "\"%s\" in %s (%s) converts to longitude %g, latitude %g, which is off the globe",
			verbatim, srs, e->src.name, x, y);
	if (e->src.has_area) {
		const geo_crs_info *a = &e->src;
		double m = GEO_AREA_MARGIN_DEG;
		int in_lat = y >= a->south - m && y <= a->north + m;
		int in_lon = a->west <= a->east ? (x >= a->west - m && x <= a->east + m)
						: (x >= a->west - m || x <= a->east + m); /* crosses 180 */
		if (!in_lat || !in_lon)
			return bc_err_set(err, BC_EINVALID,
				"\"%s\" in %s (%s) falls at longitude %.5f, latitude %.5f, outside the area where that CRS is used (longitude %g..%g, latitude %g..%g); are the numbers swapped or in another zone?",
				verbatim, srs, a->name, x, y, a->west, a->east, a->south, a->north);
	}
	*lon = x;
	*lat = y;
	return BC_OK;
}

/* ------------------------------------------------------------------ */
/* Geodesics (Karney 2013, as shipped in PROJ's geodesic.h)            */
/* ------------------------------------------------------------------ */

static struct geod_geodesic geo_wgs84;
static pthread_once_t geo_wgs84_once = PTHREAD_ONCE_INIT;

static void geo_wgs84_init(void)
{
	geod_init(&geo_wgs84, 6378137.0, 1 / 298.257223563); /* WGS 84, EPSG:7030 */
}

double bc_geo__inverse(double lat1, double lon1, double lat2, double lon2, double *azi1, double *azi2)
{
	pthread_once(&geo_wgs84_once, geo_wgs84_init);
	double s12 = NAN, a1 = NAN, a2 = NAN;
	geod_inverse(&geo_wgs84, lat1, lon1, lat2, lon2, &s12, &a1, &a2);
	if (azi1)
		*azi1 = a1;
	if (azi2)
		*azi2 = a2;
	return s12;
}

double bc_geo__distance_m(double lat1, double lon1, double lat2, double lon2)
{
	return bc_geo__inverse(lat1, lon1, lat2, lon2, NULL, NULL);
}

/* ------------------------------------------------------------------ */
/* GeoPackageBinary                                                    */
/* ------------------------------------------------------------------ */

static void geo_put_le64(unsigned char *p, double d)
{
	uint64_t u;
	memcpy(&u, &d, sizeof u);
	for (int i = 0; i < 8; i++)
		p[i] = (unsigned char)(u >> (8 * i));
}

static double geo_get_le64(const unsigned char *p)
{
	uint64_t u = 0;
	for (int i = 7; i >= 0; i--)
		u = (u << 8) | p[i];
	double d;
	memcpy(&d, &u, sizeof d);
	return d;
}

void bc_geo__gpkg_point(double lon, double lat, unsigned char out[29])
{
	/* GeoPackage 1.3 Req. 19: "GP", version 0, flags 0x01 (little-endian,
	 * no envelope), srs_id 4326 as int32 LE; then ISO WKB point LE. */
	static const unsigned char head[13] = {0x47, 0x50, 0x00, 0x01, 0xe6, 0x10, 0x00, 0x00,
					       0x01, 0x01, 0x00, 0x00, 0x00};
	memcpy(out, head, sizeof head);
	geo_put_le64(out + 13, lon);
	geo_put_le64(out + 21, lat);
}

int bc_geo__gpkg_point_read(const unsigned char *b, size_t n, double *lon, double *lat, bc_err *err)
{
	static const size_t env_bytes[] = {0, 32, 48, 48, 64};
	if (n < 8 || b[0] != 0x47 || b[1] != 0x50 || b[2] != 0)
		return bc_err_set(err, BC_EINVALID, "not a GeoPackageBinary geometry");
	int env = (b[3] >> 1) & 7;
	if (env > 4 || (b[3] & 0x10))
		return bc_err_set(err, BC_EINVALID, "GeoPackageBinary geometry is empty or has a bad envelope code");
	size_t off = 8 + env_bytes[env];
	if (n < off + 21 || b[off] != 0x01 || b[off + 1] != 1 || b[off + 2] || b[off + 3] || b[off + 4])
		return bc_err_set(err, BC_EINVALID, "GeoPackageBinary geometry is not a little-endian 2D point");
	*lon = geo_get_le64(b + off + 5);
	*lat = geo_get_le64(b + off + 13);
	return BC_OK;
}
