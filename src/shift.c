/*
 * shift.c - the occurrence-shift table: select occurrences, bin them by
 * age (chart rank, width or file; a span rule for long age ranges), zone
 * them by palaeodepth (design.md's straddle rule), count, and test.
 * Every rule is stated in doc/shift.md and in the output's methods stamp.
 */
#include "shift.h"

#include "db.h"
#include "locality.h"
#include "output.h"
#include "stats.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>


static const char SQL_LOCALITIES[] =
	"SELECT fid, longitude, latitude FROM localities WHERE longitude IS NOT NULL AND latitude IS NOT NULL";
static const char SQL_VOCABS[] =
	"SELECT kind, name, sha256 FROM vocabularies ORDER BY kind, vocabulary_id";

/* struct bc_shift is in shift.h (resample.c reads it too). */

static int oom(bc_err *err) { return bc_err_set(err, BC_ENOMEM, "out of memory"); }

/* ------------------------------------------------------------------ */
/* Options                                                              */
/* ------------------------------------------------------------------ */

static const char *const art_classes[] = {"articulated", "partly articulated", "disarticulated", "unknown"};

const char *bc_shift__art_name(int c) { return c >= 0 && c < 4 ? art_classes[c] : NULL; }

int bc_shift__art_class(const char *s)
{
	if (!s)
		return -1;
	for (int i = 0; i < 4; i++)
		if (strcasecmp(s, art_classes[i]) == 0)
			return i;
	if (strcasecmp(s, "partly-articulated") == 0 || strcasecmp(s, "partly_articulated") == 0)
		return BC_SHIFT__ART_PARTLY;
	return -1;
}

static int parse_list(const char *value, double *out, size_t max, size_t *n)
{
	const char *p = value;
	*n = 0;
	for (;;) {
		char *end;
		errno = 0;
		double v = strtod(p, &end);
		if (end == p || errno || !isfinite(v) || *n == max)
			return -1;
		out[(*n)++] = v;
		while (*end == ' ')
			end++;
		if (*end == '\0')
			return 0;
		if (*end != ',')
			return -1;
		p = end + 1;
	}
}

static int parse_positive(const char *s, double *out)
{
	char *end;
	errno = 0;
	double v = strtod(s, &end);
	if (end == s || *end || errno || !isfinite(v) || v <= 0)
		return -1;
	*out = v;
	return 0;
}

int bc_shift_option_set(bc_shift_options *o, const char *name, const char *value, bc_err *err)
{
	if (!name || !value)
		return bc_err_set(err, BC_EUSAGE, "shift: option without a value");
	if (strcmp(name, "group") == 0 || strcmp(name, "taxon") == 0 || strcmp(name, "preservation") == 0 ||
	    strcmp(name, "timescale") == 0) {
		if (!*value)
			return bc_err_set(err, BC_EUSAGE, "--%s: empty value", name);
		if (name[0] == 'g')
			o->group = value;
		else if (name[0] == 't' && name[1] == 'a')
			o->taxon = value;
		else if (name[0] == 'p')
			o->preservation = value;
		else
			o->timescale = value;
		return BC_OK;
	}
	if (strcmp(name, "region") == 0) {
		double r[4];
		size_t n;
		if (parse_list(value, r, 4, &n) || n != 4)
			return bc_err_set(err, BC_EUSAGE, "--region: '%s' is not WEST,SOUTH,EAST,NORTH in decimal degrees", value);
		if (r[0] < -180 || r[0] > 180 || r[2] < -180 || r[2] > 180 || r[1] < -90 || r[3] > 90 || r[1] > r[3])
			return bc_err_set(err, BC_EUSAGE, "--region: '%s': longitudes must lie in -180..180, latitudes in -90..90, south <= north", value);
		memcpy(o->region, r, sizeof r);
		o->has_region = 1;
		return BC_OK;
	}
	if (strcmp(name, "bins") == 0) {
		static const struct { const char *s; bc_bin_scheme b; } kw[] = {
			{"stage", BC_BINS_STAGE}, {"age", BC_BINS_STAGE}, {"epoch", BC_BINS_EPOCH},
			{"series", BC_BINS_EPOCH}, {"period", BC_BINS_PERIOD}, {"system", BC_BINS_PERIOD},
		};
		for (size_t i = 0; i < sizeof kw / sizeof kw[0]; i++)
			if (strcasecmp(value, kw[i].s) == 0) {
				o->bins = kw[i].b;
				return BC_OK;
			}
		double w;
		char *end;
		errno = 0;
		w = strtod(value, &end);
		if (end != value && *end == '\0') {
			if (errno || !isfinite(w) || w <= 0)
				return bc_err_set(err, BC_EUSAGE, "--bins: width '%s' must be a positive number of Myr", value);
			o->bins = BC_BINS_WIDTH;
			o->bin_width = w;
			return BC_OK;
		}
		if (!*value)
			return bc_err_set(err, BC_EUSAGE, "--bins: empty value");
		o->bins = BC_BINS_FILE;
		o->bins_file = value;
		return BC_OK;
	}
	if (strcmp(name, "span") == 0) {
		if (strcmp(value, "majority") == 0)
			o->span = BC_SPAN_MAJORITY;
		else if (strcmp(value, "all") == 0)
			o->span = BC_SPAN_ALL;
		else if (strcmp(value, "split") == 0)
			o->span = BC_SPAN_SPLIT;
		else if (strncmp(value, "max:", 4) == 0) {
			if (parse_positive(value + 4, &o->span_max_myr))
				return bc_err_set(err, BC_EUSAGE, "--span: '%s': max: needs a positive number of Myr, e.g. max:10", value);
			o->span = BC_SPAN_MAX;
		} else
			return bc_err_set(err, BC_EUSAGE, "--span: '%s' is not majority, all, split or max:MYR", value);
		return BC_OK;
	}
	if (strcmp(name, "split") == 0) {
		double s;
		if (parse_positive(value, &s))
			return bc_err_set(err, BC_EUSAGE, "--split: '%s' is not a positive depth in metres", value);
		o->zones[0] = s;
		o->n_zones = 1;
		o->zones_given = 0;
		return BC_OK;
	}
	if (strcmp(name, "zones") == 0) {
		double z[BC_SHIFT_MAX_ZONES];
		size_t n;
		if (parse_list(value, z, BC_SHIFT_MAX_ZONES, &n))
			return bc_err_set(err, BC_EUSAGE, "--zones: '%s' is not a list of at most %d depths in metres, e.g. 200,1000", value, BC_SHIFT_MAX_ZONES);
		for (size_t i = 0; i < n; i++)
			if (z[i] <= 0 || (i && z[i] <= z[i - 1]))
				return bc_err_set(err, BC_EUSAGE, "--zones: '%s': depths must be positive and strictly increasing", value);
		memcpy(o->zones, z, n * sizeof z[0]);
		o->n_zones = n;
		o->zones_given = 1;
		return BC_OK;
	}
	if (strcmp(name, "cell-km") == 0) {
		double c;
		if (parse_positive(value, &c) || c > 20000)
			return bc_err_set(err, BC_EUSAGE, "--cell-km: '%s' is not a cell size in km between 0 and 20000, e.g. 100", value);
		o->cell_km = c;
		return BC_OK;
	}
	if (strcmp(name, "level") == 0) {
		double l;
		if (parse_positive(value, &l) || l >= 1)
			return bc_err_set(err, BC_EUSAGE, "--level: '%s' is not a confidence level between 0 and 1, e.g. 0.95", value);
		o->level = l;
		return BC_OK;
	}
	int rc = bc_resample__option_set(o, name, value, err);
	if (rc != 1)
		return rc;
	return bc_err_set(err, BC_EUSAGE, "shift: unknown option --%s", name);
}

