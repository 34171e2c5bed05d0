/*
 * test_resample.c - the shift table under uncertainty and bias: random
 * streams, quantiles, the draw engine (thread independence, fixed cases,
 * coverage in a simulation with a known shift), the binomial affinity test
 * (check-values.md section 12), reference weighting, quota subsampling and
 * the transport flag.
 */
#include "test.h"
#include "db.h"
#include "resample.h"
#include "shift.h"

#include <stdint.h>
#include <stdlib.h>

/* xoshiro256** from the state {1, 2, 3, 4}: 11520, 0, 1509978240,
 * 1215971899390074240 (the reference implementation's first outputs, from
 * memory; reproduced by a Python rewrite of Blackman & Vigna's
 * published algorithm). */
TEST(resample_xoshiro_known_outputs)
{
	bc_rng r = {{1, 2, 3, 4}};
	CHECK(bc_resample__next(&r) == 11520ULL);
	CHECK(bc_resample__next(&r) == 0ULL);
	CHECK(bc_resample__next(&r) == 1509978240ULL);
	CHECK(bc_resample__next(&r) == 1215971899390074240ULL);
}

/* Per-draw streams keyed by (seed, stream, index): pinned first outputs
 * (computed by a Python rewrite of the seeding in resample.c, so any
 * machine must give these), and different keys give different streams. */
TEST(resample_stream_seeding_pinned)
{
	bc_rng r;
	bc_resample__rng_init(&r, 1, 1, 0);
	CHECK(bc_resample__next(&r) == 0x0ff66afed3f64198ULL);
	CHECK(bc_resample__next(&r) == 0xa136bf940c6f134fULL);
	bc_resample__rng_init(&r, 42, 2, 7);
	CHECK(bc_resample__next(&r) == 0x67b9957698d0e709ULL);
	CHECK(bc_resample__next(&r) == 0x0024aec232a2d18eULL);
	CHECK(bc_resample__next(&r) == 0x442ea199f2966821ULL);
	bc_resample__rng_init(&r, UINT64_MAX, 3, 1000000);
	CHECK(bc_resample__next(&r) == 0xee2fa749a325beccULL);
	bc_rng a, b;
	/* the draw loop's inlined step gives bc_rng__next's stream */
	bc_resample__rng_init(&a, 3, 1, 9);
	b = a;
	for (int i = 0; i < 1000; i++)
		CHECK(bc_resample__next(&a) == bc_rng__next(&b));
	bc_resample__rng_init(&a, 1, 1, 0);
	bc_resample__rng_init(&b, 1, 1, 1);
	CHECK(bc_resample__next(&a) != bc_resample__next(&b));
	bc_resample__rng_init(&a, 1, 1, 0);
	bc_resample__rng_init(&b, 1, 2, 0);
	CHECK(bc_resample__next(&a) != bc_resample__next(&b));
}

/* Uniforms lie in [0, 1) and bounded integers in 0..n-1, and both are
 * roughly uniform: 100000 draws into 10 cells, each within 5 % of 10000
 * (common practice, no source: about 16 standard deviations). */
TEST(resample_uniform_and_below)
{
	bc_rng r;
	bc_resample__rng_init(&r, 7, 1, 0);
	long cu[10] = {0}, cb[10] = {0};
	for (int i = 0; i < 100000; i++) {
		double u = bc_resample__uniform(&r);
		CHECK(u >= 0 && u < 1);
		cu[(int)(u * 10)]++;
		uint64_t k = bc_resample__below(&r, 10);
		CHECK(k < 10);
		cb[k]++;
	}
	for (int i = 0; i < 10; i++) {
		CHECK_MSG(labs(cu[i] - 10000) < 500, "uniform cell %d: %ld", i, cu[i]);
		CHECK_MSG(labs(cb[i] - 10000) < 500, "below cell %d: %ld", i, cb[i]);
	}
	CHECK(bc_resample__below(&r, 1) == 0);
}

/* The quantile rule the draws use (encounter.c's): Hyndman & Fan type 7 =
 * numpy.quantile's default (linear). */
