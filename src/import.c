/*
 * import.c - occurrence spreadsheets into the database: read rows, map
 * columns, validate, resolve age, depth, preservation and coordinates,
 * then store or quarantine; one transaction and one batch per file
 * (design.md "Input contract" and "Database").
 */
#include "colmap.h"
#include "csvio.h"
#include "depth.h"
#include "dwca.h"
#include "geo.h"
#include "locality.h"
#include "snapshot.h"
#include "vocab.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <pthread.h>
#include <strings.h>

#define AGE_CACHE_SLOTS 8192   /* power of two; cleared when 3/4 full */
#define LOC_CACHE_SLOTS 8192
#define PROGRESS_EVERY 8192

/* ---- statements ---------------------------------------------------- */

static const char sql_insert_occ[] =
	"INSERT INTO occurrences (batch_id, line, occurrence_id, scientific_name, taxon_group, \"order\", family, genus, "
	"locality_id, earliest_stage, latest_stage, earliest_series, latest_series, earliest_system, latest_system, "
	"earliest_ma_given, latest_ma_given, age_from, age_to, older_ma, younger_ma, age_status, age_note, age_conflict, "
	"timescale, formation, member, bed, min_depth_m, max_depth_m, depth_source, environment, preservation, "
	"articulation, individual_count, reference_key, extra) VALUES (:batch, :line, :occurrence_id, :scientific_name, "
	":taxon_group, :order, :family, :genus, :locality, :earliest_stage, :latest_stage, :earliest_series, "
	":latest_series, :earliest_system, :latest_system, :earliest_ma, :latest_ma, :age_from, :age_to, :older_ma, "
	":younger_ma, :age_status, :age_note, :age_conflict, :timescale, :formation, :member, :bed, :min_depth, "
	":max_depth, :depth_source, :environment, :preservation, :articulation, :individual_count, :reference_key, :extra)";

static const char sql_insert_quarantine[] =
	"INSERT INTO quarantine (batch_id, file, line, field, reason, raw_row) VALUES (:batch, :file, :line, :field, :reason, :raw)";

/* The INSERT's parameters, in the order of occ_params. */
enum {
	P_BATCH, P_LINE, P_OCC_ID, P_SCI, P_GROUP, P_ORDER, P_FAMILY, P_GENUS, P_LOC,
	P_ESTAGE, P_LSTAGE, P_ESERIES, P_LSERIES, P_ESYSTEM, P_LSYSTEM, P_EMA, P_LMA,
	P_FROM, P_TO, P_OLDER, P_YOUNGER, P_STATUS, P_NOTE, P_CONFLICT, P_TIMESCALE,
	P_FORMATION, P_MEMBER, P_BED, P_MIN, P_MAX, P_DSRC, P_ENV, P_PRES, P_ART,
	P_COUNT, P_REF, P_EXTRA, P_N
};

/* ---- small caches -------------------------------------------------- */

typedef struct age_slot {
	char *key;
	bc_age age;
} age_slot;

/* The reading thread's side of the locality cache: a key (name,
 * formation, country, coordinates) -> a number never given to another
 * key. The storing thread keeps number -> locality fid (loc_fid), so it
 * neither builds nor compares keys. */
typedef struct loc_slot {
	char *key;
	uint64_t id;
} loc_slot;

typedef struct loc_fid {
	uint64_t id;
	int64_t fid;
} loc_fid;

static uint64_t hash_str(const char *s)
{
	uint64_t h = 1469598103934665603ULL; /* FNV-1a */
	for (; *s; s++)
		h = (h ^ (unsigned char)*s) * 1099511628211ULL;
	return h;
}

/* Builds a cache key "a<US>b<US>hex(doubles)" without printf (this runs
 * once per row). Returns -1 when it does not fit: the caller then skips
 * the cache, since a cut key could match another row's. */
static int join_key(char *out, size_t cap, const char *a, const char *b, const double *d, size_t nd)
{
	static const char hex[] = "0123456789abcdef";
	size_t na = strlen(a), nb = strlen(b), k;
	if (na + nb + 2 + nd * 17 + 1 > cap)
		return -1;
	memcpy(out, a, na);
	k = na;
	out[k++] = '\x1f';
	memcpy(out + k, b, nb);
	k += nb;
	for (size_t i = 0; d && i < nd; i++) {
		unsigned char bytes[sizeof(double)];
		memcpy(bytes, &d[i], sizeof bytes);
		out[k++] = '\x1f';
		for (size_t j = 0; j < sizeof bytes; j++) {
			out[k++] = hex[bytes[j] >> 4];
			out[k++] = hex[bytes[j] & 15];
		}
	}
	out[k] = '\0';
	return 0;
}

/* ---- the importer --------------------------------------------------- */

typedef struct occ {
	double lat, lon, unc;
	int has_coords;
	double e_ma, l_ma;
	bc_age age;
	int conflict;
	char note[768];
	double dmin, dmax;
	const char *depth_source;
	const char *environment;
	const char *preservation, *articulation;
	long long count;
	int has_count;
	int64_t locality;
} occ;

/* One row between reading and storing: the cells, what the checks made
 * of them, and for a rejected row the quarantine entry. */
typedef struct row {
	int quarantined;
	long line;
	uint64_t bytes;   /* input read up to the end of this row (progress) */
	const char *name; /* the file as messages name it */
	bc_buf scratch;
	size_t cell_off[BC_TERM_COUNT];
	const char *cell[BC_TERM_COUNT];
	size_t cell_len[BC_TERM_COUNT];
	const char *depth_cell;
	bc_buf extra, raw, reason;
	uint64_t loc_id;  /* the row's locality cache entry (loc_slot), 0 for none */
	const char *text[P_N]; /* a stored row's text parameters, with their lengths, */
	int text_len[P_N];     /* set by the reading thread (NULL: not a text parameter) */
	char field[128];
	int nproblems;
	int oom;          /* an allocation for the row failed */
	occ o;
} row;

typedef struct row_queue row_queue;

typedef struct importer {
	bc_db *db;
	const bc_import_options *o;
	bc_import_result *r;
	const char *name;
	bc_csv *csv;
	bc_dwca *dwca;           /* set instead of csv for a Darwin Core Archive */
	const char *batch_name;  /* the file as named in the batch (im->name follows the archive's data files) */
	char **headers;
	size_t nh;
	bc_colplan plan;
	int plan_bound;
	bc_colmap *map;
	bc_vocab *env, *pres, *units;
	bc_chart *chart;
	double chart_oldest; /* the chart's oldest bound (Ma), 0 if none */
	bc_resolver *res;
	bc_geo *geo;
	sqlite3_stmt *st_occ, *st_q;
	bc_locality_cache *loc;
	int occ_idx[40];
	int64_t batch;
	row *cur;        /* the row being read and checked (the reading thread's) */
	row one;         /* the row when reading and storing take turns on one thread */
	row_queue *pp;        /* the queue between the two threads, when there are two */
	uint64_t size;   /* the input's size in bytes (0 when unknown) */
	age_slot *ages;
	size_t nages;
	loc_slot *locs;  /* the reading thread's */
	size_t nlocs;
	uint64_t loc_next_id;
	loc_fid *loc_fids; /* the storing thread's */
} importer;

/* ---- the row source: a CSV/TSV reader or a Darwin Core Archive ------ */

static size_t src_nfields(const importer *im)
{
	return im->dwca ? bc_dwca__ncolumns(im->dwca) : bc_csv__nfields(im->csv);
}

static const char *src_field(const importer *im, size_t i)
{
	return im->dwca ? bc_dwca__value(im->dwca, i) : bc_csv__field(im->csv, i);
}

static long src_line(const importer *im)
{
	return im->dwca ? bc_dwca__line(im->dwca) : bc_csv__line(im->csv);
}

static int src_next(importer *im, bc_err *err)
{
	return im->dwca ? bc_dwca__next(im->dwca, err) : bc_csv__next(im->csv, err);
}

/* ---- problems -------------------------------------------------------- */

static void row_problem(importer *im, const char *field, const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 3, 4)))
#endif
	;

/* Records a problem with the current row. The first names the field of
 * the quarantine entry; later ones are appended to its reason so one
 * pass tells the user everything wrong with the row. */
static void row_problem(importer *im, const char *field, const char *fmt, ...)
{
	char msg[1024];
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(msg, sizeof msg, fmt, ap);
	va_end(ap);
	if (im->cur->nproblems++ == 0) {
		snprintf(im->cur->field, sizeof im->cur->field, "%s", field);
		bc__buf_puts(&im->cur->reason, msg);
	} else {
		bc__buf_printf(&im->cur->reason, "; also %s: %s", field, msg);
	}
}