/* ------------------------------------------------------------------ */
/* Zoning and counting                                                  */
/* ------------------------------------------------------------------ */

size_t bc_shift__stride(size_t n_zones) { return BC_SHIFT__C_ZONE + n_zones + 1; }

int bc_shift__zone(double dmin, double dmax, const double *b, size_t nb)
{
	size_t k = 0;
	while (k < nb && dmin >= b[k])
		k++;
	if (k == nb)
		return (int)nb;
	return dmax <= b[k] ? (int)k : -1; /* dmin < b[k] holds here */
}

/* Index of the first bin (oldest first) whose younger bound lies below `t`. */
static size_t first_below(const bc_shift__bin *bins, size_t nbins, double t)
{
	size_t lo = 0, hi = nbins;
	while (lo < hi) {
		size_t mid = lo + (hi - lo) / 2;
		if (bins[mid].younger < t)
			hi = mid;
		else
			lo = mid + 1;
	}
	return lo;
}

static void bit_set(uint64_t *bits, size_t i) { bits[i >> 6] |= (uint64_t)1 << (i & 63); }
static int bit_get(const uint64_t *bits, size_t i) { return (int)((bits[i >> 6] >> (i & 63)) & 1); }

static void add_to_bin(double *c, const bc_shift__occ *o, double w, size_t n_zones)
{
	c[o->zone2] += w;
	c[BC_SHIFT__C_ART + o->artic] += w;
	if (n_zones) {
		if (o->zonek == BC_SHIFT__ZSTRADDLE)
			c[BC_SHIFT__C_ZSTRADDLE] += w;
		else
			c[BC_SHIFT__C_ZONE + o->zonek] += w;
	}
}

size_t bc_shift__place(const bc_shift__bin *bins, size_t nbins, double top, double bot,
		       size_t *k0_out, size_t *k1_out, double *total_out)
{
	size_t j = first_below(bins, nbins, top);
	size_t k0 = nbins, k1 = nbins, best = nbins;
	double total = 0, bestov = -1;
	if (top == bot) {
		best = bc_shift__point_bin(bins, nbins, top, j);
		if (best < nbins) {
			k0 = best;
			k1 = best + 1;
			total = 1;
		}
	} else {
		k0 = j;
		for (size_t k = j; k < nbins && bins[k].older > bot; k++) {
			double ov = fmin(top, bins[k].older) - fmax(bot, bins[k].younger);
			if (ov <= 0)
				continue;
			total += ov;
			/* ties (within 1e-9 Myr, rounding of the bounds) keep the older bin */
			if (ov > bestov + 1e-9) {
				bestov = ov;
				best = k;
			}
			k1 = k + 1;
		}
	}
	if (k0_out)
		*k0_out = k0;
	if (k1_out)
		*k1_out = k1;
	if (total_out)
		*total_out = total;
	return best;
}

/* bc_shift__count; `lbits_out` (may be NULL) receives the bit set of
 * (locality l, bin k) at l * nbins + k, for the coverage (caller frees). */
static int count_impl(double *counts, size_t *n_refs, size_t *n_locs, uint64_t **lbits_out, bc_shift__tally *tally,
		      const bc_shift__occ *occ, size_t n, const bc_shift__bin *bins, size_t nbins,
		      int rule, double max_myr, size_t n_zones, size_t ref_keys, size_t loc_keys, bc_err *err)
{
	size_t stride = bc_shift__stride(n_zones);
	uint64_t *rbits = NULL, *lbits = NULL;
	memset(counts, 0, nbins * stride * sizeof *counts);
	memset(tally, 0, sizeof *tally);
	if (n_refs) {
		rbits = bc__calloc((ref_keys * nbins + 63) / 64 + 1, sizeof *rbits);
		if (!rbits)
			return oom(err);
	}
	if (n_locs) {
		lbits = bc__calloc((loc_keys * nbins + 63) / 64 + 1, sizeof *lbits);
		if (!lbits) {
			free(rbits);
			return oom(err);
		}
	}
	for (size_t i = 0; i < n; i++) {
		const bc_shift__occ *o = &occ[i];
		double top = o->older, bot = o->younger;
		if (rule == BC_SPAN_MAX && top - bot > max_myr) {
			tally->n_too_long++;
			continue;
		}
		size_t k0, k1;
		double total;
		size_t best = bc_shift__place(bins, nbins, top, bot, &k0, &k1, &total);
		if (best == nbins) {
			tally->n_outside++;
			continue;
		}
		tally->n_used++;
		int multi = 0;
		for (size_t k = k0; k < k1; k++) {
			double ov = top == bot ? 1 : fmin(top, bins[k].older) - fmax(bot, bins[k].younger);
			if (ov <= 0)
				continue;
			if (k != best)
				multi = 1;
			double w;
			if (rule == BC_SPAN_ALL)
				w = 1;
			else if (rule == BC_SPAN_SPLIT)
				w = ov / total;
			else if (k == best)
				w = 1;
			else
				continue;
			add_to_bin(&counts[k * stride], o, w, n_zones);
			if (rbits && o->ref >= 0)
				bit_set(rbits, (size_t)o->ref * nbins + k);
			if (lbits && o->loc >= 0)
				bit_set(lbits, (size_t)o->loc * nbins + k);
		}
		if (multi)
			tally->n_multi++;
	}
	for (size_t k = 0; k < nbins; k++) {
		if (n_refs) {
			n_refs[k] = 0;
			for (size_t r = 0; r < ref_keys; r++)
				n_refs[k] += (size_t)bit_get(rbits, r * nbins + k);
		}
		if (n_locs) {
			n_locs[k] = 0;
			for (size_t l = 0; l < loc_keys; l++)
				n_locs[k] += (size_t)bit_get(lbits, l * nbins + k);
		}
	}
	free(rbits);
	if (lbits_out)
		*lbits_out = lbits;
	else
		free(lbits);
	return BC_OK;
}