TEST(resample_quantile_type7)
{
	const double x[] = {1, 2, 3, 4};
	CHECK_NEAR(bc_encounter__quantile(x, 4, 0.25), 1.75, 1e-15);
	CHECK_NEAR(bc_encounter__quantile(x, 4, 0.5), 2.5, 1e-15);
	CHECK_NEAR(bc_encounter__quantile(x, 4, 0.975), 3.925, 1e-12);
	CHECK_NEAR(bc_encounter__quantile(x, 4, 0), 1, 0);
	CHECK_NEAR(bc_encounter__quantile(x, 4, 1), 4, 0);
	CHECK_NEAR(bc_encounter__quantile(x, 1, 0.3), 1, 0);
	CHECK(isnan(bc_encounter__quantile(x, 0, 0.5)));
}

/* check-values.md section 12 worked example: bin 1 taxon 5 deep of 6,
 * background 60 of 200; bin 2 taxon 6 of 8, background 120 of 300
 * (background includes the taxon). Values computed with scipy.stats.binom
 * and an exact rational sum there; attribution of the test to Kiessling &
 * Aberhan (2007) / Simpson & Harnik (2009) is from memory, unverified. */
TEST(resample_affinity_worked_example)
{
	const double k[] = {5, 6}, n[] = {6, 8}, K[] = {60, 120}, N[] = {200, 300};
	const double Kx[] = {55, 114}, Nx[] = {194, 292};
	bc_affinity a;
	bc_resample__affinity(&a, k, n, K, N, 2, 1, 0.05); /* pooled, taxon included */
	CHECK_NEAR(a.k, 11, 0);
	CHECK_NEAR(a.n, 14, 0);
	CHECK_NEAR(a.p0, 0.36, 1e-15);
	CHECK_NEAR(a.expected, 5.04, 1e-12);
	CHECK_NEAR(a.p_deep, 0.001448454521, 1e-9 * 0.001448454521);
	CHECK_NEAR(a.p_shallow, 0.9998074853, 1e-9);
	CHECK_STR(a.verdict, "deep");
	bc_resample__affinity(&a, k, n, Kx, Nx, 2, 1, 0.05); /* pooled, taxon excluded */
	CHECK_NEAR(a.p0, 169.0 / 486, 1e-15);
	CHECK_NEAR(a.p_deep, 0.001039416809, 1e-9 * 0.001039416809);
	CHECK_NEAR(a.p_shallow, 0.9998686654, 1e-9);
	bc_resample__affinity(&a, k, n, K, N, 2, 0, 0.05); /* bin-weighted, taxon included */
	CHECK_NEAR(a.p0, 5.0 / 14, 1e-15);
	CHECK_NEAR(a.expected, 5, 1e-12);
	CHECK_NEAR(a.p_deep, 0.00134235956, 1e-8 * 0.00134235956);
	CHECK_NEAR(a.p_shallow, 0.9998236617, 1e-9);
	/* further cases of section 12 at p0 = 0.36 */
	const double k3[] = {3}, n3[] = {10}, k0[] = {0}, n12[] = {12}, k12[] = {12}, K9[] = {9}, N25[] = {25};
	bc_resample__affinity(&a, k3, n3, K9, N25, 1, 0, 0.05);
	CHECK_NEAR(a.p_deep, 0.7594627439, 1e-9);
	CHECK_NEAR(a.p_shallow, 0.4867715657, 1e-9);
	CHECK_STR(a.verdict, "none");
	bc_resample__affinity(&a, k0, n12, K9, N25, 1, 0, 0.05);
	CHECK_NEAR(a.p_shallow, 0.004722366483, 1e-9 * 0.004722366483);
	CHECK_STR(a.verdict, "shallow");
	bc_resample__affinity(&a, k12, n12, K9, N25, 1, 0, 0.05);
	CHECK_NEAR(a.p_deep, 4.738381338e-06, 1e-9 * 4.738381338e-06);
	/* bins without a background are left out */
	const double kk[] = {5, 3}, nn[] = {6, 4}, KK[] = {60, 0}, NN[] = {200, 0};
	bc_resample__affinity(&a, kk, nn, KK, NN, 2, 0, 0.05);
	CHECK_NEAR(a.n, 6, 0);
	CHECK_NEAR(a.p0, 0.3, 1e-15);
}