/* ---- cells ------------------------------------------------------------ */

static int is_guarded(const char *s)
{
	return s[0] == '\'' && s[1] && strchr("=+-@\t\r", s[1]);
}

/* Trimmed copy of a cell into scratch; returns its offset. The export's
 * formula guard (a ' before = + - @ tab CR) is removed and counted. */
static size_t put_cell(importer *im, const char *s, int trim, size_t *len)
{
	if (is_guarded(s) && !im->o->keep_guard_quotes) {
		s++;
		im->r->n_unguarded++;
	}
	size_t n = strlen(s);
	if (trim) {
		while (*s == ' ' || *s == '\t') {
			s++;
			n--;
		}
		while (n && (s[n - 1] == ' ' || s[n - 1] == '\t' || s[n - 1] == '\r' || s[n - 1] == '\n'))
			n--;
	}
	size_t off = im->cur->scratch.len;
	*len = n;
	if (bc__buf_append(&im->cur->scratch, s, n)) {
		im->cur->oom = 1;
		return 0;
	}
	im->cur->scratch.len++; /* keep the NUL bc__buf_append wrote: it ends the cell */
	return off;
}

static int gather_cells(importer *im)
{
	im->cur->scratch.len = 0;
	im->cur->oom = 0;
	size_t nf = src_nfields(im);
	size_t depth_off = (size_t)-1;
	for (int t = 0; t < BC_TERM_COUNT; t++) {
		int col = im->plan.term_col[t];
		const char *v = col >= 0 && (size_t)col < nf ? src_field(im, (size_t)col) : "";
		im->cur->cell_off[t] = put_cell(im, v, 1, &im->cur->cell_len[t]);
		if (im->cur->oom || !im->cur->scratch.data)
			return BC_ENOMEM;
		if (!im->cur->scratch.data[im->cur->cell_off[t]] && im->plan.defaults[t])
			im->cur->cell_off[t] = put_cell(im, im->plan.defaults[t], 1, &im->cur->cell_len[t]);
	}
	size_t depth_len;
	if (im->plan.depth_col >= 0 && (size_t)im->plan.depth_col < nf)
		depth_off = put_cell(im, src_field(im, (size_t)im->plan.depth_col), 1, &depth_len);
	if (!im->cur->scratch.data || im->cur->oom)
		return BC_ENOMEM;
	for (int t = 0; t < BC_TERM_COUNT; t++)
		im->cur->cell[t] = im->cur->scratch.data + im->cur->cell_off[t];
	im->cur->depth_cell = depth_off == (size_t)-1 ? "" : im->cur->scratch.data + depth_off;
	/* extra columns: a JSON object of header -> cell, empty cells left out */
	im->cur->extra.len = 0;
	if (bc__buf_puts(&im->cur->extra, "{"))
		return BC_ENOMEM;
	int any = 0;
	for (size_t i = 0; i < im->nh && i < nf; i++) {
		if (im->plan.col_term[i] >= 0)
			continue;
		const char *v = src_field(im, i);
		if (!*v)
			continue;
		if (is_guarded(v) && !im->o->keep_guard_quotes) {
			v++;
			im->r->n_unguarded++;
		}
		if ((any++ && bc__buf_puts(&im->cur->extra, ",")) || bc__buf_json_string(&im->cur->extra, im->headers[i]) ||
			bc__buf_puts(&im->cur->extra, ":") || bc__buf_json_string(&im->cur->extra, v))
			return BC_ENOMEM;
	}
	return bc__buf_puts(&im->cur->extra, "}") ? BC_ENOMEM : BC_OK;
}

/* The row as read: header -> cell, cells beyond the header numbered. */
static int raw_json(importer *im)
{
	size_t nf = src_nfields(im);
	im->cur->raw.len = 0;
	if (bc__buf_puts(&im->cur->raw, "{"))
		return BC_ENOMEM;
	for (size_t i = 0; i < nf; i++) {
		char extra_name[64];
		const char *h = i < im->nh ? im->headers[i] : extra_name;
		if (i >= im->nh)
			snprintf(extra_name, sizeof extra_name, "(column %zu)", i + 1);
		if ((i && bc__buf_puts(&im->cur->raw, ",")) || bc__buf_json_string(&im->cur->raw, h) || bc__buf_puts(&im->cur->raw, ":") ||
			bc__buf_json_string(&im->cur->raw, src_field(im, i)))
			return BC_ENOMEM;
	}
	return bc__buf_puts(&im->cur->raw, "}") ? BC_ENOMEM : BC_OK;
}

static int number_cell(importer *im, int term, double *out)
{
	const char *why = NULL;
	if (!im->cur->cell[term][0])
		return 0;
	if (bc_depth__number(im->cur->cell[term], out, &why) != 0) {
		row_problem(im, bc_colmap__term_name(term), "'%s' is %s", im->cur->cell[term], why);
		return -1;
	}
	return 1;
}

/* ---- age ---------------------------------------------------------------- */

/* Resolves a pair through the cache in front of the resolver. */
static int age_cached(importer *im, const char *e, const char *l, bc_age *out)
{
	char keybuf[600];
	if (join_key(keybuf, sizeof keybuf, e, l, NULL, 0) != 0)
		return bc_age_resolve_pair(im->res, e, l, out);
	uint64_t h = hash_str(keybuf);
	size_t mask = AGE_CACHE_SLOTS - 1;
	for (size_t i = (size_t)h & mask;; i = (i + 1) & mask) {
		age_slot *s = &im->ages[i];
		if (!s->key)
			break;
		if (strcmp(s->key, keybuf) == 0) {
			*out = s->age;
			return BC_OK;
		}
	}
	int rc = bc_age_resolve_pair(im->res, e, l, out);
	if (rc)
		return rc;
	if (im->nages >= AGE_CACHE_SLOTS * 3 / 4) {
		for (size_t i = 0; i < AGE_CACHE_SLOTS; i++) {
			free(im->ages[i].key);
			im->ages[i].key = NULL;
		}
		im->nages = 0;
	}
	for (size_t i = (size_t)h & mask;; i = (i + 1) & mask)
		if (!im->ages[i].key) {
			if ((im->ages[i].key = bc__strdup(keybuf))) {
				im->ages[i].age = *out;
				im->nages++;
			}
			break;
		}
	return BC_OK;
}

static void append_note(char *note, size_t cap, const char *fmt, ...)
#if defined(__GNUC__)
	__attribute__((format(printf, 3, 4)))
#endif
	;
static void append_note(char *note, size_t cap, const char *fmt, ...)
{
	size_t k = strlen(note);
	if (k && k + 2 < cap) {
		memcpy(note + k, "; ", 3);
		k += 2;
	}
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(note + k, cap - k, fmt, ap);
	va_end(ap);
}

/* "Campanian" or "Campanian-Maastrichtian". */
static void span_name(const bc_age *a, char *out, size_t cap)
{
	if (strcmp(a->from, a->to) == 0 || !a->to[0])
		snprintf(out, cap, "%s", a->from);
	else
		snprintf(out, cap, "%s-%s", a->from, a->to);
}

/*
 * The age step: text columns (stage, else series, else system; coarser
 * levels given as well are checked against the finest) and numbers.
 * Numbers win when given; a disagreement beyond
 * BC_AGE_CONFLICT_TOLERANCE_MYR is stored and flagged, never resolved
 * silently. Unknown text and bad numbers are row problems.
 */