int bc_shift__count(double *counts, size_t *n_refs, size_t *n_locs, bc_shift__tally *tally,
		    const bc_shift__occ *occ, size_t n, const bc_shift__bin *bins, size_t nbins,
		    int rule, double max_myr, size_t n_zones, size_t ref_keys, size_t loc_keys, bc_err *err)
{
	return count_impl(counts, n_refs, n_locs, NULL, tally, occ, n, bins, nbins, rule, max_myr, n_zones, ref_keys, loc_keys, err);
}

/* ------------------------------------------------------------------ */
/* Bins                                                                 */
/* ------------------------------------------------------------------ */

void bc_shift__bins_free(bc_shift__bin *bins, size_t n)
{
	if (!bins)
		return;
	for (size_t i = 0; i < n; i++)
		free(bins[i].name);
	free(bins);
}

static int bin_cmp(const void *a, const void *b)
{
	const bc_shift__bin *x = a, *y = b;
	if (x->older != y->older)
		return x->older > y->older ? -1 : 1;
	return x->younger > y->younger ? -1 : x->younger < y->younger;
}

/* Sorts oldest first and refuses overlapping bins. */
static int bins_check(bc_shift__bin *bins, size_t n, const char *what, bc_err *err)
{
	qsort(bins, n, sizeof *bins, bin_cmp);
	for (size_t i = 1; i < n; i++)
		if (bins[i].older > bins[i - 1].younger)
			return bc_err_set(err, BC_EINVALID, "%s: bins %s (%g-%g Ma) and %s (%g-%g Ma) overlap",
				what, bins[i - 1].name, bins[i - 1].older, bins[i - 1].younger,
				bins[i].name, bins[i].older, bins[i].younger);
	return BC_OK;
}

/* Splits one line of a bins file into at most 4 fields (quotes removed). */
static size_t split_fields(char *line, char sep, char **f, size_t max)
{
	size_t n = 0;
	char *p = line;
	while (n < max) {
		while (*p == ' ')
			p++;
		if (*p == '"') {
			char *w = ++p, *start = p;
			while (*p && !(*p == '"' && p[1] != '"')) {
				if (*p == '"')
					p++;
				*w++ = *p++;
			}
			if (*p == '"')
				p++;
			*w = '\0';
			f[n++] = start;
			while (*p && *p != sep)
				p++;
		} else {
			f[n++] = p;
			while (*p && *p != sep)
				p++;
		}
		if (*p != sep)
			break;
		*p++ = '\0';
	}
	for (size_t i = 0; i < n; i++) {
		size_t len = strlen(f[i]);
		while (len && (f[i][len - 1] == ' ' || f[i][len - 1] == '\r'))
			f[i][--len] = '\0';
	}
	return n;
}

int bc_shift__bins_read(bc_shift__bin **out, size_t *nout, const char *path, bc_err *err)
{
	char *text = NULL;
	size_t len = 0, n = 0, cap = 0;
	bc_shift__bin *bins = NULL;
	*out = NULL;
	*nout = 0;
	int rc = bc__read_file(path, &text, &len, err);
	if (rc == BC_ENOTFOUND)
		return bc_err_set(err, BC_EUSAGE, "--bins: '%s' is not stage, epoch, period, a width in Myr, or an existing bins file (name, older bound, younger bound)", path);
	if (rc)
		return rc;
	char sep = strchr(text, '\t') ? '\t' : ',';
	char *line = text;
	static const char *const names[] = {"name", "older bound", "younger bound"};
	for (long lineno = 1; rc == BC_OK && line && *line; lineno++) {
		char *nl = strchr(line, '\n');
		if (nl)
			*nl = '\0';
		char *f[4];
		size_t nf = 0;
		if (line[0] != '#' && line[strspn(line, " \t\r")] != '\0')
			nf = split_fields(line, sep, f, 4);
		if (nf) {
			double v[2];
			int bad = -1;
			if (nf < 3)
				rc = bc_err_set(err, BC_EINVALID, "%s:%ld: %s: missing (expected name, older bound, younger bound)", path, lineno, names[nf]);
			for (int k = 0; rc == BC_OK && k < 2; k++) {
				char *end;
				errno = 0;
				v[k] = strtod(f[k + 1], &end);
				if (end == f[k + 1] || *end || errno || !isfinite(v[k]))
					bad = k;
			}
			if (rc == BC_OK && bad >= 0) {
				if (lineno == 1 || n == 0) {
					/* a header row */
				} else {
					rc = bc_err_set(err, BC_EINVALID, "%s:%ld: %s: '%s' is not a number of Ma", path, lineno, names[bad + 1], f[bad + 1]);
				}
			} else if (rc == BC_OK) {
				if (!*f[0])
					rc = bc_err_set(err, BC_EINVALID, "%s:%ld: name: empty", path, lineno);
				else if (!(v[0] > v[1]) || v[1] < 0)
					rc = bc_err_set(err, BC_EINVALID, "%s:%ld: older bound: %g Ma must be older (larger) than the younger bound %g Ma, both >= 0", path, lineno, v[0], v[1]);
				else if (n == cap) {
					size_t nc = cap ? 2 * cap : 32;
					bc_shift__bin *p = bc__realloc(bins, nc * sizeof *p);
					if (!p)
						rc = oom(err);
					else {
						bins = p;
						cap = nc;
					}
				}
				if (rc == BC_OK) {
					bins[n].name = bc__strdup(f[0]);
					bins[n].older = v[0];
					bins[n].younger = v[1];
					if (!bins[n].name)
						rc = oom(err);
					else
						n++;
				}
			}
		}
		line = nl ? nl + 1 : NULL;
	}
	free(text);
	if (rc == BC_OK && n == 0)
		rc = bc_err_set(err, BC_EINVALID, "%s: no bins (expected lines of name, older bound, younger bound)", path);
	if (rc == BC_OK)
		rc = bins_check(bins, n, path, err);
	if (rc) {
		bc_shift__bins_free(bins, n);
		return rc;
	}
	*out = bins;
	*nout = n;
	return BC_OK;
}