static bc_shift__occ occ_make(int64_t pk, double older, double younger, double dmin, double dmax, int32_t ref, uint8_t artic)
{
	const double split = 200;
	bc_shift__occ o = {pk, older, younger, dmin, dmax, ref, -1, artic, 0, 0};
	int z = bc_shift__zone(dmin, dmax, &split, 1);
	o.zone2 = (uint8_t)(z < 0 ? BC_SHIFT__STRADDLE : z);
	o.zonek = o.zone2 == BC_SHIFT__STRADDLE ? BC_SHIFT__ZSTRADDLE : o.zone2;
	return o;
}

static char bn0[] = "30-20 Ma", bn1[] = "20-10 Ma", bn2[] = "10-0 Ma";

/* Same draws with 1, 2 and 3 threads, byte for byte; another seed differs. */
TEST(resample_draws_do_not_depend_on_threads)
{
	bc_shift__bin bins[] = {{bn0, 30, 20}, {bn1, 20, 10}, {bn2, 10, 0}};
	bc_shift__occ occ[300];
	bc_rng g;
	bc_resample__rng_init(&g, 99, 9, 0);
	for (int i = 0; i < 300; i++) {
		double t = 30 * bc_resample__uniform(&g), w = 6 * bc_resample__uniform(&g);
		double d = 400 * bc_resample__uniform(&g);
		occ[i] = occ_make(i + 1, t + w, t, d, d + 100 * bc_resample__uniform(&g), -1, 0);
	}
	bc_draw_result r[4];
	bc_err err = {0};
	for (int k = 0; k < 4; k++) {
		bc_draw_spec sp = {occ, 300, bins, 3, BC_SPAN_MAJORITY, 0, BC_RESAMPLE_AGE | BC_RESAMPLE_DEPTH, 1, 97,
			k == 3 ? 8u : 5u, k == 3 ? 2 : k + 1};
		CHECK_OK(bc_resample__draws(&r[k], &sp, 200, &err), &err);
	}
	CHECK_INT(r[1].threads_used, 2);
	for (int k = 1; k < 3; k++) {
		CHECK(memcmp(r[0].frac, r[k].frac, 97 * 3 * sizeof(double)) == 0);
		CHECK(memcmp(r[0].brk, r[k].brk, 97 * sizeof(int32_t)) == 0);
		CHECK(memcmp(r[0].trend_z, r[k].trend_z, 97 * sizeof(double)) == 0);
	}
	CHECK(memcmp(r[0].frac, r[3].frac, 97 * 3 * sizeof(double)) != 0);
	for (int k = 0; k < 4; k++)
		bc_resample__draws_free(&r[k]);
}

/* Nothing uncertain: every draw equals the observed counts. A depth range
 * straddling the split evenly is deep in about half the draws; an age
 * range split evenly between two bins lands in each about half the time. */
TEST(resample_draws_fixed_and_uniform_cases)
{
	bc_shift__bin bins[] = {{bn0, 30, 20}, {bn1, 20, 10}, {bn2, 10, 0}};
	bc_shift__occ occ[4000];
	for (int i = 0; i < 40; i++) /* 28-22 Ma: inside bin 0; 10 of 40 deep */
		occ[i] = occ_make(i, 28, 22, i < 10 ? 300 : 50, i < 10 ? 300 : 60, -1, 0);
	bc_draw_result r;
	bc_err err = {0};
	bc_draw_spec sp = {occ, 40, bins, 3, BC_SPAN_MAJORITY, 0, BC_RESAMPLE_AGE | BC_RESAMPLE_DEPTH, 0, 20, 1, 2};
	CHECK_OK(bc_resample__draws(&r, &sp, 200, &err), &err);
	for (int d = 0; d < 20; d++) {
		CHECK_NEAR(r.frac[d * 3 + 0], 0.25, 0);
		CHECK(isnan(r.frac[d * 3 + 1]));
		CHECK_INT(r.brk[d], -1);
	}
	bc_resample__draws_free(&r);
	/* 4000 at 15 Ma with depth [100, 300): deep when the drawn depth >= 200 */
	for (int i = 0; i < 4000; i++)
		occ[i] = occ_make(i, 15, 15, 100, 300, -1, 0);
	sp.n = 4000;
	sp.draws = 10;
	CHECK_OK(bc_resample__draws(&r, &sp, 200, &err), &err);
	for (int d = 0; d < 10; d++)
		CHECK_NEAR(r.frac[d * 3 + 1], 0.5, 0.04); /* 5 SD of Binomial(4000, 0.5)/4000 */
	bc_resample__draws_free(&r);
	/* without depth resampling the straddlers stay out of frac_deep */
	sp.what = BC_RESAMPLE_AGE;
	CHECK_OK(bc_resample__draws(&r, &sp, 200, &err), &err);
	CHECK(isnan(r.frac[1]));
	bc_resample__draws_free(&r);
	/* 25-15 Ma, deep: half the draws' occurrences fall in bin 0, half in bin 1 */
	for (int i = 0; i < 4000; i++)
		occ[i] = occ_make(i, 25, 15, i % 2 ? 300 : 10, i % 2 ? 300 : 10, -1, 0);
	sp.what = BC_RESAMPLE_AGE | BC_RESAMPLE_DEPTH;
	sp.draws = 1;
	CHECK_OK(bc_resample__draws(&r, &sp, 200, &err), &err);
	CHECK_NEAR(r.frac[0], 0.5, 0.06);
	CHECK_NEAR(r.frac[1], 0.5, 0.06);
	bc_resample__draws_free(&r);
}

