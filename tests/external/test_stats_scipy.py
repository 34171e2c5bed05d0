#!/usr/bin/python3
"""test_stats_scipy.py - src/stats.c against SciPy and statsmodels (Debian's
python3-scipy and python3-statsmodels) and against exact rational arithmetic,
on seeded random tables and data sets, zeros and large margins included.

Builds tests/external/stats_driver.c against $BC_SOURCE_DIR/build/libbathychron.a,
feeds it every case at once and prints one line per family:
    ok NAME: N cases, worst ... / FAIL NAME: why
Run with /usr/bin/python3 (tests/run.sh does).
"""
import math
import os
import shutil
import subprocess
import sys
import tempfile
import warnings
from fractions import Fraction

import numpy as np
from scipy import stats
import statsmodels.api as sm
from statsmodels.stats.contingency_tables import Table
from statsmodels.stats.proportion import proportion_confint, confint_proportions_2indep

warnings.simplefilter("ignore")
TOP = os.environ.get("BC_SOURCE_DIR") or os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
LIB = os.path.join(TOP, "build", "libbathychron.a")
rng = np.random.default_rng(20240611)  # fixed seed: the cases are the same on every run


def build_driver(tmp):
    exe = os.path.join(tmp, "stats_driver")
    cc = os.environ.get("CC", "cc")
    cmd = [cc, "-std=c11", "-D_DEFAULT_SOURCE", "-O1", "-I" + os.path.join(TOP, "src"), "-o", exe,
           os.path.join(TOP, "tests", "external", "stats_driver.c"), LIB, "-lm"]
    r = subprocess.run(cmd, capture_output=True, text=True)
    if r.returncode != 0:
        print("FAIL stats_driver_build: " + " ".join(cmd) + ": " + r.stderr.strip().replace("\n", " ")[:400])
        sys.exit(1)
    return exe


def run_driver(exe, lines):
    r = subprocess.run([exe], input="\n".join(lines) + "\n", capture_output=True, text=True)
    if r.returncode != 0:
        print("FAIL stats_driver_run: exit %d: %s" % (r.returncode, r.stderr.strip()[:400]))
        sys.exit(1)
    out = r.stdout.splitlines()
    if len(out) != len(lines):
        print("FAIL stats_driver_run: %d answers for %d cases" % (len(out), len(lines)))
        sys.exit(1)
    return [[float(v) for v in line.split()] for line in out]


def rel(a, b, floor=1e-300):
    """Relative difference, with exact agreement (also of NaN/inf) as 0."""
    if a == b or (math.isnan(a) and math.isnan(b)):
        return 0.0
    if math.isnan(a) or math.isnan(b):
        return math.inf
    return abs(a - b) / max(abs(b), floor)


def report(name, ncases, worst, tol, what, where):
    if ncases == 0:
        print("FAIL %s: no cases were compared" % name)
    elif worst <= tol:
        print("ok %s: %d cases, worst %s %.3g (tolerance %g)" % (name, ncases, what, worst, tol))
    else:
        print("FAIL %s: %d cases, worst %s %.3g > %g at %s" % (name, ncases, what, worst, tol, where))


def fisher_exact_rational(a, b, c, d):
    """Two-sided rule of check-values.md §3 in exact integer arithmetic: the
    sum of the hypergeometric probabilities no larger than the observed one
    (within SciPy's and R's relative 1e-7), as one fraction. Tables more
    than 40 standard deviations from the mode (mass below 1e-300) are left
    out to keep big margins fast."""
    r1, r2, c1 = a + b, c + d, a + c
    big_n = r1 + r2
    if r1 == 0 or r2 == 0 or c1 == 0 or c1 == big_n:
        return 1.0
    lo, hi = max(0, c1 - r2), min(r1, c1)
    mode = (r1 + 1) * (c1 + 1) // (big_n + 2)
    sd = math.sqrt(r1 * r2 * c1 * (big_n - c1) / (big_n * big_n * max(big_n - 1, 1))) + 1
    first, last = max(lo, min(a, mode - int(40 * sd))), min(hi, max(a, mode + int(40 * sd)))
    obs = math.comb(r1, a) * math.comb(r2, c1 - a)
    w, total = math.comb(r1, first) * math.comb(r2, c1 - first), 0
    for x in range(first, last + 1):
        if x > first:
            w = w * (r1 - x + 1) * (c1 - x + 1) // (x * (r2 - c1 + x))
        if w * 10 ** 7 <= obs * (10 ** 7 + 1):
            total += w
    return float(Fraction(total, math.comb(big_n, c1)))