static int bins_from_chart(bc_shift *s, bc_db *db, bc_shift__bin **out, size_t *nout, bc_err *err)
{
	bc_chart *owned = NULL;
	const bc_chart *chart = s->opts.chart;
	int rc = BC_OK;
	*out = NULL;
	*nout = 0;
	if (!chart) {
		rc = bc_timescale_get(&owned, db, s->opts.timescale, err);
		if (rc)
			return rc;
		chart = owned;
	}
	if (!(s->chart_name = bc__strdup(bc_chart_name(chart))) || !(s->chart_source = bc__strdup(bc_chart_source(chart)))) {
		bc_chart_free(owned);
		return oom(err);
	}
	bc_rank want = s->opts.bins == BC_BINS_EPOCH ? BC_RANK_EPOCH : s->opts.bins == BC_BINS_PERIOD ? BC_RANK_PERIOD : BC_RANK_AGE;
	size_t nc = bc_chart_count(chart), n = 0;
	bc_shift__bin *bins = bc__calloc(nc ? nc : 1, sizeof *bins);
	if (!bins)
		rc = oom(err);
	for (size_t i = 0; rc == BC_OK && i < nc; i++) {
		const bc_interval *iv = bc_chart_interval(chart, i);
		if (iv->rank != want || !(iv->older_ma > iv->younger_ma))
			continue;
		bins[n].name = bc__strdup(iv->name);
		bins[n].older = iv->older_ma;
		bins[n].younger = iv->younger_ma;
		if (!bins[n].name)
			rc = oom(err);
		else
			n++;
	}
	if (rc == BC_OK && n == 0)
		rc = bc_err_set(err, BC_EINVALID, "chart %s has no intervals of rank %s", bc_chart_name(chart), bc_rank_name(want));
	if (rc == BC_OK) {
		char what[256];
		snprintf(what, sizeof what, "chart %s", bc_chart_name(chart));
		rc = bins_check(bins, n, what, err);
	}
	bc_chart_free(owned);
	if (rc) {
		bc_shift__bins_free(bins, n);
		return rc;
	}
	*out = bins;
	*nout = n;
	return BC_OK;
}

/* Equal-width bins with edges at multiples of the width from 0 Ma,
 * covering the age ranges of the occurrences. */
static int bins_width(const bc_shift *s, bc_shift__bin **out, size_t *nout, bc_err *err)
{
	double w = s->opts.bin_width, lo = INFINITY, hi = -INFINITY;
	*out = NULL;
	*nout = 0;
	for (size_t i = 0; i < s->nocc; i++) {
		lo = fmin(lo, s->occ[i].younger);
		hi = fmax(hi, s->occ[i].older);
	}
	double k0 = floor(lo / w), k1 = ceil(hi / w);
	if (k1 <= k0)
		k1 = k0 + 1;
	if (k1 - k0 > 100000)
		return bc_err_set(err, BC_EUSAGE, "--bins %g: the ages %g-%g Ma would make %.0f bins; choose a wider bin", w, hi, lo, k1 - k0);
	size_t n = (size_t)(k1 - k0);
	bc_shift__bin *bins = bc__calloc(n, sizeof *bins);
	if (!bins)
		return oom(err);
	for (size_t i = 0; i < n; i++) {
		double k = k1 - (double)i;
		bins[i].older = k * w;
		bins[i].younger = (k - 1) * w;
		char name[64];
		snprintf(name, sizeof name, "%g-%g Ma", bins[i].older, bins[i].younger);
		if (!(bins[i].name = bc__strdup(name))) {
			bc_shift__bins_free(bins, n);
			return oom(err);
		}
	}
	*out = bins;
	*nout = n;
	return BC_OK;
}

/* ------------------------------------------------------------------ */
/* Loading                                                              */
/* ------------------------------------------------------------------ */

/* Interning of reference keys: open addressing on FNV-1a. */
typedef struct strmap {
	int32_t *slot;  /* index into keys, -1 empty */
	size_t cap;
} strmap;

static uint64_t fnv(const char *s)
{
	uint64_t h = 1469598103934665603ULL;
	for (; *s; s++)
		h = (h ^ (unsigned char)*s) * 1099511628211ULL;
	return h;
}

static int intern(bc_shift *s, strmap *m, const char *key, int32_t *out)
{
	if ((s->nref + 1) * 2 > m->cap) {
		size_t nc = m->cap ? 2 * m->cap : 1024;
		int32_t *ns = bc__malloc(nc * sizeof *ns);
		char **nk = bc__realloc(s->refkeys, (nc / 2) * sizeof *nk);
		if (!ns || !nk) {
			free(ns);
			if (nk)
				s->refkeys = nk;
			return BC_ENOMEM;
		}
		s->refkeys = nk;
		for (size_t i = 0; i < nc; i++)
			ns[i] = -1;
		for (size_t i = 0; i < s->nref; i++) {
			size_t h = (size_t)fnv(s->refkeys[i]) & (nc - 1);
			while (ns[h] >= 0)
				h = (h + 1) & (nc - 1);
			ns[h] = (int32_t)i;
		}
		free(m->slot);
		m->slot = ns;
		m->cap = nc;
	}
	size_t h = (size_t)fnv(key) & (m->cap - 1);
	while (m->slot[h] >= 0) {
		if (strcmp(s->refkeys[m->slot[h]], key) == 0) {
			*out = m->slot[h];
			return BC_OK;
		}
		h = (h + 1) & (m->cap - 1);
	}
	char *k = bc__strdup(key);
	if (!k)
		return BC_ENOMEM;
	s->refkeys[s->nref] = k;
	m->slot[h] = (int32_t)s->nref;
	*out = (int32_t)s->nref++;
	return BC_OK;
}

static int cmp64(const void *a, const void *b)
{
	int64_t x = *(const int64_t *)a, y = *(const int64_t *)b;
	return (x > y) - (x < y);
}

/* What load() keeps between rows. */
typedef struct load_ctx {
	bc_shift *s;
	strmap refs;
	int64_t *locids;
	size_t cap;
	int64_t maxloc;
	int last_class;
	char last_art[64];
	int32_t *id_ref;  /* snapshot string index -> interned reference (-2: not yet) */
	int8_t *id_class; /* snapshot string index -> articulation class (-2: not yet) */
} load_ctx;

/* The articulation class of a row's text, remembering the last one. */
static int row_class(load_ctx *c, const char *art)
{
	if (strcmp(art, c->last_art) != 0) {
		c->last_class = bc_shift__art_class(art);
		snprintf(c->last_art, sizeof c->last_art, "%s", art);
	}
	return strlen(art) < sizeof c->last_art ? c->last_class : bc_shift__art_class(art);
}

/* Interned reference and class of a row: through the snapshot's indices
 * when it has them (each distinct string mapped once), else by text. */