/* Coverage in a simulation with a known shift (seeded, fast): three 10-Myr
 * bins with true deep probabilities 0.25, 0.25, 0.6 (a shift at 10 Ma),
 * 120 occurrences per bin with true ages uniform in the bin, recorded as
 * ranges [t - a, t + b], a, b uniform on [0, 3] Myr. With --bootstrap the
 * 95 % band must cover the true probability in at least 85 % of 200 data
 * sets per bin (nominal 95 %; age smearing across the shift lowers it a
 * little), and the modal breakpoint must be 10 Ma in at least 90 %.
 * Without the bootstrap the band shows age uncertainty only and must
 * cover less often. Thresholds: common practice, no source. */
TEST(resample_coverage_known_shift)
{
	bc_shift__bin bins[] = {{bn0, 30, 20}, {bn1, 20, 10}, {bn2, 10, 0}};
	const double p[] = {0.25, 0.25, 0.6};
	enum { PER = 120, SETS = 200, DRAWS = 200 };
	static bc_shift__occ occ[3 * PER];
	int cover[2][3] = {{0}}, brk_ok = 0;
	bc_err err = {0};
	double tmp[DRAWS];
	for (int set = 0; set < SETS; set++) {
		bc_rng g;
		bc_resample__rng_init(&g, 2024, 100, (uint64_t)set);
		for (int b = 0; b < 3; b++)
			for (int i = 0; i < PER; i++) {
				double t = bins[b].younger + 10 * bc_resample__uniform(&g);
				double lo = fmax(0, t - 3 * bc_resample__uniform(&g)), hi = t + 3 * bc_resample__uniform(&g);
				int deep = bc_resample__uniform(&g) < p[b];
				occ[b * PER + i] = occ_make(b * PER + i, hi, lo, deep ? 500 : 50, deep ? 500 : 50, -1, 0);
			}
		for (int boot = 0; boot < 2; boot++) {
			bc_draw_result r;
			bc_draw_spec sp = {occ, 3 * PER, bins, 3, BC_SPAN_MAJORITY, 0, BC_RESAMPLE_AGE | BC_RESAMPLE_DEPTH, boot, DRAWS, (uint64_t)set, 2};
			CHECK_OK(bc_resample__draws(&r, &sp, 200, &err), &err);
			for (int b = 0; b < 3; b++) {
				size_t m = 0;
				for (int d = 0; d < DRAWS; d++)
					if (isfinite(r.frac[d * 3 + b]))
						tmp[m++] = r.frac[d * 3 + b];
				for (size_t i = 1; i < m; i++) /* insertion sort: small */
					for (size_t j = i; j > 0 && tmp[j - 1] > tmp[j]; j--) {
						double x = tmp[j];
						tmp[j] = tmp[j - 1];
						tmp[j - 1] = x;
					}
				double lo = bc_encounter__quantile(tmp, m, 0.025), hi = bc_encounter__quantile(tmp, m, 0.975);
				cover[boot][b] += lo <= p[b] && p[b] <= hi;
			}
			if (boot) {
				int at2 = 0;
				for (int d = 0; d < DRAWS; d++)
					at2 += r.brk[d] == 2;
				brk_ok += at2 > DRAWS / 2;
			}
			bc_resample__draws_free(&r);
		}
	}
	printf("# coverage of 95 %% draw bands, %d data sets: with bootstrap %.3f %.3f %.3f; age only %.3f %.3f %.3f; modal breakpoint at the true shift %.3f\n",
		SETS, cover[1][0] / (double)SETS, cover[1][1] / (double)SETS, cover[1][2] / (double)SETS,
		cover[0][0] / (double)SETS, cover[0][1] / (double)SETS, cover[0][2] / (double)SETS, brk_ok / (double)SETS);
	for (int b = 0; b < 3; b++) {
		CHECK_MSG(cover[1][b] >= 0.85 * SETS, "bootstrap coverage in bin %d: %d of %d", b, cover[1][b], SETS);
		CHECK_MSG(cover[0][b] < cover[1][b], "age-only coverage in bin %d (%d) not below the bootstrap's (%d)", b, cover[0][b], cover[1][b]);
	}
	CHECK_MSG(brk_ok >= 0.9 * SETS, "modal breakpoint at 10 Ma in %d of %d", brk_ok, SETS);
}