static int import_age(importer *im, occ *o)
{
	static const int levels[3][2] = {
		{BC_T_EARLIEST_STAGE, BC_T_LATEST_STAGE},
		{BC_T_EARLIEST_SERIES, BC_T_LATEST_SERIES},
		{BC_T_EARLIEST_SYSTEM, BC_T_LATEST_SYSTEM},
	};
	const double tol = BC_AGE_CONFLICT_TOLERANCE_MYR;
	bc_age text, lv;
	int have_text = 0, finest = -1, rc;
	o->note[0] = '\0';
	for (int k = 0; k < 3; k++) {
		const char *e = im->cur->cell[levels[k][0]], *l = im->cur->cell[levels[k][1]];
		if (!*e && !*l)
			continue;
		if ((rc = age_cached(im, e, l, &lv)))
			return rc;
		if (lv.status == BC_AGE_UNKNOWN) {
			/* name the column that failed */
			bc_age one;
			int side = 0;
			if (*e && (rc = age_cached(im, e, "", &one)) == BC_OK && one.status != BC_AGE_UNKNOWN)
				side = 1;
			if (rc)
				return rc;
			const char *bad = side ? l : (*e ? e : l);
			int term = side || !*e ? levels[k][1] : levels[k][0];
			if (side && (rc = age_cached(im, l, "", &one)) == BC_OK)
				lv = one;
			if (rc)
				return rc;
			row_problem(im, bc_colmap__term_name(term), "unknown age '%s'%s%s", bad, lv.note[0] ? "; " : "", lv.note);
			continue;
		}
		if (!have_text) {
			text = lv;
			have_text = 1;
			finest = k;
			continue;
		}
		if (text.older_ma > lv.older_ma + tol || text.younger_ma < lv.younger_ma - tol) {
			o->conflict = 1;
			char n1[300], n2[300];
			span_name(&text, n1, sizeof n1);
			span_name(&lv, n2, sizeof n2);
			append_note(o->note, sizeof o->note, "age conflict: %s %s (%g-%g Ma) lies outside %s %s (%g-%g Ma)",
				finest == 0 ? "stage" : "series", n1, text.older_ma, text.younger_ma,
				k == 1 ? "series" : "system", n2, lv.older_ma, lv.younger_ma);
		}
	}
	if (im->cur->nproblems)
		return BC_OK;
	double e = NAN, l = NAN;
	int ge = number_cell(im, BC_T_EARLIEST_MA, &e), gl = number_cell(im, BC_T_LATEST_MA, &l);
	if (ge < 0 || gl < 0)
		return BC_OK;
	o->e_ma = ge ? e : NAN;
	o->l_ma = gl ? l : NAN;
	/* A date (2021, 44259 as a spreadsheet serial) or years typed into a
	 * column of Ma: older than the chart's oldest bound. */
	double oldest = im->chart_oldest;
	if (ge && oldest > 0 && e > oldest)
		row_problem(im, "earliestChronometricAge", "%g Ma is older than the chart (%g Ma); a date or years typed in a column of Ma?", e, oldest);
	if (gl && oldest > 0 && l > oldest)
		row_problem(im, "latestChronometricAge", "%g Ma is older than the chart (%g Ma); a date or years typed in a column of Ma?", l, oldest);
	if (ge && e < 0)
		row_problem(im, "earliestChronometricAge", "%g Ma is negative (ages are millions of years before present)", e);
	if (gl && l < 0)
		row_problem(im, "latestChronometricAge", "%g Ma is negative (ages are millions of years before present)", l);
	if (ge && gl && e < l)
		row_problem(im, "earliestChronometricAge", "%g Ma is younger than latestChronometricAge %g Ma (earliest is the older end: the larger number)", e, l);
	if (im->cur->nproblems)
		return BC_OK;
	if (!ge && !gl && !have_text) {
		row_problem(im, "earliestAgeOrLowestStage", "no age: give a stage, series or system name, or earliestChronometricAge/latestChronometricAge in Ma");
		return BC_OK;
	}
	if (ge || gl) {
		double older = ge ? e : l, younger = gl ? l : e;
		if (have_text) {
			o->age = text;
			if (older > text.older_ma + tol || younger < text.younger_ma - tol) {
				o->conflict = 1;
				char n1[300];
				span_name(&text, n1, sizeof n1);
				append_note(o->note, sizeof o->note, "age conflict: numbers %g-%g Ma lie outside %s (%g-%g Ma) by more than %g Myr; the numbers are stored",
					older, younger, n1, text.older_ma, text.younger_ma, tol);
			}
		} else {
			memset(&o->age, 0, sizeof o->age);
		}
		o->age.status = BC_AGE_NUMERIC;
		o->age.older_ma = older;
		o->age.younger_ma = younger;
	} else {
		o->age = text;
	}
	if (o->age.note[0]) {
		char tmp[768];
		snprintf(tmp, sizeof tmp, "%s", o->note);
		snprintf(o->note, sizeof o->note, "%s", o->age.note);
		if (tmp[0])
			append_note(o->note, sizeof o->note, "%s", tmp);
	}
	return BC_OK;
}

/* ---- depth, preservation, coordinates ------------------------------------ */

static void import_depth(importer *im, occ *o)
{
	double a = NAN, b = NAN;
	int ga = 0, gb = 0;
	const char *why = NULL;
	o->dmin = o->dmax = NAN;
	o->depth_source = "";
	o->environment = im->cur->cell[BC_T_ENVIRONMENT];
	if (im->cur->depth_cell[0]) {
		if (bc_depth__range(im->cur->depth_cell, &a, &b, &why) != 0) {
			row_problem(im, im->headers[im->plan.depth_col], "'%s' is %s", im->cur->depth_cell, why);
			return;
		}
		a *= im->plan.depth_factor;
		b *= im->plan.depth_factor;
		ga = gb = 1;
	} else {
		ga = number_cell(im, BC_T_MIN_DEPTH, &a);
		gb = number_cell(im, BC_T_MAX_DEPTH, &b);
		if (ga < 0 || gb < 0)
			return;
		if (ga > 0 && im->plan.term_col[BC_T_MIN_DEPTH] >= 0)
			a *= im->plan.col_factor[im->plan.term_col[BC_T_MIN_DEPTH]];
		if (gb > 0 && im->plan.term_col[BC_T_MAX_DEPTH] >= 0)
			b *= im->plan.col_factor[im->plan.term_col[BC_T_MAX_DEPTH]];
		if (ga && !gb)
			b = a;
		if (gb && !ga)
			a = b;
	}
	if (ga || gb) {
		if (a < 0 || b < 0) {
			row_problem(im, a < 0 ? "minimumPaleodepthInMeters" : "maximumPaleodepthInMeters",
				"%g m is negative (palaeodepth is metres below sea level, >= 0)", a < 0 ? a : b);
			return;
		}
		if (a > b) {
			row_problem(im, "minimumPaleodepthInMeters", "%g m is deeper than maximumPaleodepthInMeters %g m", a, b);
			return;
		}
		/* The deepest ocean floor today is about 11 km (Challenger Deep,
		 * from memory); deeper is a wrong number or unit. */
		if (b > 11500) {
			row_problem(im, a > 11500 ? "minimumPaleodepthInMeters" : "maximumPaleodepthInMeters",
				"%g m is deeper than any ocean (about 11 km at most); a wrong number or unit?", a > 11500 ? a : b);
			return;
		}
		o->dmin = a;
		o->dmax = b;
		o->depth_source = "given";
		const bc_vocab_term *t = o->environment[0] ? bc_vocab__find(im->env, o->environment) : NULL;
		if (t)
			o->environment = t->term;
		return;
	}
	if (!o->environment[0])
		return;
	const bc_vocab_term *t = bc_vocab__find(im->env, o->environment);
	if (!t) {
		row_problem(im, "depositionalEnvironment", "unknown environment '%s' and no depth given (known: %s; or give minimumPaleodepthInMeters/maximumPaleodepthInMeters, or add the term with --environments FILE)",
			o->environment, bc_vocab__list(im->env));
		return;
	}
	o->environment = t->term;
	o->dmin = t->min_m;
	o->dmax = t->max_m;
	o->depth_source = "environment";
}

static void import_preservation(importer *im, occ *o)
{
	const char *p = im->cur->cell[BC_T_PRESERVATION];
	o->preservation = "";
	o->articulation = "unknown";
	if (!*p)
		return;
	const bc_vocab_term *t = bc_vocab__find(im->pres, p);
	if (!t) {
		row_problem(im, "preservationMode", "unknown preservation '%s' (known: %s; or add it with --preservation FILE)", p, bc_vocab__list(im->pres));
		return;
	}
	o->preservation = t->term;
	o->articulation = t->cls;
}

static int datum_is_wgs84(const char *d)
{
	static const char *const ok[] = {"", "WGS84", "WGS 84", "WGS-84", "EPSG:4326"};
	for (size_t i = 0; i < sizeof ok / sizeof ok[0]; i++)
		if (strcasecmp(d, ok[i]) == 0)
			return 1;
	return 0;
}