def binom_sf_rational(k, n, p):
    pf = Fraction(p)
    return float(sum(math.comb(n, i) * pf ** i * (1 - pf) ** (n - i) for i in range(max(k, 0), n + 1)))


def main():
    if not os.path.exists(LIB):
        print("FAIL stats_driver_build: %s is missing (run make first)" % LIB)
        return 1
    tmp = tempfile.mkdtemp(prefix="bc-stats-")
    try:
        exe = build_driver(tmp)
        fisher(exe)
        wilson_newcombe(exe)
        binomial(exe)
        trend(exe)
        logistic(exe)
        distributions(exe)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    return 0


def fisher(exe):
    tables = []
    for _ in range(120):  # small tables, many zeros
        tables.append([int(v) for v in rng.integers(0, 15, 4)])
    for _ in range(40):  # a zero cell or a zero margin on purpose
        t = [int(v) for v in rng.integers(0, 40, 4)]
        t[int(rng.integers(0, 4))] = 0
        if rng.random() < 0.3:
            t[int(rng.integers(0, 4))] = 0
        tables.append(t)
    for _ in range(60):  # medium
        tables.append([int(v) for v in rng.integers(0, 2000, 4)])
    for _ in range(60):  # large margins, near and far from independence
        n1, n2 = int(rng.integers(1000, 1000000)), int(rng.integers(1000, 1000000))
        p1 = rng.uniform(0.01, 0.99)
        p2 = p1 + rng.normal(0, 0.002 if rng.random() < 0.6 else 0.02)
        p2 = min(max(p2, 0.0), 1.0)
        a, c = int(rng.binomial(n1, p1)), int(rng.binomial(n2, p2))
        tables.append([a, n1 - a, c, n2 - c])
    # large margins with an exact answer within reach of integer arithmetic
    exact_big = [[11800, 8200, 11500, 8500], [9000, 11000, 10000, 10000], [30, 39970, 12, 39988],
                 [150, 399850, 120, 399880], [2, 999998, 9, 999991]]
    tables += exact_big
    got = run_driver(exe, ["fisher %d %d %d %d" % tuple(t) for t in tables])
    worst, where, n = 0.0, "", 0
    worst_x, where_x, nx = 0.0, "", 0
    for t, (p,) in zip(tables, got):
        # scipy.stats.fisher_exact (SciPy 1.10, two-sided, same 1e-7 rule)
        ref = stats.fisher_exact([[t[0], t[1]], [t[2], t[3]]])[1]
        if ref > 1e-280:
            e = rel(p, ref)
            n += 1
            if e > worst:
                worst, where = e, "%s: ours %.17g, scipy %.17g" % (t, p, ref)
        if sum(t) <= 10000 or t in exact_big:  # exact integer arithmetic
            ref = fisher_exact_rational(*t)
            e = rel(p, ref)
            nx += 1
            if e > worst_x:
                worst_x, where_x = e, "%s: ours %.17g, exact %.17g" % (t, p, ref)
    # SciPy sums hypergeometric probabilities in double precision; 1e-7
    # relative leaves room for its own rounding on million-sized margins.
    report("fisher_two_sided_vs_scipy", n, worst, 1e-7, "relative difference", where)
    # Probabilities are formed as exp(log p); at p ~ 1e-160 the rounding of
    # log p (|log p| ~ 370) alone is ~1e-13 relative, hence 1e-12.
    report("fisher_two_sided_vs_exact_rational", nx, worst_x, 1e-12, "relative difference", where_x)