/* ---- through bc_shift_compute on a small database ------------------- */

static bc_db *new_db(const char *name)
{
	char path[512];
	bc_db *db = NULL;
	snprintf(path, sizeof path, "%s/%s", test_tmpdir(), name);
	if (bc_db_create(&db, path, NULL))
		return NULL;
	if (sqlite3_exec(bc_db__sqlite(db), "INSERT INTO import_batches(kind, file, sha256, tool_version) VALUES ('occurrences', 't.csv', 'x', 'test');",
		NULL, NULL, NULL) != SQLITE_OK) {
		bc_db_close(db);
		return NULL;
	}
	return db;
}

/* `n` copies of one occurrence. */
static int add_n(bc_db *db, int n, const char *group, double older, double younger, double depth, const char *artic, const char *ref)
{
	sqlite3_stmt *st = NULL;
	int rc = sqlite3_prepare_v2(bc_db__sqlite(db),
		"WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < :n)"
		" INSERT INTO occurrences(batch_id, line, scientific_name, taxon_group, older_ma, younger_ma, age_status, timescale,"
		" min_depth_m, max_depth_m, articulation, reference_key) SELECT 1, i, 'Aus bus', :g, :o, :y, 'numeric', 't', :d, :d, :a, :r FROM c",
		-1, &st, NULL);
	if (rc != SQLITE_OK)
		return -1;
	bc_db__bind_int64(st, ":n", n);
	bc_db__bind_text(st, ":g", group);
	bc_db__bind_double(st, ":o", older);
	bc_db__bind_double(st, ":y", younger);
	bc_db__bind_double(st, ":d", depth);
	bc_db__bind_text(st, ":a", artic);
	bc_db__bind_text(st, ":r", ref);
	rc = sqlite3_step(st) == SQLITE_DONE ? 0 : -1;
	sqlite3_finalize(st);
	return rc;
}

/* One prolific reference with 96 deep occurrences and four with one
 * shallow each: raw share 96/100, reference-weighted (96/96 + 0 * 4)/5. */
