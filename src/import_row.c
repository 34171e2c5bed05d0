/*
 * import_row.c - reading and checking one row: its cells, age, depth,
 * preservation, coordinates and locality key, or the problems that
 * quarantine it. Everything the reading thread does, without the database.
 */
#include "import.h"
#include "depth.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

/* ---- small caches -------------------------------------------------- */

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
			bc__note_add(o->note, sizeof o->note, "age conflict: %s %s (%g-%g Ma) lies outside %s %s (%g-%g Ma)",
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
				bc__note_add(o->note, sizeof o->note, "age conflict: numbers %g-%g Ma lie outside %s (%g-%g Ma) by more than %g Myr; the numbers are stored",
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
			bc__note_add(o->note, sizeof o->note, "%s", tmp);
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
 * (import_locality, in import.c). Keys are looked up in the order of the
 * stored rows and the cache is emptied at the same points as a one-table
 * cache would be, so the same rows reach the locality module.
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

/* ---- the row, checked ------------------------------------------------------ */

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

/* Reading and checking the current record into im->cur: everything
 * but the database. Runs on the reading thread when there are two. */
int bc_import__read_row(importer *im, bc_err *err)
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

void bc_import__row_free(row *rw)
{
	bc__buf_free(&rw->scratch);
	bc__buf_free(&rw->extra);
	bc__buf_free(&rw->raw);
	bc__buf_free(&rw->reason);
}