def wilson_newcombe(exe):
    cases = []
    for _ in range(250):
        n = int(rng.choice([1, 2, 5, 10, 30, 100, 1000, 100000])) if rng.random() < 0.5 else int(rng.integers(1, 500))
        r = rng.random()
        x = 0 if r < 0.15 else n if r < 0.3 else int(rng.integers(0, n + 1))
        level = float(rng.choice([0.8, 0.9, 0.95, 0.99]))
        cases.append((x, n, level))
    got = run_driver(exe, ["wilson %d %d %.17g" % c for c in cases])
    worst, where, bad = 0.0, "", []
    for (x, n, level), (rc, lo, hi) in zip(cases, got):
        # statsmodels proportion_confint(method='wilson') (Wilson 1927)
        slo, shi = proportion_confint(x, n, alpha=1 - level, method="wilson")
        e = max(abs(lo - slo), abs(hi - shi))
        if rc != 0 or (x == 0 and lo != 0) or (x == n and hi != 1):
            bad.append((x, n, rc, lo, hi))
        if e > worst:
            worst, where = e, "%d/%d level %g: ours (%.17g, %.17g), statsmodels (%.17g, %.17g)" % (
                x, n, level, lo, hi, slo, shi)
    if bad:
        print("FAIL wilson_exact_ends: %s (x = 0 must give 0 and x = n give 1 exactly)" % (bad[:3],))
    else:
        print("ok wilson_exact_ends: %d cases" % len(cases))
    report("wilson_vs_statsmodels", len(cases), worst, 1e-12, "absolute difference", where)

    pairs = []
    for _ in range(200):
        n1, n2 = int(rng.integers(1, 300)), int(rng.integers(1, 300))
        x1 = int(rng.choice([0, n1, rng.integers(0, n1 + 1)]))
        x2 = int(rng.choice([0, n2, rng.integers(0, n2 + 1)]))
        pairs.append((x1, n1, x2, n2))
    got = run_driver(exe, ["newcombe %d %d %d %d 0.95" % c for c in pairs])
    worst, where = 0.0, ""
    for (x1, n1, x2, n2), (rc, d, lo, hi) in zip(pairs, got):
        # statsmodels confint_proportions_2indep(method='newcomb') (Newcombe 1998b, method 10)
        slo, shi = confint_proportions_2indep(x1, n1, x2, n2, method="newcomb", compare="diff")
        e = max(abs(lo - slo), abs(hi - shi), abs(d - (x1 / n1 - x2 / n2)))
        if rc != 0:
            e = math.inf
        if e > worst:
            worst, where = e, "%d/%d - %d/%d: ours (%.17g, %.17g), statsmodels (%.17g, %.17g)" % (
                x1, n1, x2, n2, lo, hi, slo, shi)
    report("newcombe_vs_statsmodels", len(pairs), worst, 1e-12, "absolute difference", where)


def binomial(exe):
    cases = []
    for _ in range(150):
        n = int(rng.integers(0, 60))
        cases.append((int(rng.integers(-2, n + 3)), n, float(rng.choice([rng.random(), 0.36, 0.5, 1e-3, 0.999]))))
    for _ in range(150):
        n = int(rng.choice([1000, 20000, 500000, 1000000]))
        p = float(rng.choice([rng.random(), 1e-5, 0.5, 0.99999]))
        mean, sd = n * p, math.sqrt(n * p * (1 - p)) + 1
        k = int(round(mean + rng.normal(0, 1) * sd * float(rng.choice([0.5, 2, 6, 15]))))
        cases.append((min(max(k, 0), n), n, p))
    lines = []
    for k, n, p in cases:
        lines += ["binom_sf %d %d %.17g" % (k, n, p), "binom_cdf %d %d %.17g" % (k, n, p)]
    got = run_driver(exe, lines)
    worst, where, nc = 0.0, "", 0
    worst_x, where_x, nx = 0.0, "", 0
    for i, (k, n, p) in enumerate(cases):
        sf, cdf = got[2 * i][0], got[2 * i + 1][0]
        # scipy.stats.binom: P(X >= k) = sf(k - 1), P(X <= k) = cdf(k)
        for ours, ref, what in ((sf, stats.binom.sf(k - 1, n, p), "sf"), (cdf, stats.binom.cdf(k, n, p), "cdf")):
            if ref > 1e-280 or ours > 1e-280:
                e = rel(ours, ref)
                nc += 1
                if e > worst:
                    worst, where = e, "%s k=%d n=%d p=%.17g: ours %.17g, scipy %.17g" % (what, k, n, p, ours, ref)
        if n <= 60:  # exact rational sum of the binomial probabilities
            ref = binom_sf_rational(k, n, p)
            e = rel(sf, ref) if ref > 1e-280 else abs(sf - ref)
            nx += 1
            if e > worst_x:
                worst_x, where_x = e, "k=%d n=%d p=%.17g: ours %.17g, exact %.17g" % (k, n, p, sf, ref)
    report("binomial_tails_vs_scipy", nc, worst, 1e-9, "relative difference", where)
    report("binomial_sf_vs_exact_rational", nx, worst_x, 1e-11, "relative difference", where_x)