TEST(resample_reference_weighting)
{
	bc_db *db = new_db("refw.gpkg");
	CHECK(db);
	CHECK(add_n(db, 96, "crinoids", 58, 57, 500, "articulated", "Monograph1990") == 0);
	CHECK(add_n(db, 1, "crinoids", 58, 57, 50, "articulated", "A2001") == 0);
	CHECK(add_n(db, 1, "crinoids", 58, 57, 50, "articulated", "B2002") == 0);
	CHECK(add_n(db, 1, "crinoids", 58, 57, 50, "articulated", "C2003") == 0);
	CHECK(add_n(db, 1, "crinoids", 58, 57, 50, "articulated", "") == 0);
	bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
	bc_err err = {0};
	bc_shift *s = NULL;
	CHECK_OK(bc_shift_option_set(&o, "bins", "5", &err), &err);
	CHECK_OK(bc_shift_option_set(&o, "weight-references", "yes", &err), &err);
	CHECK_OK(bc_shift_option_set(&o, "draws", "400", &err), &err);
	CHECK_OK(bc_shift_option_set(&o, "resample", "none", &err), &err);
	CHECK_OK(bc_shift_compute(&s, db, &o, &err), &err);
	const bc_shift_bin *b = bc_shift_bin_at(s, 0);
	CHECK_NEAR(b->frac_deep, 0.96, 1e-15);
	CHECK_NEAR(b->n_ref_units, 5, 0);
	CHECK_NEAR(b->refw_frac_deep, 0.2, 1e-15);
	CHECK(b->refw_lo <= 0.2 && b->refw_hi >= 0.2 && b->refw_lo >= 0 && b->refw_hi <= 1);
	CHECK(b->refw_lo < b->refw_hi);
	CHECK(!b->has_draws); /* --resample none without --bootstrap: no draws */
	bc_shift_free(s);
	bc_db_close(db);
}

/* Quota: a bin with fewer occurrences than the quota stays NA; a quota
 * equal to the bin's size reproduces its share exactly. */
TEST(resample_quota)
{
	bc_db *db = new_db("quota.gpkg");
	CHECK(db);
	CHECK(add_n(db, 6, "crinoids", 58, 57, 500, "", "") == 0);
	CHECK(add_n(db, 14, "crinoids", 58, 57, 50, "", "") == 0);
	CHECK(add_n(db, 5, "crinoids", 53, 52, 500, "", "") == 0);
	CHECK(add_n(db, 60, "crinoids", 48, 47, 500, "", "") == 0);
	CHECK(add_n(db, 40, "crinoids", 48, 47, 50, "", "") == 0);
	bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
	bc_err err = {0};
	bc_shift *s = NULL;
	CHECK_OK(bc_shift_option_set(&o, "bins", "5", &err), &err);
	CHECK_OK(bc_shift_option_set(&o, "quota", "20", &err), &err);
	CHECK_OK(bc_shift_compute(&s, db, &o, &err), &err);
	const bc_shift_bin *b = bc_shift_bin_at(s, 0);
	CHECK_NEAR(b->quota_lo, 0.3, 1e-15);
	CHECK_NEAR(b->quota_mid, 0.3, 1e-15);
	CHECK_NEAR(b->quota_hi, 0.3, 1e-15);
	CHECK(isnan(bc_shift_bin_at(s, 1)->quota_mid));
	b = bc_shift_bin_at(s, 2);
	CHECK(b->quota_lo < 0.6 && b->quota_hi > 0.6 && b->quota_lo >= 0 && b->quota_hi <= 1);
	CHECK_NEAR(b->quota_mid, 0.6, 0.1);
	bc_shift_free(s);
	bc_db_close(db);
}

/* The transport flag: a shift carried by disarticulated material alone
 * (articulated constant at 0.3) is flagged; the same shift present in
 * articulated material too is not. */