static int row_ref_class(load_ctx *c, const bc_shift__row *r, int32_t *ref, int *cls)
{
	if (r->n_ids && !c->id_ref) {
		c->id_ref = bc__malloc(r->n_ids * sizeof *c->id_ref);
		c->id_class = bc__malloc(r->n_ids * sizeof *c->id_class);
		if (!c->id_ref || !c->id_class)
			return BC_ENOMEM;
		for (size_t i = 0; i < r->n_ids; i++)
			c->id_ref[i] = c->id_class[i] = -2;
	}
	if (!r->n_ids) {
		*ref = -1;
		*cls = row_class(c, r->art);
		return *r->ref ? intern(c->s, &c->refs, r->ref, ref) : BC_OK;
	}
	if (c->id_class[r->art_id] == -2)
		c->id_class[r->art_id] = (int8_t)bc_shift__art_class(r->art);
	*cls = c->id_class[r->art_id];
	if (c->id_ref[r->ref_id] == -2) {
		c->id_ref[r->ref_id] = -1;
		if (*r->ref && intern(c->s, &c->refs, r->ref, &c->id_ref[r->ref_id]))
			return BC_ENOMEM;
	}
	*ref = c->id_ref[r->ref_id];
	return BC_OK;
}

static int load_row(void *ctx, const bc_shift__row *r, bc_err *err)
{
	load_ctx *c = ctx;
	bc_shift *s = c->s;
	if (isnan(r->dmin) && isnan(r->dmax)) {
		s->sum.n_no_depth++;
		return BC_OK;
	}
	if (s->nocc == c->cap) {
		size_t nc = c->cap ? 2 * c->cap : 4096;
		bc_shift__occ *p = bc__realloc(s->occ, nc * sizeof *p);
		int64_t *q = p ? bc__realloc(c->locids, nc * sizeof *q) : NULL;
		if (p)
			s->occ = p;
		if (!q)
			return oom(err);
		c->locids = q;
		c->cap = nc;
	}
	bc_shift__occ *o = &s->occ[s->nocc];
	o->pk = r->pk;
	o->older = r->older;
	o->younger = r->younger;
	/* One depth alone stands for the range [d, d]. */
	o->dmin = isnan(r->dmin) ? r->dmax : r->dmin;
	o->dmax = isnan(r->dmax) ? r->dmin : r->dmax;
	int a;
	if (row_ref_class(c, r, &o->ref, &a))
		return oom(err);
	o->artic = (uint8_t)(a < 0 ? BC_SHIFT__ART_UNKNOWN : a);
	int z2 = bc_shift__zone(o->dmin, o->dmax, s->opts.zones, 1);
	o->zone2 = (uint8_t)(z2 < 0 ? BC_SHIFT__STRADDLE : z2);
	int zk = bc_shift__zone(o->dmin, o->dmax, s->opts.zones, s->opts.n_zones);
	o->zonek = (uint8_t)(zk < 0 ? BC_SHIFT__ZSTRADDLE : zk);
	c->locids[s->nocc] = r->loc;
	if (r->loc > c->maxloc)
		c->maxloc = r->loc;
	s->nocc++;
	return BC_OK;
}

/* The coordinates of each dense locality index (NaN when none), for the
 * coverage: one read of the localities table, not a join per occurrence.
 * `u` NULL: the index is the fid; else u[0 .. nloc) are the sorted fids. */
static int load_coordinates(bc_shift *s, bc_db *db, const int64_t *u, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	size_t n = s->nloc ? s->nloc : 1;
	s->loc_lon = bc__malloc(n * sizeof *s->loc_lon);
	s->loc_lat = bc__malloc(n * sizeof *s->loc_lat);
	if (!s->loc_lon || !s->loc_lat)
		return oom(err);
	for (size_t i = 0; i < n; i++)
		s->loc_lon[i] = s->loc_lat[i] = NAN;
	if (!s->nloc)
		return BC_OK;
	int rc = bc_db__prepare(db, &st, SQL_LOCALITIES, err), step = SQLITE_DONE;
	while (rc == BC_OK && (step = sqlite3_step(st)) == SQLITE_ROW) {
		int64_t fid = sqlite3_column_int64(st, 0);
		size_t k = s->nloc;
		if (!u) {
			k = fid >= 0 && (uint64_t)fid < s->nloc ? (size_t)fid : s->nloc;
		} else {
			size_t lo = 0, hi = s->nloc;
			while (lo < hi) {
				size_t mid = (lo + hi) / 2;
				if (u[mid] < fid)
					lo = mid + 1;
				else
					hi = mid;
			}
			k = lo < s->nloc && u[lo] == fid ? lo : s->nloc;
		}
		if (k < s->nloc) {
			s->loc_lon[k] = sqlite3_column_double(st, 1);
			s->loc_lat[k] = sqlite3_column_double(st, 2);
		}
	}
	if (rc == BC_OK && step != SQLITE_DONE)
		rc = bc_db__error(db, err, "reading locality coordinates");
	sqlite3_finalize(st);
	return rc;
}

static int load(bc_shift *s, bc_db *db, bc_err *err)
{
	load_ctx c = {s, {NULL, 0}, NULL, 0, -1, -1, "", NULL, NULL};
	int64_t *u = NULL; /* sorted distinct fids when they are not used directly */
	bc_shift__selected sel;
	int rc = bc_shift__select(db, &s->opts, NULL, load_row, &c, &sel, err);
	s->sum.n_selected = sel.n_selected;
	s->sum.n_no_coordinates = sel.n_no_coordinates;
	s->sum.n_outside_region = sel.n_outside_region;
	memcpy(s->sum.data_sha256, sel.data_sha256, sizeof s->sum.data_sha256);
	if (rc)
		goto done;
	int64_t maxloc = c.maxloc, *locids = c.locids;
	/* Dense locality indices: ids are AUTOINCREMENT, so usually direct. */
	if (maxloc >= 0 && (uint64_t)maxloc < 4 * (uint64_t)s->nocc + 1024 && maxloc < INT32_MAX) {
		for (size_t i = 0; i < s->nocc; i++)
			s->occ[i].loc = (int32_t)locids[i];
		s->nloc = (size_t)maxloc + 1;
	} else if (maxloc >= 0) {
		u = bc__malloc(s->nocc * sizeof *u);
		size_t nu = 0;
		if (!u) {
			rc = oom(err);
			goto done;
		}
		for (size_t i = 0; i < s->nocc; i++)
			if (locids[i] >= 0)
				u[nu++] = locids[i];
		qsort(u, nu, sizeof *u, cmp64);
		size_t m = 0;
		for (size_t i = 0; i < nu; i++)
			if (!m || u[m - 1] != u[i])
				u[m++] = u[i];
		for (size_t i = 0; i < s->nocc; i++) {
			s->occ[i].loc = -1;
			if (locids[i] < 0)
				continue;
			size_t lo = 0, hi = m;
			while (lo < hi) {
				size_t mid = (lo + hi) / 2;
				if (u[mid] < locids[i])
					lo = mid + 1;
				else
					hi = mid;
			}
			s->occ[i].loc = (int32_t)lo;
		}
		s->nloc = m;
	} else {
		for (size_t i = 0; i < s->nocc; i++)
			s->occ[i].loc = -1;
	}
	rc = load_coordinates(s, db, u, err);
done:
	free(u);
	free(c.refs.slot);
	free(c.locids);
	free(c.id_ref);
	free(c.id_class);
	return rc;
}