static int import_coords(importer *im, occ *o)
{
	double lat = NAN, lon = NAN;
	o->has_coords = 0;
	o->unc = NAN;
	int gu = number_cell(im, BC_T_COORD_UNC, &o->unc);
	if (gu > 0 && o->unc < 0)
		row_problem(im, "coordinateUncertaintyInMeters", "%g is negative", o->unc);
	int ga = number_cell(im, BC_T_LAT, &lat), gb = number_cell(im, BC_T_LON, &lon);
	if (ga < 0 || gb < 0)
		return BC_OK;
	if (ga || gb) {
		if (!ga || !gb) {
			row_problem(im, ga ? "decimalLongitude" : "decimalLatitude", "empty, but %s is given; give both or neither", ga ? "decimalLatitude" : "decimalLongitude");
			return BC_OK;
		}
		if (lat < -90 || lat > 90) {
			row_problem(im, "decimalLatitude", "%g is outside -90..90", lat);
			return BC_OK;
		}
		if (lon < -180 || lon > 180) {
			row_problem(im, "decimalLongitude", "%g is outside -180..180", lon);
			return BC_OK;
		}
		if (!datum_is_wgs84(im->cur->cell[BC_T_DATUM])) {
			row_problem(im, "geodeticDatum", "'%s': decimal coordinates must be WGS 84 (EPSG:4326); give other systems as verbatimCoordinates with verbatimSRS", im->cur->cell[BC_T_DATUM]);
			return BC_OK;
		}
		o->lat = lat;
		o->lon = lon;
		o->has_coords = 1;
		return BC_OK;
	}
	const char *vc = im->cur->cell[BC_T_VERBATIM_COORDS], *srs = im->cur->cell[BC_T_VERBATIM_SRS];
	if (!*vc)
		return BC_OK;
	if (!*srs) {
		row_problem(im, "verbatimSRS", "empty; say which coordinate system verbatimCoordinates '%s' use (e.g. EPSG:4326, EPSG:32616)", vc);
		return BC_OK;
	}
	if (!im->geo) {
		bc_err e = {0};
		int rc = bc_geo__new(&im->geo, &e);
		if (rc)
			return rc;
	}
	bc_err e = {0};
	if (bc_geo__to_wgs84(im->geo, srs, vc, &lon, &lat, &e) != 0) {
		row_problem(im, "verbatimCoordinates", "%s", e.msg[0] ? e.msg : "cannot convert");
		return BC_OK;
	}
	if (!(lat >= -90 && lat <= 90 && lon >= -180 && lon <= 180)) {
		row_problem(im, "verbatimCoordinates", "'%s' in %s gives latitude %g, longitude %g: out of range", vc, srs, lat, lon);
		return BC_OK;
	}
	o->lat = lat;
	o->lon = lon;
	o->has_coords = 1;
	return BC_OK;
}

/* ---- localities ------------------------------------------------------------ */

/*
 * The locality of a row, through the locality module (which keeps one
 * locality per name and country and records every coordinate pair given).
 * A small cache in front skips rows repeating the same name, country and
 * coordinates. A row with no name, no country and no coordinates has no
 * locality. The cache is in two halves: the reading thread looks the key
 * up (locality_key), the storing thread only the fid of its entry
 * (import_locality). Keys are looked up in the order of the stored rows
 * and the cache is emptied at the same points as a one-table cache would
 * be, so the same rows reach the locality module.
 */
static void locality_key(importer *im, row *rw)
{
	occ *o = &rw->o;
	const char *name = rw->cell[BC_T_LOCALITY], *country = rw->cell[BC_T_COUNTRY];
	rw->loc_id = 0;
	if (!*name && !*country && !o->has_coords)
		return;
	char key[1200];
	double xy[2] = {o->lon, o->lat};
	char nf[600];
	/* the formation is part of the key: the module matches unnamed
	 * localities on it and gives a named one the first formation seen */
	if (join_key(nf, sizeof nf, name, rw->cell[BC_T_FORMATION], NULL, 0) != 0 ||
		join_key(key, sizeof key, nf, country, o->has_coords ? xy : NULL, 2) != 0)
		return;
	uint64_t h = hash_str(key);
	size_t mask = LOC_CACHE_SLOTS - 1;
	for (size_t i = (size_t)h & mask; im->locs[i].key; i = (i + 1) & mask)
		if (strcmp(im->locs[i].key, key) == 0) {
			rw->loc_id = im->locs[i].id;
			return;
		}
	if (im->nlocs >= LOC_CACHE_SLOTS * 3 / 4) {
		for (size_t i = 0; i < LOC_CACHE_SLOTS; i++) {
			free(im->locs[i].key);
			im->locs[i].key = NULL;
		}
		im->nlocs = 0;
	}
	for (size_t i = (size_t)h & mask;; i = (i + 1) & mask)
		if (!im->locs[i].key) {
			if ((im->locs[i].key = bc__strdup(key))) {
				im->locs[i].id = rw->loc_id = ++im->loc_next_id;
				im->nlocs++;
			}
			break;
		}
}

static int import_locality(importer *im, row *rw, bc_err *err)
{
	occ *o = &rw->o;
	const char *name = rw->cell[BC_T_LOCALITY], *country = rw->cell[BC_T_COUNTRY];
	o->locality = 0;
	if (!*name && !*country && !o->has_coords)
		return BC_OK;
	/* the entries alive in the reader's table have consecutive numbers,
	 * fewer than LOC_CACHE_SLOTS of them: no two share a slot here */
	loc_fid *f = rw->loc_id ? &im->loc_fids[rw->loc_id & (LOC_CACHE_SLOTS - 1)] : NULL;
	if (f && f->id == rw->loc_id) {
		o->locality = f->fid;
		return BC_OK;
	}
	bc_locality_input in = {
		name, country, rw->cell[BC_T_FORMATION],
		o->has_coords ? o->lon : NAN, o->has_coords ? o->lat : NAN,
		rw->cell[BC_T_VERBATIM_COORDS], rw->cell[BC_T_VERBATIM_SRS], o->unc, im->batch, rw->line,
	};
	int rc = bc_locality__get_or_create(im->loc, &in, &o->locality, err);
	if (rc == BC_OK && f) {
		f->id = rw->loc_id;
		f->fid = o->locality;
	}
	return rc;
}

/* ---- storing -------------------------------------------------------------- */

static const char *const occ_params[P_N] = {
	":batch", ":line", ":occurrence_id", ":scientific_name", ":taxon_group", ":order", ":family", ":genus",
	":locality", ":earliest_stage", ":latest_stage", ":earliest_series", ":latest_series", ":earliest_system",
	":latest_system", ":earliest_ma", ":latest_ma", ":age_from", ":age_to", ":older_ma", ":younger_ma",
	":age_status", ":age_note", ":age_conflict", ":timescale", ":formation", ":member", ":bed", ":min_depth",
	":max_depth", ":depth_source", ":environment", ":preservation", ":articulation", ":individual_count",
	":reference_key", ":extra",
};

static void bt(importer *im, int p, const char *s)
{
	sqlite3_bind_text(im->st_occ, im->occ_idx[p], s, -1, SQLITE_STATIC);
}

static void bd(importer *im, int p, double v)
{
	if (isnan(v))
		sqlite3_bind_null(im->st_occ, im->occ_idx[p]);
	else
		sqlite3_bind_double(im->st_occ, im->occ_idx[p], v);
}

/* The text parameters of a row to be stored, with their lengths (so
 * SQLite need not measure them): on the reading thread. */
static void text_params(row *rw)
{
	static const struct { int p, t; } cells[] = {
		{P_OCC_ID, BC_T_OCCURRENCE_ID}, {P_SCI, BC_T_SCIENTIFIC_NAME}, {P_GROUP, BC_T_TAXON_GROUP},
		{P_ORDER, BC_T_ORDER}, {P_FAMILY, BC_T_FAMILY}, {P_GENUS, BC_T_GENUS},
		{P_ESTAGE, BC_T_EARLIEST_STAGE}, {P_LSTAGE, BC_T_LATEST_STAGE}, {P_ESERIES, BC_T_EARLIEST_SERIES},
		{P_LSERIES, BC_T_LATEST_SERIES}, {P_ESYSTEM, BC_T_EARLIEST_SYSTEM}, {P_LSYSTEM, BC_T_LATEST_SYSTEM},
		{P_FORMATION, BC_T_FORMATION}, {P_MEMBER, BC_T_MEMBER}, {P_BED, BC_T_BED}, {P_REF, BC_T_REFERENCES},
	};
	occ *o = &rw->o;
	for (size_t i = 0; i < sizeof cells / sizeof cells[0]; i++) {
		rw->text[cells[i].p] = rw->cell[cells[i].t];
		rw->text_len[cells[i].p] = (int)rw->cell_len[cells[i].t];
	}
	const struct { int p; const char *s; } other[] = {
		{P_FROM, o->age.from}, {P_TO, o->age.to}, {P_STATUS, bc_age_status_name(o->age.status)},
		{P_NOTE, o->note}, {P_DSRC, o->depth_source}, {P_ENV, o->environment},
		{P_PRES, o->preservation}, {P_ART, o->articulation},
	};
	for (size_t i = 0; i < sizeof other / sizeof other[0]; i++) {
		rw->text[other[i].p] = other[i].s;
		rw->text_len[other[i].p] = (int)strlen(other[i].s);
	}
	rw->text[P_EXTRA] = rw->extra.data;
	rw->text_len[P_EXTRA] = (int)rw->extra.len;
}