TEST(resample_taphonomy_flag)
{
	for (int art_shift = 0; art_shift < 2; art_shift++) {
		bc_db *db = new_db(art_shift ? "t1.gpkg" : "t0.gpkg");
		CHECK(db);
		/* articulated: 60-55 Ma 12 deep of 40; 50-45 Ma 12 (or 30) deep of 40 */
		CHECK(add_n(db, 12, "crinoids", 58, 57, 500, "articulated", "R1") == 0);
		CHECK(add_n(db, 28, "crinoids", 58, 57, 50, "articulated", "R1") == 0);
		CHECK(add_n(db, art_shift ? 30 : 12, "crinoids", 48, 47, 500, "articulated", "R2") == 0);
		CHECK(add_n(db, art_shift ? 10 : 28, "crinoids", 48, 47, 50, "articulated", "R2") == 0);
		/* disarticulated: 20 deep of 100, then 90 deep of 100 */
		CHECK(add_n(db, 20, "crinoids", 58, 57, 500, "disarticulated", "R3") == 0);
		CHECK(add_n(db, 80, "crinoids", 58, 57, 50, "disarticulated", "R3") == 0);
		CHECK(add_n(db, 90, "crinoids", 48, 47, 500, "disarticulated", "R4") == 0);
		CHECK(add_n(db, 10, "crinoids", 48, 47, 50, "disarticulated", "R4") == 0);
		bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
		bc_err err = {0};
		bc_shift *s = NULL;
		CHECK_OK(bc_shift_option_set(&o, "bins", "5", &err), &err);
		CHECK_OK(bc_shift_option_set(&o, "taphonomy", "yes", &err), &err);
		CHECK_OK(bc_shift_compute(&s, db, &o, &err), &err);
		const bc_shift_tests *t = bc_shift_tests_get(s);
		CHECK(t->trend_p < 0.05);
		CHECK_INT(t->transport_flag, !art_shift);
		CHECK(strstr(t->taphonomy_verdict, art_shift ? "holds in articulated" : "FLAG") != NULL);
		const bc_shift_bin *b = bc_shift_bin_at(s, 0);
		CHECK_NEAR(b->art_n, 40, 0);
		CHECK_NEAR(b->art_frac_deep, 0.3, 1e-15);
		char path[512];
		snprintf(path, sizeof path, "%s/taph.md", test_tmpdir());
		FILE *f = fopen(path, "w+");
		CHECK(f);
		CHECK_OK(bc_shift_write_taphonomy(s, f, BC_FORMAT_MD, &err), &err);
		rewind(f);
		char line[2048];
		CHECK(fgets(line, sizeof line, f));
		fclose(f);
		CHECK(strstr(line, "| n_all | frac_deep_all |") != NULL);
		bc_shift_free(s);
		bc_db_close(db);
	}
}

TEST(resample_option_errors)
{
	bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
	bc_err err = {0};
	CHECK_INT(bc_shift_option_set(&o, "draws", "0", &err), BC_EUSAGE);
	CHECK_INT(bc_shift_option_set(&o, "draws", "-5", &err), BC_EUSAGE);
	CHECK_INT(bc_shift_option_set(&o, "seed", "x1", &err), BC_EUSAGE);
	CHECK_STR(err.msg, "--seed: 'x1' is not a whole number from 0 to 18446744073709551615");
	CHECK_INT(bc_shift_option_set(&o, "resample", "ages", &err), BC_EUSAGE);
	CHECK_INT(bc_shift_option_set(&o, "background", "global", &err), BC_EUSAGE);
	CHECK_OK(bc_shift_option_set(&o, "seed", "18446744073709551615", &err), &err);
	CHECK(o.seed == UINT64_MAX);
	CHECK_OK(bc_shift_option_set(&o, "bootstrap", "yes", &err), &err);
	CHECK_INT(bc_resample__check(&o, &err), BC_EUSAGE); /* bootstrap without draws */
	o = (bc_shift_options)BC_SHIFT_OPTIONS_INIT;
	o.taphonomy = 1;
	o.preservation = "calyx";
	CHECK_INT(bc_resample__check(&o, &err), BC_EUSAGE);
}

/* The draws' branch-free bin of a "run" equals shift's point-age rule for
 * every age in the range, including ages on bin edges and ranges that
 * start on an edge; ranges across a gap between bins are not runs. */