def random_groups(k, nmax):
    x = np.sort(rng.uniform(-3, 3, k)).round(3)
    n = rng.integers(0 if rng.random() < 0.2 else 1, nmax, k)
    b0, b1 = rng.normal(0, 1), rng.normal(0, 0.7)
    p = 1 / (1 + np.exp(-(b0 + b1 * x)))
    s = rng.binomial(n, p)
    return [int(v) for v in s], [int(v) for v in n], [float(v) for v in x]


def separated(s, n, x):
    """One-dimensional complete or quasi-complete separation."""
    succ = [xi for si, ni, xi in zip(s, n, x) if ni > 0 and si > 0]
    fail = [xi for si, ni, xi in zip(s, n, x) if ni > 0 and ni - si > 0]
    if not succ or not fail:
        return True
    return max(fail) <= min(succ) or max(succ) <= min(fail)


def groups_line(cmd, s, n, x):
    return cmd + " %d " % len(s) + " ".join("%d %d %.17g" % t for t in zip(s, n, x))


def trend(exe):
    data = []
    while len(data) < 200:
        s, n, x = random_groups(int(rng.integers(2, 9)), int(rng.choice([30, 300, 30000])))
        tot, succ = sum(n), sum(s)
        if tot > 1 and 0 < succ < tot and len({xi for xi, ni in zip(x, n) if ni > 0}) > 1:
            data.append((s, n, x))
    got = run_driver(exe, [groups_line("trend", *d) for d in data])
    worst, where = 0.0, ""
    for (s, n, x), (rc, z, p, m2, p_m2) in zip(data, got):
        # statsmodels Table.test_ordinal_association: the Mantel (N - 1) form
        # (check-values.md §4), zscore = sqrt(M^2) with the sign of the trend
        tab = Table(np.array([s, [ni - si for si, ni in zip(s, n)]], float).T, shift_zeros=False)
        res = tab.test_ordinal_association(row_scores=np.array(x), col_scores=np.array([1.0, 0.0]))
        e = max(rel(math.copysign(math.sqrt(m2), z), res.zscore), rel(p_m2, res.pvalue, 1e-300))
        if rc != 0:
            e = math.inf
        if e > worst:
            worst, where = e, "%s: ours z %.17g m2 %.17g p %.17g, statsmodels zscore %.17g p %.17g" % (
                (s, n, x), z, m2, p_m2, res.zscore, res.pvalue)
    report("trend_mantel_vs_statsmodels", len(data), worst, 1e-9, "relative difference", where)