static int store_row(importer *im, row *rw, bc_err *err)
{
	static const int text[] = {
		P_OCC_ID, P_SCI, P_GROUP, P_ORDER, P_FAMILY, P_GENUS, P_ESTAGE, P_LSTAGE, P_ESERIES, P_LSERIES,
		P_ESYSTEM, P_LSYSTEM, P_FORMATION, P_MEMBER, P_BED, P_REF, P_FROM, P_TO, P_STATUS, P_NOTE,
		P_DSRC, P_ENV, P_PRES, P_ART, P_EXTRA,
	};
	sqlite3_stmt *st = im->st_occ;
	occ *o = &rw->o;
	sqlite3_reset(st);
	/* :batch and :timescale are bound once (prepare_all); a binding
	 * outlives sqlite3_reset, and every other one is made again here */
	sqlite3_bind_int64(st, im->occ_idx[P_LINE], rw->line);
	for (size_t i = 0; i < sizeof text / sizeof text[0]; i++)
		sqlite3_bind_text(st, im->occ_idx[text[i]], rw->text[text[i]], rw->text_len[text[i]], SQLITE_STATIC);
	if (o->locality)
		sqlite3_bind_int64(st, im->occ_idx[P_LOC], o->locality);
	else
		sqlite3_bind_null(st, im->occ_idx[P_LOC]);
	bd(im, P_EMA, o->e_ma);
	bd(im, P_LMA, o->l_ma);
	bd(im, P_OLDER, o->age.older_ma);
	bd(im, P_YOUNGER, o->age.younger_ma);
	sqlite3_bind_int(st, im->occ_idx[P_CONFLICT], o->conflict);
	bd(im, P_MIN, o->dmin);
	bd(im, P_MAX, o->dmax);
	if (o->has_count)
		sqlite3_bind_int64(st, im->occ_idx[P_COUNT], o->count);
	else
		sqlite3_bind_null(st, im->occ_idx[P_COUNT]);
	if (sqlite3_step(st) != SQLITE_DONE)
		return bc_db__error(im->db, err, "storing an occurrence");
	im->r->n_stored++;
	if (o->conflict)
		im->r->n_age_conflicts++;
	return BC_OK;
}

static int quarantine_row(importer *im, row *rw, bc_err *err)
{
	sqlite3_stmt *st = im->st_q;
	sqlite3_reset(st);
	bc_db__bind_int64(st, ":batch", im->batch);
	bc_db__bind_text(st, ":file", rw->name);
	bc_db__bind_int64(st, ":line", rw->line);
	bc_db__bind_text(st, ":field", rw->field);
	bc_db__bind_text(st, ":reason", rw->reason.data);
	bc_db__bind_text(st, ":raw", rw->raw.data);
	if (sqlite3_step(st) != SQLITE_DONE)
		return bc_db__error(im->db, err, "storing a quarantined row");
	im->r->n_quarantined++;
	if (im->o->report) {
		bc_buf m = {0};
		bc__buf_printf(&m, "%s:%ld: %s: %s", rw->name, rw->line, rw->field, rw->reason.data);
		if (m.data)
			im->o->report(im->o->ctx, m.data);
		bc__buf_free(&m);
	}
	return BC_OK;
}

/* Reading and checking the current record into im->cur: everything
 * but the database. Runs on the reading thread when there are two. */
static int read_row(importer *im, bc_err *err)
{
	row *rw = im->cur;
	occ *o = &rw->o;
	memset(o, 0, sizeof *o);
	o->e_ma = o->l_ma = NAN;
	rw->quarantined = 0;
	rw->nproblems = 0;
	rw->reason.len = 0;
	if (rw->reason.data)
		rw->reason.data[0] = '\0';
	rw->line = src_line(im);
	rw->name = im->name;
	rw->bytes = im->dwca ? 0 : bc_csv__bytes(im->csv);
	size_t nf = src_nfields(im);
	int rc = gather_cells(im);
	if (rc)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	if (im->dwca) {
		const char *field = NULL, *why = bc_dwca__problem(im->dwca, &field);
		if (why)
			row_problem(im, field, "%s", why);
	}
	if (nf != im->nh) {
		int extra_empty = nf > im->nh;
		for (size_t i = im->nh; extra_empty && i < nf; i++)
			if (src_field(im, i)[0])
				extra_empty = 0;
		if (!extra_empty)
			row_problem(im, "row", "%zu cells, but the header has %zu columns (a missing or extra %s, or a line break outside quotes?)",
				nf, im->nh, bc_csv__delim(im->csv) == '\t' ? "tab" : bc_csv__delim(im->csv) == ';' ? "semicolon" : "comma");
	}
	if (!rw->nproblems) {
		if (!rw->cell[BC_T_SCIENTIFIC_NAME][0])
			row_problem(im, "scientificName", "empty; every occurrence needs a taxon name");
		if ((rc = import_age(im, o)))
			return bc_err_set(err, rc, "%s:%ld: resolving the age failed", im->name, rw->line);
		import_depth(im, o);
		import_preservation(im, o);
		if ((rc = import_coords(im, o)))
			return bc_err_set(err, rc, "%s:%ld: coordinates: cannot set up PROJ", im->name, rw->line);
		const char *cnt = rw->cell[BC_T_INDIVIDUAL_COUNT];
		if (*cnt) {
			double d;
			const char *why;
			if (bc_depth__number(cnt, &d, &why) != 0 || d < 0 || d != floor(d) || d > 9e15)
				row_problem(im, "individualCount", "'%s' is not a whole number >= 0", cnt);
			else {
				o->count = (long long)d;
				o->has_count = 1;
			}
		}
	}
	if (rw->nproblems) {
		rw->quarantined = 1;
		if (raw_json(im) || !rw->reason.data)
			return bc_err_set(err, BC_ENOMEM, "out of memory");
		return BC_OK;
	}
	locality_key(im, rw);
	text_params(rw);
	return BC_OK;
}

/* Storing a checked row: the database side, on the calling thread. */
static int store_or_quarantine(importer *im, row *rw, bc_err *err)
{
	int rc;
	im->r->n_read++;
	if (rw->quarantined)
		rc = quarantine_row(im, rw, err);
	else if ((rc = import_locality(im, rw, err)) == BC_OK)
		rc = store_row(im, rw, err);
	if (rc == BC_OK && im->o->progress && im->r->n_read % PROGRESS_EVERY == 0)
		im->o->progress(im->o->ctx, rw->bytes, im->size);
	return rc;
}

/* ---- the batch -------------------------------------------------------------- */

static int refuse_duplicate(bc_db *db, const char *name, const char *sha, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(db, &st, "SELECT batch_id, started_at, file FROM import_batches WHERE kind = 'occurrences' AND sha256 = :sha", err);
	if (rc)
		return rc;
	bc_db__bind_text(st, ":sha", sha);
	int step = sqlite3_step(st);
	if (step == SQLITE_ROW)
		rc = bc_err_set(err, BC_EEXISTS, "%s: identical content was imported already as batch %lld on %s (from %s); nothing imported",
			name, (long long)sqlite3_column_int64(st, 0), sqlite3_column_text(st, 1), sqlite3_column_text(st, 2));
	else if (step != SQLITE_DONE)
		rc = bc_db__error(db, err, "reading import batches");
	sqlite3_finalize(st);
	return rc;
}

/* 1 when the database holds no occurrence batch (so no file can be a
 * repeat of one), 0 when it does, negative on an error. */
static int no_occurrence_batches(bc_db *db, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	int rc = bc_db__prepare(db, &st, "SELECT EXISTS (SELECT 1 FROM import_batches WHERE kind = 'occurrences')", err);
	if (rc)
		return rc;
	if (sqlite3_step(st) == SQLITE_ROW)
		rc = sqlite3_column_int(st, 0) ? 0 : 1;
	else
		rc = bc_db__error(db, err, "reading import batches");
	sqlite3_finalize(st);
	return rc;
}