TEST(resample_run_fast_path)
{
	static char nm[] = "b";
	bc_shift__bin bins[40];
	bc_rng g;
	bc_resample__rng_init(&g, 5, 50, 0);
	double edge = 300;
	for (int i = 0; i < 40; i++) {
		double w = i == 20 ? 0.1 : 0.05 + 10 * bc_resample__uniform(&g);
		bins[i] = (bc_shift__bin){nm, edge, edge - w};
		edge -= w;
		if (i == 30)
			edge -= 1; /* a gap after bin 30 */
	}
	long runs = 0;
	for (int trial = 0; trial < 20000; trial++) {
		double older = bins[0].younger + (bins[0].older - bins[0].younger) * bc_resample__uniform(&g) -
			       (300 - bins[39].younger) * bc_resample__uniform(&g);
		double younger = older - 30 * bc_resample__uniform(&g);
		if (trial % 10 == 0)
			younger = bins[(trial / 10) % 40].younger; /* on an edge */
		if (younger > older || younger < bins[39].younger)
			continue;
		size_t k0 = 0;
		size_t major = bc_shift__place(bins, 40, older, younger, &k0, NULL, NULL);
		if (major == 40)
			continue;
		size_t L = bc_resample__run_length(bins, 40, k0, older, younger);
		if (!L)
			continue;
		runs++;
		CHECK(k0 + L <= 31 || k0 > 30); /* never across the gap */
		for (int k = 0; k < 50; k++) {
			double u = k == 0 ? 0 : k == 1 ? 1 - 0x1.0p-53 : bc_resample__uniform(&g);
			double t = older - u * (older - younger);
			if (k >= 2 && k < 2 + (int)L - 1)
				t = bins[k0 + (size_t)k - 2].younger; /* exactly on an inner edge */
			CHECK_MSG(bc_resample__run_bin(bins, k0, L, t) == bc_shift__point_bin(bins, 40, t, 0),
				"older %.17g younger %.17g t %.17g: run %zu, rule %zu", older, younger, t,
				bc_resample__run_bin(bins, k0, L, t), bc_shift__point_bin(bins, 40, t, 0));
		}
	}
	CHECK_MSG(runs > 5000, "only %ld runs tested", runs);
	/* a range starting exactly on bin 4's younger edge reaches bin 5 (the
	 * edge belongs to the younger bin) */
	CHECK_INT(bc_resample__run_length(bins, 40, 3, bins[3].older - 0.01, bins[4].younger), 3);
	CHECK_INT(bc_resample__run_bin(bins, 3, 3, bins[4].younger), 5);
	CHECK_INT(bc_shift__point_bin(bins, 40, bins[4].younger, 0), 5);
	/* a range crossing the gap after bin 30 is not a run */
	CHECK_INT(bc_resample__run_length(bins, 40, 30, bins[30].younger + 0.01, bins[31].older - 0.01), 0);
}

/* Every allocation of a computation with all the options failing in turn:
 * each attempt ends with BC_ENOMEM or succeeds (shift.c's words for error
 * messages may be lost to a failed allocation without failing the
 * computation), never a crash or a leak (the ASan build checks the leaks).
 * The loop ends after 25 successes in a row: past the last allocation. */
TEST(resample_survives_each_allocation_failure)
{
	bc_db *db = new_db("oom.gpkg");
	CHECK(db);
	CHECK(add_n(db, 12, "crinoids", 58, 54, 500, "articulated", "R1") == 0);
	CHECK(add_n(db, 20, "crinoids", 58, 57, 50, "disarticulated", "R2") == 0);
	CHECK(add_n(db, 20, "crinoids", 48, 47, 500, "disarticulated", "") == 0);
	CHECK(add_n(db, 5, "echinoids", 48, 47, 50, "unknown", "R3") == 0);
	int run_ok = 0, nomem = 0;
	long k;
	for (k = 1; k < 20000 && run_ok < 25; k++) {
		bc_shift_options o = BC_SHIFT_OPTIONS_INIT;
		bc_err err = {0};
		bc_shift *s = NULL;
		o.bins = BC_BINS_WIDTH;
		o.bin_width = 5;
		o.group = "crinoids";
		o.draws = 20;
		o.bootstrap = 1;
		o.threads = 2;
		o.weight_references = 1;
		o.background = BC_BACKGROUND_BINNED;
		o.quota = 5;
		o.taphonomy = 1;
		bc__alloc_fail_after(k);
		int rc = bc_shift_compute(&s, db, &o, &err);
		bc__alloc_fail_after(0);
		if (rc == BC_OK) {
			run_ok++;
			CHECK(bc_shift_bin_at(s, 0)->has_draws);
		} else {
			CHECK_MSG(rc == BC_ENOMEM || rc == BC_EDB, "allocation %ld: %d %s", k, rc, err.msg);
			CHECK(s == NULL);
			run_ok = 0;
			nomem++;
		}
		bc_shift_free(s);
	}
	CHECK_MSG(run_ok >= 25, "still failing at allocation %ld", k);
	CHECK_MSG(nomem > 100, "only %d allocations failed", nomem);
	bc_db_close(db);
}