int bc_shift__vocabs(char **out, bc_db *db, bc_err *err)
{
	sqlite3_stmt *st = NULL;
	bc_buf b = {0};
	int rc = bc_db__prepare(db, &st, SQL_VOCABS, err), step = SQLITE_DONE;
	*out = NULL;
	if (rc)
		return rc;
	while (rc == BC_OK && (step = sqlite3_step(st)) == SQLITE_ROW)
		rc = bc__buf_printf(&b, "%s%s %s sha256:%s", b.len ? "; " : "", (const char *)sqlite3_column_text(st, 0),
			(const char *)sqlite3_column_text(st, 1), (const char *)sqlite3_column_text(st, 2)) ? oom(err) : BC_OK;
	if (rc == BC_OK && step != SQLITE_DONE)
		rc = bc_db__error(db, err, "reading the vocabularies");
	sqlite3_finalize(st);
	if (rc == BC_OK && !b.len && bc__buf_puts(&b, "none recorded in the database"))
		rc = oom(err);
	if (rc) {
		bc__buf_free(&b);
		return rc;
	}
	*out = b.data;
	return BC_OK;
}

/* ------------------------------------------------------------------ */
/* Statistics                                                           */
/* ------------------------------------------------------------------ */

static void bin_stats(bc_shift *s, const double *counts, const size_t *nrefs, const size_t *nlocs, size_t first)
{
	size_t stride = bc_shift__stride(s->opts.zones_given ? s->opts.n_zones : 0);
	double level = s->opts.level;
	for (size_t i = 0; i < s->nbins; i++) {
		const double *c = &counts[(first + i) * stride];
		bc_shift_bin *b = &s->out[i];
		b->name = s->bins[i].name;
		b->older_ma = s->bins[i].older;
		b->younger_ma = s->bins[i].younger;
		b->n_shallow = c[BC_SHIFT__C_SHALLOW];
		b->n_deep = c[BC_SHIFT__C_DEEP];
		b->n_straddle = c[BC_SHIFT__C_STRADDLE];
		b->n = b->n_shallow + b->n_deep + b->n_straddle;
		double m = b->n_shallow + b->n_deep;
		b->frac_deep = b->frac_deep_lo = b->frac_deep_hi = NAN;
		if (m > 0) {
			b->frac_deep = b->n_deep / m;
			bc_stats__wilson(b->n_deep, m, level, &b->frac_deep_lo, &b->frac_deep_hi);
		}
		b->n_references = nrefs[first + i];
		b->n_localities = nlocs[first + i];
		b->n_articulated = c[BC_SHIFT__C_ART + BC_SHIFT__ART_ARTICULATED];
		b->n_partly_articulated = c[BC_SHIFT__C_ART + BC_SHIFT__ART_PARTLY];
		b->n_disarticulated = c[BC_SHIFT__C_ART + BC_SHIFT__ART_DISARTICULATED];
		b->n_articulation_unknown = c[BC_SHIFT__C_ART + BC_SHIFT__ART_UNKNOWN];
		b->diff = b->diff_lo = b->diff_hi = b->fisher_p = NAN;
		if (i > 0) {
			const bc_shift_bin *p = &s->out[i - 1];
			double pm = p->n_shallow + p->n_deep;
			if (m > 0 && pm > 0) {
				/* later (this) minus earlier (previous) */
				bc_stats__newcombe_diff(b->n_deep, m, p->n_deep, pm, level, &b->diff, &b->diff_lo, &b->diff_hi);
				b->fisher_p = bc_stats__fisher_two_sided(lround(p->n_deep), lround(p->n_shallow),
					lround(b->n_deep), lround(b->n_shallow));
			}
		}
		b->n_zone = NULL;
		b->n_zone_straddle = NAN;
		if (s->opts.zones_given) {
			double *z = &s->zone_counts[i * (s->opts.n_zones + 1)];
			for (size_t k = 0; k <= s->opts.n_zones; k++)
				z[k] = c[BC_SHIFT__C_ZONE + k];
			b->n_zone = z;
			b->n_zone_straddle = c[BC_SHIFT__C_ZSTRADDLE];
		}
	}
}

/* Spatial coverage of each reported bin: the localities counted in its
 * n_localities (bit l * ncand + first + i of `lbits`), through the geo
 * module's coverage, with every located locality projected once. */
static int bin_coverage(bc_shift *s, const uint64_t *lbits, size_t ncand, size_t first, bc_err *err)
{
	bc_coverage_options co = BC_COVERAGE_OPTIONS_INIT;
	co.cell_km = s->opts.cell_km;
	co.mst_max_points = BC_SHIFT_MST_MAX_POINTS;
	size_t m = s->nloc ? s->nloc : 1, nset = 0;
	double *lon = bc__malloc(m * sizeof *lon), *lat = bc__malloc(m * sizeof *lat);
	size_t *at = bc__malloc(m * sizeof *at), *idx = bc__malloc(m * sizeof *idx); /* locality -> set point */
	bc_coverage__set *set = NULL;
	int rc = lon && lat && at && idx ? BC_OK : oom(err);
	for (size_t l = 0; rc == BC_OK && l < s->nloc; l++) {
		at[l] = SIZE_MAX;
		if (isnan(s->loc_lon[l]))
			continue;
		lon[nset] = s->loc_lon[l];
		lat[nset] = s->loc_lat[l];
		at[l] = nset++;
	}
	if (rc == BC_OK)
		rc = bc_coverage__set_new(&set, NULL, lon, lat, nset, &co, err);
	for (size_t i = 0; rc == BC_OK && i < s->nbins; i++) {
		bc_shift_bin *b = &s->out[i];
		size_t n = 0, unloc = 0, k = first + i;
		for (size_t l = 0; l < s->nloc; l++) {
			if (!bit_get(lbits, l * ncand + k))
				continue;
			if (at[l] == SIZE_MAX)
				unloc++;
			else
				idx[n++] = at[l];
		}
		bc_coverage cv;
		b->n_unlocated = unloc;
		if ((rc = bc_coverage__set_of(&cv, set, idx, n, err)) != BC_OK)
			break;
		b->n_cells = cv.n_cells;
		b->lat_range_deg = cv.lat_range;
		b->mst_km = cv.mst_km;
		s->sum.n_bins_mst_skipped += (size_t)isnan(cv.mst_km);
	}
	bc_coverage__set_free(set);
	free(lon);
	free(lat);
	free(at);
	free(idx);
	return rc;
}