static int read_header(importer *im, bc_err *err)
{
	int rc = im->dwca ? 1 : bc_csv__next(im->csv, err);
	if (rc == 0)
		return bc_err_set(err, BC_EINVALID, "%s: empty file; expected a header row and data rows", im->name);
	if (rc < 0)
		return rc;
	im->nh = src_nfields(im);
	im->headers = bc__calloc(im->nh, sizeof *im->headers);
	if (!im->headers)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	for (size_t i = 0; i < im->nh; i++) {
		const char *h = im->dwca ? bc_dwca__column(im->dwca, i) : bc_csv__field(im->csv, i);
		while (*h == ' ' || *h == '\t')
			h++;
		size_t n = strlen(h);
		while (n && (h[n - 1] == ' ' || h[n - 1] == '\t'))
			n--;
		if (!(im->headers[i] = bc__strndup(h, n)))
			return bc_err_set(err, BC_ENOMEM, "out of memory");
	}
	rc = bc_colmap__bind(&im->plan, im->map, (const char *const *)im->headers, im->nh, im->name, im->dwca ? 1L : bc_csv__line(im->csv), err);
	if (rc)
		return rc;
	im->plan_bound = 1;
	if (im->plan.term_col[BC_T_SCIENTIFIC_NAME] < 0 && !im->plan.defaults[BC_T_SCIENTIFIC_NAME]) {
		bc_buf list = {0};
		for (size_t i = 0; i < im->nh && i < 8; i++)
			bc__buf_printf(&list, "%s'%s'", i ? ", " : "", im->headers[i]);
		rc = bc_err_set(err, BC_EINVALID, "%s:%ld: header: no scientificName column among %s%s (wrong delimiter, or headers that need --map?)",
			im->name, im->dwca ? 1L : bc_csv__line(im->csv), list.data ? list.data : "", im->nh > 8 ? ", ..." : "");
		bc__buf_free(&list);
		return rc;
	}
	return BC_OK;
}

static int options_json(importer *im, const char *path, bc_buf *b)
{
	bc__buf_puts(b, "{\"path\":");
	bc__buf_json_string(b, path);
	if (im->dwca) {
		bc__buf_puts(b, ",\"archive\":");
		bc__buf_puts(b, bc_dwca__layout_json(im->dwca));
	} else {
		bc__buf_puts(b, ",\"delimiter\":");
		char d[2] = {bc_csv__delim(im->csv), 0};
		bc__buf_json_string(b, d);
	}
	if (im->map) {
		bc__buf_puts(b, ",\"map\":");
		bc__buf_json_string(b, bc_colmap__name(im->map));
		bc__buf_printf(b, ",\"map_sha256\":\"%s\"", bc_colmap__sha256(im->map));
	}
	bc__buf_puts(b, ",\"environments\":");
	bc__buf_json_string(b, bc_vocab__name(im->env));
	bc__buf_printf(b, ",\"environments_sha256\":\"%s\"", bc_vocab__sha256(im->env));
	bc__buf_puts(b, ",\"preservation\":");
	bc__buf_json_string(b, bc_vocab__name(im->pres));
	bc__buf_printf(b, ",\"preservation_sha256\":\"%s\"", bc_vocab__sha256(im->pres));
	bc__buf_printf(b, ",\"age_conflict_tolerance_myr\":%g,\"dry_run\":%s}", BC_AGE_CONFLICT_TOLERANCE_MYR,
		im->o->dry_run ? "true" : "false");
	return b->data ? BC_OK : BC_ENOMEM;
}

static int prepare_all(importer *im, bc_err *err)
{
	int rc;
	if ((rc = bc_db__prepare(im->db, &im->st_occ, sql_insert_occ, err)) ||
		(rc = bc_db__prepare(im->db, &im->st_q, sql_insert_quarantine, err)) ||
		(rc = bc_locality__cache_new(&im->loc, im->db, err)))
		return rc;
	for (int p = 0; p < P_N; p++)
		if (!(im->occ_idx[p] = sqlite3_bind_parameter_index(im->st_occ, occ_params[p])))
			return bc_err_set(err, BC_ERROR, "internal: no SQL parameter %s", occ_params[p]);
	/* the same for every row; a binding outlives sqlite3_reset */
	sqlite3_bind_int64(im->st_occ, im->occ_idx[P_BATCH], im->batch);
	bt(im, P_TIMESCALE, im->r->timescale);
	return BC_OK;
}

/*
 * Bulk loads: when the new rows will outnumber those already stored, the
 * indexes on occurrences are dropped inside the transaction and rebuilt
 * from their own stored definitions before COMMIT (SQLite builds an index
 * by sorting, much faster than row-by-row inserts). All or nothing, like
 * the rest of the import.
 */
typedef struct saved_indexes {
	char *sql[16];
	size_t n;
} saved_indexes;

static int indexes_drop(bc_db *db, saved_indexes *si, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	char *names[16] = {0};
	int rc = bc_db__prepare(db, &st,
		"SELECT name, sql FROM sqlite_master WHERE type = 'index' AND tbl_name = 'occurrences' AND sql IS NOT NULL", err);
	if (rc)
		return rc;
	while (si->n < 16 && sqlite3_step(st) == SQLITE_ROW) {
		names[si->n] = bc__strdup((const char *)sqlite3_column_text(st, 0));
		si->sql[si->n] = bc__strdup((const char *)sqlite3_column_text(st, 1));
		if (!names[si->n] || !si->sql[si->n]) {
			free(names[si->n]);
			free(si->sql[si->n]);
			si->sql[si->n] = NULL;
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			break;
		}
		si->n++;
	}
	sqlite3_finalize(st);
	for (size_t i = 0; i < si->n; i++) {
		if (rc == BC_OK) {
			bc_buf q = {0};
			bc__buf_puts(&q, "DROP INDEX ");
			bc__buf_puts(&q, "\"");
			for (const char *c = names[i]; *c; c++)
				bc__buf_append(&q, c, *c == '"' ? 0 : 1);
			bc__buf_puts(&q, "\"");
			rc = q.data ? bc_db__exec(db, q.data, err) : bc_err_set(err, BC_ENOMEM, "out of memory");
			bc__buf_free(&q);
		}
		free(names[i]);
	}
	return rc;
}

/*
 * SQLite's sorter keeps as much in memory as the page cache allows, then
 * merges sorted runs. One big run of a million keys is a linked-list
 * merge sort that misses the processor cache at every step; runs of 1 MB
 * stay in it and the merge reads them in order. Measured on 1,000,000
 * rows: the three indexes took 3.0 s with the 32 MB cache, 1.2 s with
 * 1 MB. With worker threads allowed, the sorter sorts a full run on a
 * helper thread while the scan fills the next, and merges on several;
 * the reading thread is idle by then. Both settings are made only for
 * the rebuild; the thread limit is put back after it.
 */
#define INDEX_SORT_CACHE "PRAGMA cache_size = -1024"
#define INDEX_SORT_THREADS 2

static int indexes_restore(bc_db *db, saved_indexes *si, bc_err *err)
{
	if (!si->n)
		return BC_OK;
	sqlite3 *h = bc_db__sqlite(db);
	int threads_was = sqlite3_limit(h, SQLITE_LIMIT_WORKER_THREADS, INDEX_SORT_THREADS);
	int rc = bc_db__exec(db, INDEX_SORT_CACHE, err);
	for (size_t i = 0; i < si->n && rc == BC_OK; i++)
		rc = bc_db__exec(db, si->sql[i], err);
	sqlite3_limit(h, SQLITE_LIMIT_WORKER_THREADS, threads_was);
	return rc;
}

static void indexes_free(saved_indexes *si)
{
	for (size_t i = 0; i < si->n; i++)
		free(si->sql[i]);
	si->n = 0;
}

/* ---- two threads: reading and checking | storing ------------------------- */

/*
 * A CSV/TSV import runs on two threads: one reads, parses and checks rows
 * (read_row) into a bounded queue of batches, the calling thread stores
 * them in the order read (store_or_quarantine), so every result, message
 * and quarantine entry is the same as on one thread. Only the calling
 * thread touches the database. Memory is bounded by the queue: PIPE_SLOTS
 * batches of PIPE_ROWS rows, and a row buffer that grew beyond
 * ROW_KEEP_BYTES (a huge cell) is released before the row is reused.
 * A waiting side is woken only when half the batches are ready for it
 * again (free for the reader, full for the storer) or the other side
 * stops: each wake-up costs both threads a system call or two, and a
 * wake-up per batch made the two threads take turns.
 * BATHYCHRON_IMPORT_THREADS=1 in the environment keeps it on one thread.
 */
#define PIPE_SLOTS 8
#define PIPE_ROWS 64
#define ROW_KEEP_BYTES 16384

typedef struct queue_slot {
	row rows[PIPE_ROWS];
	size_t n;
	int full;  /* filled by the reader and not yet stored */
	int last;  /* the reader stopped after these rows ... */
	int rc;    /* ... at the end of the input (0) or with an error */
	bc_err err;
} queue_slot;