def logistic(exe):
    data, sep = [], []
    while len(data) < 220:
        s, n, x = random_groups(int(rng.integers(3, 12)), int(rng.choice([10, 60, 500, 5000])))
        if sum(n) == 0:
            continue
        (sep if separated(s, n, x) else data).append((s, n, x))
    for _ in range(20):  # deliberately separated data sets
        k = int(rng.integers(3, 8))
        x = sorted(float(v) for v in rng.uniform(0, 5, k).round(2))
        n = [int(v) for v in rng.integers(1, 30, k)]
        cut = int(rng.integers(1, k))
        s = [0 if i < cut else n[i] for i in range(k)]
        if rng.random() < 0.5:  # quasi-complete: a mixed group at the cut
            s[cut] = int(rng.integers(0, n[cut] + 1))
        sep.append((s, n, x))
    got = run_driver(exe, [groups_line("logistic", *d) for d in data + sep])
    worst = {"slope": (0.0, ""), "se": (0.0, ""), "p": (0.0, ""), "lr": (0.0, "")}
    for (s, n, x), r in zip(data, got[:len(data)]):
        rc, conv, b0, se0, b1, se1, z, p, ll, ll0, lr, lr_p = r
        keep = [i for i in range(len(n)) if n[i] > 0]
        endog = np.array([[s[i], n[i] - s[i]] for i in keep], float)
        exog = sm.add_constant(np.array([x[i] for i in keep]), has_constant="add")
        # statsmodels GLM, binomial family, IRLS to 1e-13 (check-values.md §5 method)
        g = sm.GLM(endog, exog, family=sm.families.Binomial()).fit(tol=1e-13, maxiter=200)
        # standard errors from the inverse observed information at statsmodels'
        # estimate (its bse uses the weights of the step before the last)
        se_ref = math.sqrt(np.linalg.inv(-g.model.hessian(g.params))[1, 1])
        p_ref = 2 * stats.norm.sf(abs(g.params[1] / se_ref))
        lr_ref = 2 * (g.llf - sm.GLM(endog, exog[:, :1], family=sm.families.Binomial()).fit(tol=1e-13).llf)
        where = "%s: ours b1 %.17g se %.17g p %.17g conv %d; statsmodels %.17g %.17g %.17g" % (
            (s, n, x), b1, se1, p, conv, g.params[1], se_ref, p_ref)
        big = math.inf if rc != 0 or conv != 1 else 0
        for key, e in (("slope", rel(b1, g.params[1], 1e-8)), ("se", rel(se1, se_ref)),
                       ("p", rel(p, p_ref, 1e-300)), ("lr", rel(lr, lr_ref, 1e-8))):
            e = max(e, big)
            if e > worst[key][0]:
                worst[key] = (e, where)
    report("logistic_slope_vs_statsmodels", len(data), worst["slope"][0], 1e-7, "relative difference", worst["slope"][1])
    report("logistic_se_vs_statsmodels", len(data), worst["se"][0], 1e-7, "relative difference", worst["se"][1])
    report("logistic_wald_p_vs_statsmodels", len(data), worst["p"][0], 1e-7, "relative difference", worst["p"][1])
    report("logistic_lr_vs_statsmodels", len(data), worst["lr"][0], 1e-7, "relative difference", worst["lr"][1])
    # Separated data have no maximum-likelihood estimate (Albert A, Anderson
    # JA (1984) Biometrika 71:1-10, from memory): the fit must say so.
    flagged = [d for d, r in zip(sep, got[len(data):]) if r[0] != 0 or r[1] != 0]
    if flagged or not sep:
        print("FAIL logistic_separation_flagged: %d of %d reported as converged: %s" % (
            len(flagged), len(sep), flagged[:2]))
    else:
        print("ok logistic_separation_flagged: %d separated data sets, none reported as converged" % len(sep))


def distributions(exe):
    ps = list(10 ** rng.uniform(-300, -1, 60)) + list(rng.uniform(0, 1, 100)) + list(1 - 10 ** rng.uniform(-15, -1, 40))
    xs = [(float(rng.uniform(0, 80)), float(rng.choice([1, 2, 3, 4, 5, 7.5, 10, 30]))) for _ in range(200)]
    got = run_driver(exe, ["quantile %.17g" % p for p in ps] + ["chi2_sf %.17g %.17g" % c for c in xs])
    worst, where = 0.0, ""
    for p, (q,) in zip(ps, got[:len(ps)]):
        ref = stats.norm.ppf(p)  # scipy.special.ndtri (Cephes)
        e = rel(q, ref, 1e-3)
        if e > worst:
            worst, where = e, "p=%.17g: ours %.17g, scipy %.17g" % (p, q, ref)
    report("normal_quantile_vs_scipy", len(ps), worst, 1e-12, "relative difference", where)
    worst, where = 0.0, ""
    for (x, df), (q,) in zip(xs, got[len(ps):]):
        ref = stats.chi2.sf(x, df)  # scipy.special.chdtrc (Cephes igamc)
        e = rel(q, ref)
        if e > worst:
            worst, where = e, "x=%.17g df=%g: ours %.17g, scipy %.17g" % (x, df, q, ref)
    report("chi2_sf_vs_scipy", len(xs), worst, 1e-11, "relative difference", where)


if __name__ == "__main__":
    sys.exit(main())