static void across_stats(bc_shift *s)
{
	bc_shift_tests *t = &s->tests;
	t->trend_z = t->trend_p = NAN;
	t->logit_intercept = t->logit_slope = t->logit_slope_se = t->logit_p = NAN;
	t->break_ma = t->break_lr = NAN;
	t->break_before = t->break_after = NULL;
	t->n_bins_tested = 0;
	size_t k = 0;
	double *sv = bc__calloc(s->nbins, sizeof *sv), *nv = bc__calloc(s->nbins, sizeof *nv), *xv = bc__calloc(s->nbins, sizeof *xv);
	size_t *idx = bc__calloc(s->nbins, sizeof *idx);
	double stot = 0, ntot = 0;
	if (!sv || !nv || !xv || !idx)
		goto done;
	for (size_t i = 0; i < s->nbins; i++) {
		const bc_shift_bin *b = &s->out[i];
		double m = b->n_shallow + b->n_deep;
		if (!(m > 0))
			continue;
		sv[k] = b->n_deep;
		nv[k] = m;
		/* scores: minus the midpoint age, so positive = toward the present */
		xv[k] = -(b->older_ma + b->younger_ma) / 2;
		idx[k++] = i;
		stot += b->n_deep;
		ntot += m;
	}
	t->n_bins_tested = k;
	if (k < 2 || !(stot > 0) || !(stot < ntot))
		goto done;
	bc_trend tr;
	if (bc_stats__trend(sv, nv, xv, k, &tr) == 0 && isfinite(tr.z)) {
		t->trend_z = tr.z;
		t->trend_p = tr.p;
	}
	bc_logistic lg;
	memset(&lg, 0, sizeof lg);
	if (bc_stats__logistic(sv, nv, xv, k, &lg) == 0) {
		t->logit_converged = lg.converged;
		if (lg.converged) {
			t->logit_intercept = lg.intercept;
			t->logit_slope = lg.slope;
			t->logit_slope_se = lg.slope_se;
			t->logit_p = lg.p;
		}
	}
	size_t at = 0;
	double lr = NAN;
	if (bc_stats__breakpoint(sv, nv, k, &at, &lr) == 0 && at >= 1 && at < k) {
		t->break_ma = s->out[idx[at]].older_ma;
		t->break_before = s->out[idx[at - 1]].name;
		t->break_after = s->out[idx[at]].name;
		t->break_lr = lr;
	}
done:
	free(sv);
	free(nv);
	free(xv);
	free(idx);
}

/* ------------------------------------------------------------------ */
/* Compute                                                              */
/* ------------------------------------------------------------------ */

void bc_shift_free(bc_shift *s)
{
	if (!s)
		return;
	free(s->group);
	free(s->taxon);
	free(s->preservation);
	free(s->timescale);
	free(s->bins_file);
	free(s->db_path);
	free(s->chart_name);
	free(s->chart_source);
	free(s->bins_file_sha);
	free(s->vocabs);
	free(s->occ);
	free(s->loc_lon);
	free(s->loc_lat);
	for (size_t i = 0; i < s->nref; i++)
		free(s->refkeys[i]);
	free(s->refkeys);
	bc_shift__bins_free(s->bins, s->nbins);
	free(s->out);
	free(s->zone_counts);
	bc_resample__free(s->rs);
	free(s);
}

int bc_shift__dup_opt(char **dst, const char **field)
{
	if (!*field)
		return 0;
	if (!(*dst = bc__strdup(*field)))
		return -1;
	*field = *dst;
	return 0;
}

/* The selection as words, for messages and the stamp. */
void bc_shift__describe_selection(const bc_shift_options *o, bc_buf *b)
{
	size_t start = b->len;
	if (o->group)
		bc__buf_printf(b, "%sgroup %s", b->len > start ? ", " : "", o->group);
	if (o->taxon)
		bc__buf_printf(b, "%staxon %s", b->len > start ? ", " : "", o->taxon);
	if (o->preservation)
		bc__buf_printf(b, "%spreservation %s", b->len > start ? ", " : "", o->preservation);
	if (o->has_region)
		bc__buf_printf(b, "%sregion %g,%g,%g,%g (W,S,E,N)", b->len > start ? ", " : "", o->region[0], o->region[1], o->region[2], o->region[3]);
	if (b->len == start)
		bc__buf_puts(b, "all occurrences");
}

void bc_shift__excluded_words(bc_buf *b, const bc_shift__excluded *ex, size_t n)
{
	for (size_t i = 0; i < n; i++)
		if (ex[i].n)
			bc__buf_printf(b, "%s%zu %s", b->len ? ", " : "", ex[i].n, ex[i].why);
}

int bc_shift__nothing_left(bc_err *err, const char *db_path, const bc_shift_options *o, size_t n_selected, size_t n_left,
			   const bc_shift__excluded *ex, size_t nex, const char *verb)
{
	bc_buf w = {0}, x = {0};
	int rc = BC_OK;
	if (n_selected && n_left)
		return BC_OK;
	bc_shift__describe_selection(o, &w);
	if (!n_selected) {
		rc = bc_err_set(err, BC_EINVALID, "%s: no occurrences match the selection (%s)", db_path, w.data ? w.data : "");
	} else {
		bc_shift__excluded_words(&x, ex, nex);
		rc = bc_err_set(err, BC_EINVALID, "%s: %zu occurrences match the selection (%s), but none is left to %s: %s",
			db_path, n_selected, w.data ? w.data : "", verb, x.data ? x.data : "");
	}
	bc__buf_free(&w);
	bc__buf_free(&x);
	return rc;
}

/* Why occurrences were left out, in the order of the rules; returns the count (5). */
static size_t shift_excluded(const bc_shift_summary *u, bc_shift__excluded ex[5])
{
	ex[0] = (bc_shift__excluded){u->n_no_coordinates, "no coordinates (--region)"};
	ex[1] = (bc_shift__excluded){u->n_outside_region, "outside the region"};
	ex[2] = (bc_shift__excluded){u->n_no_depth, "no palaeodepth"};
	ex[3] = (bc_shift__excluded){u->n_too_long, "age range longer than --span max"};
	ex[4] = (bc_shift__excluded){u->n_outside_bins, "age outside every bin"};
	return 5;
}