struct row_queue {
	pthread_t thread;
	pthread_mutex_t mu;
	pthread_cond_t cv;
	int stop; /* storing failed: the reader stops */
	int nfull; /* batches filled and not yet stored */
	int reader_waits, storer_waits;
	queue_slot slot[PIPE_SLOTS];
};

static void row_free(row *rw)
{
	bc__buf_free(&rw->scratch);
	bc__buf_free(&rw->extra);
	bc__buf_free(&rw->raw);
	bc__buf_free(&rw->reason);
}

static void row_trim(row *rw)
{
	bc_buf *b[] = {&rw->scratch, &rw->extra, &rw->raw, &rw->reason};
	for (size_t i = 0; i < sizeof b / sizeof b[0]; i++)
		if (b[i]->cap > ROW_KEEP_BYTES)
			bc__buf_free(b[i]);
}

static void *queue_reader(void *arg)
{
	importer *im = arg;
	row_queue *pp = im->pp;
	for (size_t k = 0;; k = (k + 1) % PIPE_SLOTS) {
		queue_slot *s = &pp->slot[k];
		pthread_mutex_lock(&pp->mu);
		while (s->full && !pp->stop) {
			pp->reader_waits = 1;
			pthread_cond_wait(&pp->cv, &pp->mu);
		}
		pp->reader_waits = 0;
		int stop = pp->stop;
		pthread_mutex_unlock(&pp->mu);
		if (stop)
			return NULL;
		int rc = BC_OK, more = 1;
		s->n = 0;
		while (s->n < PIPE_ROWS) {
			if ((more = bc_csv__next(im->csv, &s->err)) != 1)
				break;
			im->cur = &s->rows[s->n];
			row_trim(im->cur);
			if ((rc = read_row(im, &s->err)))
				break;
			s->n++;
		}
		/* the end of the input (0), a reading error (< 0), a row error */
		if (more < 0)
			rc = more;
		s->last = more != 1 || rc != BC_OK;
		s->rc = rc;
		pthread_mutex_lock(&pp->mu);
		s->full = 1;
		pp->nfull++;
		/* a waiting storer has stored every batch: it is woken when
		 * half are full again, or at the last */
		if (pp->storer_waits && (s->last || pp->nfull >= PIPE_SLOTS / 2))
			pthread_cond_broadcast(&pp->cv);
		pthread_mutex_unlock(&pp->mu);
		if (s->last)
			return NULL;
	}
}

/* Starts the reader; BC_ERROR (nothing started) when a thread cannot be
 * had: the caller then reads on its own thread. */
static int queue_start(importer *im)
{
	const char *env = getenv("BATHYCHRON_IMPORT_THREADS");
	if (im->dwca || (env && strcmp(env, "1") == 0))
		return BC_ERROR;
	row_queue *pp = bc__calloc(1, sizeof *pp);
	if (!pp)
		return BC_ERROR;
	if (pthread_mutex_init(&pp->mu, NULL) != 0) {
		free(pp);
		return BC_ERROR;
	}
	if (pthread_cond_init(&pp->cv, NULL) != 0) {
		pthread_mutex_destroy(&pp->mu);
		free(pp);
		return BC_ERROR;
	}
	im->pp = pp;
	if (pthread_create(&pp->thread, NULL, queue_reader, im) != 0) {
		im->pp = NULL;
		pthread_cond_destroy(&pp->cv);
		pthread_mutex_destroy(&pp->mu);
		free(pp);
		return BC_ERROR;
	}
	return BC_OK;
}

/* Stores what the reader queues, in order, until the input ends or
 * either side fails; then waits for the reader. Returns 0 at the end
 * of the input, or the first error in input order. */
static int queue_store(importer *im, bc_err *err)
{
	row_queue *pp = im->pp;
	int rc = BC_OK;
	for (size_t k = 0;; k = (k + 1) % PIPE_SLOTS) {
		queue_slot *s = &pp->slot[k];
		pthread_mutex_lock(&pp->mu);
		while (!s->full) {
			pp->storer_waits = 1;
			pthread_cond_wait(&pp->cv, &pp->mu);
		}
		pp->storer_waits = 0;
		pthread_mutex_unlock(&pp->mu);
		for (size_t i = 0; i < s->n && rc == BC_OK; i++)
			rc = store_or_quarantine(im, &s->rows[i], err);
		int last = s->last;
		if (rc == BC_OK && last && s->rc) {
			rc = s->rc;
			if (err)
				*err = s->err;
		}
		pthread_mutex_lock(&pp->mu);
		s->full = 0;
		pp->nfull--;
		if (rc)
			pp->stop = 1;
		/* the slot the reader waits for is the one freed first, so it
		 * is free by the time half are: no wake-up is lost. When no slot
		 * is full, nfull is 0 and the reader is woken. */
		if (pp->reader_waits && (pp->stop || pp->nfull <= PIPE_SLOTS / 2))
			pthread_cond_broadcast(&pp->cv);
		pthread_mutex_unlock(&pp->mu);
		if (rc || last)
			break;
	}
	pthread_join(pp->thread, NULL);
	return rc;
}

static void queue_free(row_queue *pp)
{
	if (!pp)
		return;
	for (size_t k = 0; k < PIPE_SLOTS; k++)
		for (size_t i = 0; i < PIPE_ROWS; i++)
			row_free(&pp->slot[k].rows[i]);
	pthread_cond_destroy(&pp->cv);
	pthread_mutex_destroy(&pp->mu);
	free(pp);
}

static void importer_free(importer *im)
{
	bc_csv__free(im->csv);
	bc_dwca__free(im->dwca);
	for (size_t i = 0; im->headers && i < im->nh; i++)
		free(im->headers[i]);
	free(im->headers);
	if (im->plan_bound)
		bc_colplan__free(&im->plan);
	bc_colmap__free(im->map);
	bc_vocab__free(im->env);
	bc_vocab__free(im->pres);
	bc_vocab__free(im->units);
	bc_resolver_free(im->res);
	bc_chart_free(im->chart);
	bc_geo__free(im->geo);
	sqlite3_finalize(im->st_occ);
	sqlite3_finalize(im->st_q);
	bc_locality__cache_free(im->loc);
	row_free(&im->one);
	queue_free(im->pp);
	if (im->ages)
		for (size_t i = 0; i < AGE_CACHE_SLOTS; i++)
			free(im->ages[i].key);
	free(im->ages);
	if (im->locs)
		for (size_t i = 0; i < LOC_CACHE_SLOTS; i++)
			free(im->locs[i].key);
	free(im->locs);
	free(im->loc_fids);
}

int bc_import_file(bc_import_result *out, bc_db *db, const char *path, const bc_import_options *opts, bc_err *err)
{
	static const bc_import_options defaults = BC_IMPORT_OPTIONS_INIT;
	importer im;
	memset(&im, 0, sizeof im);
	memset(out, 0, sizeof *out);
	im.db = db;
	im.o = opts ? opts : &defaults;
	im.r = out;
	im.name = im.o->display_name ? im.o->display_name : path;
	char sha[65];
	int in_tx = 0, fk_was_on = 0, hash_later = 0;
	char *snap_trigger = NULL; /* the snapshot's insert trigger, put back before COMMIT */
	bc_buf options = {0};
	int64_t vocab_id;
	sqlite3_stmt *st = NULL;
	saved_indexes saved = {{0}, 0};

	int rc = BC_OK;
	im.batch_name = im.name;
	if (bc_dwca__detect(path)) {
		if ((rc = bc_dwca__open(&im.dwca, path, im.name, NULL, err)))
			goto done;
		snprintf(sha, sizeof sha, "%s", bc_dwca__sha256(im.dwca));
	} else if ((rc = no_occurrence_batches(db, err)) < 0) {
		goto done;
	} else if (rc == 1) {
		/*
		 * The first occurrence file of a database cannot repeat an
		 * earlier one: its SHA-256 is then taken by the CSV reader as it
		 * reads (on the reading thread), not in a pass of its own before
		 * (0.1 s of a 157 MB file), and recorded before COMMIT. Checked
		 * again under the write lock. A file that cannot be opened is
		 * refused here with the words bc__sha256_file would use.
		 */
		FILE *f = fopen(path, "rb");
		if (!f) {
			rc = bc_err_set(err, errno == ENOENT ? BC_ENOTFOUND : BC_EIO, "%s: %s", path, strerror(errno));
			goto done;
		}
		fclose(f);
		hash_later = 1;
		snprintf(sha, sizeof sha, "(being read)");
		rc = BC_OK;
	} else if ((rc = bc__sha256_file(path, sha, err))) {
		goto done;
	}
	/* vocabularies, map, chart */
	if ((rc = bc_vocab__builtin(&im.env, BC_VOCAB_ENVIRONMENTS, err)) ||
		(rc = bc_vocab__builtin(&im.pres, BC_VOCAB_PRESERVATION, err)) ||
		(rc = bc_vocab__builtin(&im.units, BC_VOCAB_UNITS, err)))
		goto done;
	if (im.o->environments && (rc = bc_vocab__merge_file(im.env, im.o->environments, err)))
		goto done;
	if (im.o->preservation && (rc = bc_vocab__merge_file(im.pres, im.o->preservation, err)))
		goto done;
	if (im.o->map && (rc = bc_colmap__load(&im.map, im.o->map, im.units, err)))
		goto done;
	if ((rc = bc_timescale_get(&im.chart, db, im.o->timescale, err)) || (rc = bc_resolver_new(&im.res, im.chart, err)))
		goto done;
	for (size_t i = 0; i < bc_chart_count(im.chart); i++)
		if (bc_chart_interval(im.chart, i)->older_ma > im.chart_oldest)
			im.chart_oldest = bc_chart_interval(im.chart, i)->older_ma;
	snprintf(out->timescale, sizeof out->timescale, "%s", bc_chart_name(im.chart));
	if (!hash_later && (rc = refuse_duplicate(db, im.name, sha, err)))
		goto done;
	im.ages = bc__calloc(AGE_CACHE_SLOTS, sizeof *im.ages);
	im.locs = bc__calloc(LOC_CACHE_SLOTS, sizeof *im.locs);
	im.loc_fids = bc__calloc(LOC_CACHE_SLOTS, sizeof *im.loc_fids);
	if (!im.ages || !im.locs || !im.loc_fids) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	bc_csv_options co = {0};
	if (!im.dwca && (rc = bc_csv__open(&im.csv, path, im.name, &co, err)))
		goto done;
	if (hash_later)
		bc_csv__hash_input(im.csv);
	if ((rc = read_header(&im, err)))
		goto done;
	/* A fixed, larger page cache for the one big transaction: fewer
	 * spills of dirty pages; memory still does not grow with the file. */
	if ((rc = bc_db__exec(db, "PRAGMA cache_size = -32768", err)))
		goto done;
	/* Foreign keys are not enforced while the rows go in: the importer
	 * binds only the batch id it has just inserted and locality ids the
	 * locality module found or created in this same transaction, which
	 * holds the write lock throughout, so no parent row can be missing.
	 * Enforcing them cost two parent lookups per row (0.5 s of the
	 * storing thread per million rows). Restored when the import ends. */
	{
		sqlite3_stmt *fk = NULL;
		if ((rc = bc_db__prepare(db, &fk, "PRAGMA foreign_keys", err)))
			goto done;
		fk_was_on = sqlite3_step(fk) == SQLITE_ROW && sqlite3_column_int(fk, 0);
		sqlite3_finalize(fk);
		if (fk_was_on && (rc = bc_db__exec(db, "PRAGMA foreign_keys = OFF", err)))
			goto done;
	}
	if ((rc = bc_db__begin(db, err)))
		goto done;
	in_tx = 1;
	/* Again under the write lock: the same content may have been
	 * imported by another process while this one waited for it. */
	if (hash_later && (rc = no_occurrence_batches(db, err)) != 1) {
		if (rc < 0 || (rc = bc__sha256_file(path, sha, err)))
			goto done;
		hash_later = 0;
	}
	if (!hash_later && (rc = refuse_duplicate(db, im.name, sha, err)))
		goto done;
	if ((rc = bc_vocab__store(db, im.env, &vocab_id, err)) || (rc = bc_vocab__store(db, im.pres, &vocab_id, err)))
		goto done;
	if ((rc = options_json(&im, path, &options))) {
		rc = bc_err_set(err, rc, "out of memory");
		goto done;
	}
	if ((rc = bc_db__prepare(db, &st,
		     "INSERT INTO import_batches (kind, file, sha256, options, tool_version, timescale, metadata) "
		     "VALUES ('occurrences', :file, :sha, :options, :version, :timescale, :metadata)", err)))
		goto done;
	bc_db__bind_text(st, ":file", im.name);
	bc_db__bind_text(st, ":sha", sha);
	bc_db__bind_text(st, ":options", options.data);
	bc_db__bind_text(st, ":version", BC_VERSION);
	bc_db__bind_text(st, ":timescale", out->timescale);
	bc_db__bind_text(st, ":metadata", im.dwca ? bc_dwca__metadata(im.dwca) : "");
	if (sqlite3_step(st) != SQLITE_DONE) {
		rc = bc_db__error(db, err, "recording the import batch");
		goto done;
	}
	im.batch = sqlite3_last_insert_rowid(bc_db__sqlite(db));
	sqlite3_finalize(st);
	st = NULL;
	{
		/* about 150 bytes per row in a typical sheet (common practice, no source) */
		uint64_t expect = im.dwca ? 0 : bc_csv__size(im.csv) / 150;
		double stored = 0;
		sqlite3_stmt *cnt = NULL;
		if ((rc = bc_db__prepare(db, &cnt, "SELECT coalesce(max(occurrence_pk), 0) FROM occurrences", err)))
			goto done;
		if (sqlite3_step(cnt) == SQLITE_ROW)
			stored = sqlite3_column_double(cnt, 0);
		sqlite3_finalize(cnt);
		if (expect > 100000 && (double)expect > stored && (rc = indexes_drop(db, &saved, err)))
			goto done;
	}
	/* The column snapshot is emptied here, not by a trigger per row. */
	if ((rc = bc_snapshot__suspend(db, &snap_trigger, err)))
		goto done;
	if ((rc = prepare_all(&im, err)))
		goto done;
	im.size = im.dwca ? 0 : bc_csv__size(im.csv);
	if (queue_start(&im) == BC_OK) {
		if ((rc = queue_store(&im, err)))
			goto done;
	} else {
		im.cur = &im.one;
		while ((rc = src_next(&im, err)) == 1) {
			if (im.dwca)
				im.name = bc_dwca__where(im.dwca); /* messages name the data file inside the archive */
			if ((rc = read_row(&im, err)) || (rc = store_or_quarantine(&im, &im.one, err)))
				goto done;
		}
		im.name = im.batch_name;
		if (rc < 0)
			goto done;
		rc = BC_OK;
	}
	if (im.o->progress)
		im.o->progress(im.o->ctx, im.dwca ? 0 : bc_csv__bytes(im.csv), im.size);
	if (out->n_read == 0) {
		rc = bc_err_set(err, BC_EINVALID, "%s: only a header row, no data rows; nothing imported", im.name);
		goto done;
	}
	if ((rc = bc_db__prepare(db, &st,
		     "UPDATE import_batches SET n_read = :r, n_stored = :s, n_quarantined = :q, sha256 = :sha WHERE batch_id = :b", err)))
		goto done;
	if (hash_later && bc_csv__input_sha256(im.csv, sha) != BC_OK) {
		rc = bc_err_set(err, BC_ERROR, "internal: %s: the input was not read to its end", im.name);
		goto done;
	}
	bc_db__bind_text(st, ":sha", sha);
	bc_db__bind_int64(st, ":r", out->n_read);
	bc_db__bind_int64(st, ":s", out->n_stored);
	bc_db__bind_int64(st, ":q", out->n_quarantined);
	bc_db__bind_int64(st, ":b", im.batch);
	if (sqlite3_step(st) != SQLITE_DONE) {
		rc = bc_db__error(db, err, "recording the import counts");
		goto done;
	}
	sqlite3_finalize(st);
	st = NULL;
	/* finalize before COMMIT/ROLLBACK so no statement is left pending */
	sqlite3_finalize(im.st_occ);
	sqlite3_finalize(im.st_q);
	bc_locality__cache_free(im.loc);
	im.st_occ = im.st_q = NULL;
	im.loc = NULL;
	if ((rc = indexes_restore(db, &saved, err)) || (rc = bc_snapshot__resume(db, snap_trigger, err)))
		goto done;
	if (im.o->dry_run) {
		bc_db__rollback(db);
		in_tx = 0;
	} else {
		if ((rc = bc_db__commit(db, err)))
			goto done;
		in_tx = 0;
		out->batch_id = im.batch;
	}
done:
	sqlite3_finalize(st);
	importer_free(&im);
	if (in_tx)
		bc_db__rollback(db);
	if (fk_was_on)
		bc_db__exec(db, "PRAGMA foreign_keys = ON", NULL);
	bc__buf_free(&options);
	indexes_free(&saved);
	free(snap_trigger);
	return rc;
}