void bc_shift__summary_excluded_words(const bc_shift_summary *u, bc_buf *b)
{
	bc_shift__excluded ex[5];
	bc_shift__excluded_words(b, ex, shift_excluded(u, ex));
}

static int nothing_left(const bc_shift *s, size_t n_left, bc_err *err)
{
	bc_shift__excluded ex[5];
	size_t nex = shift_excluded(&s->sum, ex);
	return bc_shift__nothing_left(err, s->db_path, &s->opts, s->sum.n_selected, n_left, ex, nex, "count");
}

int bc_shift_compute(bc_shift **out, bc_db *db, const bc_shift_options *opts, bc_err *err)
{
	*out = NULL;
	double *counts = NULL;
	size_t *nrefs = NULL, *nlocs = NULL, ncand = 0;
	uint64_t *lbits = NULL;
	bc_shift__bin *cand = NULL;
	int rc = BC_OK;
	if (!opts->n_zones || opts->n_zones > BC_SHIFT_MAX_ZONES)
		return bc_err_set(err, BC_EUSAGE, "shift: no depth boundary (--split or --zones)");
	if (!(opts->level > 0 && opts->level < 1))
		return bc_err_set(err, BC_EUSAGE, "--level: %g is not between 0 and 1", opts->level);
	if (opts->bins == BC_BINS_WIDTH && !(opts->bin_width > 0))
		return bc_err_set(err, BC_EUSAGE, "--bins: width must be positive");
	if (opts->bins == BC_BINS_FILE && !opts->bins_file)
		return bc_err_set(err, BC_EUSAGE, "--bins: no file given");
	if ((rc = bc_resample__check(opts, err)) != BC_OK)
		return rc;
	bc_shift *s = bc__calloc(1, sizeof *s);
	if (!s)
		return oom(err);
	s->opts = *opts;
	if (bc_shift__dup_opt(&s->group, &s->opts.group) || bc_shift__dup_opt(&s->taxon, &s->opts.taxon) ||
	    bc_shift__dup_opt(&s->preservation, &s->opts.preservation) || bc_shift__dup_opt(&s->timescale, &s->opts.timescale) ||
	    bc_shift__dup_opt(&s->bins_file, &s->opts.bins_file) || !(s->db_path = bc__strdup(bc_db_path(db)))) {
		rc = oom(err);
		goto done;
	}
	s->opts.chart = NULL; /* borrowed only during the computation */
	if (opts->bins <= BC_BINS_PERIOD) {
		bc_shift_options tmp = s->opts;
		tmp.chart = opts->chart;
		s->opts = tmp;
		rc = bins_from_chart(s, db, &cand, &ncand, err);
		s->opts.chart = NULL;
	} else if (opts->bins == BC_BINS_FILE) {
		rc = bc_shift__bins_read(&cand, &ncand, s->opts.bins_file, err);
		if (rc == BC_OK) {
			char hex[65];
			rc = bc__sha256_file(s->opts.bins_file, hex, err);
			if (rc == BC_OK && !(s->bins_file_sha = bc__strdup(hex)))
				rc = oom(err);
		}
	}
	if (rc == BC_OK)
		rc = bc_shift__vocabs(&s->vocabs, db, err);
	if (rc == BC_OK)
		rc = load(s, db, err);
	if (rc)
		goto done;
	if ((rc = nothing_left(s, s->nocc, err)) != BC_OK)
		goto done;
	if (opts->bins == BC_BINS_WIDTH && (rc = bins_width(s, &cand, &ncand, err)))
		goto done;
	size_t nz = s->opts.zones_given ? s->opts.n_zones : 0, stride = bc_shift__stride(nz);
	counts = bc__malloc(ncand * stride * sizeof *counts);
	nrefs = bc__calloc(ncand, sizeof *nrefs);
	nlocs = bc__calloc(ncand, sizeof *nlocs);
	if (!counts || !nrefs || !nlocs) {
		rc = oom(err);
		goto done;
	}
	bc_shift__tally tally;
	rc = count_impl(counts, nrefs, nlocs, &lbits, &tally, s->occ, s->nocc, cand, ncand, (int)s->opts.span,
		s->opts.span_max_myr, nz, s->nref, s->nloc, err);
	if (rc)
		goto done;
	s->sum.n_too_long = tally.n_too_long;
	s->sum.n_outside_bins = tally.n_outside;
	s->sum.n_used = tally.n_used;
	s->sum.n_multi_bin = tally.n_multi;
	if ((rc = nothing_left(s, tally.n_used, err)) != BC_OK)
		goto done;
	/* Report the span from the oldest to the youngest occupied bin, empty bins between included. */
	size_t first = ncand, last = 0;
	for (size_t k = 0; k < ncand; k++) {
		const double *c = &counts[k * stride];
		if (c[0] + c[1] + c[2] > 0) {
			if (first == ncand)
				first = k;
			last = k;
		}
	}
	s->nbins = last - first + 1;
	s->bins = bc__calloc(s->nbins, sizeof *s->bins);
	s->out = bc__calloc(s->nbins, sizeof *s->out);
	s->zone_counts = bc__calloc(s->nbins * (s->opts.n_zones + 1), sizeof *s->zone_counts);
	if (!s->bins || !s->out || !s->zone_counts) {
		s->nbins = 0;
		rc = oom(err);
		goto done;
	}
	for (size_t k = 0; k < s->nbins; k++) {
		s->bins[k] = cand[first + k];
		cand[first + k].name = NULL; /* moved */
	}
	bin_stats(s, counts, nrefs, nlocs, first);
	if ((rc = bin_coverage(s, lbits, ncand, first, err)) != BC_OK)
		goto done;
	across_stats(s);
	rc = bc_resample__run(s, db, opts->chart, err);
done:
	bc_shift__bins_free(cand, ncand);
	free(counts);
	free(nrefs);
	free(nlocs);
	free(lbits);
	if (rc) {
		bc_shift_free(s);
		return rc;
	}
	*out = s;
	return BC_OK;
}

size_t bc_shift_bin_count(const bc_shift *s) { return s->nbins; }
const bc_shift_bin *bc_shift_bin_at(const bc_shift *s, size_t i) { return i < s->nbins ? &s->out[i] : NULL; }
const bc_shift_tests *bc_shift_tests_get(const bc_shift *s) { return &s->tests; }
const bc_shift_summary *bc_shift_summary_get(const bc_shift *s) { return &s->sum; }
