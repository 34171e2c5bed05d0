"""test_ranges_marshall.py - the range-end confidence limits of `bathychron
ranges` against their published definition, computed independently.

Source: Strauss D, Sadler PM (1989) Classical confidence intervals and
Bayesian probability estimates for ends of local taxon ranges. Mathematical
Geology 21(4):411-427; Marshall CR (1990) Confidence intervals on
stratigraphic ranges. Paleobiology 16(1):1-10 (title, journal and the
method's assumptions seen in the article's abstract; volume, pages and the
equation C = 1 - (1 + r)^-(H-1) from memory). No printed table value is
used: the published numbers were not available to read, so each value is
recomputed here from the model the papers state - H fossil horizons placed
independently and uniformly at random within the true range - by two routes
that do not use the closed form: numerical integration of the joint density
of the two outermost horizons (SciPy), and simulation (NumPy).
"""
import json
import os
import sqlite3
import subprocess
import sys
import tempfile

import numpy as np
from scipy import integrate, optimize

TOP = os.environ.get("BC_SOURCE_DIR", os.path.join(os.path.dirname(__file__), "..", ".."))
BC = os.environ.get("BC_PROGRAM", os.path.join(TOP, "build", "bathychron"))


def ok(name):
    print("ok " + name)


def fail(name, why):
    print("FAIL %s: %s" % (name, why))


def coverage_integral(h, r):
    """P(gap at the young end <= r * observed range) for h uniform horizons on
    [0, 1] (true end at 0), from the joint density of the minimum m and the
    maximum M: h (h - 1) (M - m)^(h - 2) on 0 < m < M < 1."""
    # the event m <= r (M - m), i.e. m <= r M / (1 + r)
    val, _ = integrate.dblquad(lambda m, M: h * (h - 1) * (M - m) ** (h - 2),
                               0, 1, lambda M: 0, lambda M: r * M / (1 + r), epsabs=1e-12, epsrel=1e-12)
    return val


def extension_by_root(h, c):
    return optimize.brentq(lambda r: coverage_integral(h, r) - c, 1e-9, 1e6, xtol=1e-13, rtol=1e-12)


def closed_form(h, c):
    return (1 - c) ** (-1 / (h - 1)) - 1


# 1. The closed form the tool uses equals the root of the coverage integral.
bad = []
for h in (2, 3, 5, 10, 20):
    for c in (0.5, 0.8, 0.95):
        a, b = extension_by_root(h, c), closed_form(h, c)
        if abs(a - b) > 1e-7 * max(1, b):
            bad.append((h, c, a, b))
if bad:
    fail("ranges_marshall_closed_form_vs_integral", bad)
else:
    ok("ranges_marshall_closed_form_vs_integral")

# 2. Simulated coverage of the 95 % limit (fixed seed): within 4 standard errors.
rng = np.random.default_rng(19900101)
bad = []
n = 200000
for h in (2, 4, 10):
    x = rng.random((n, h))
    lo, hi = x.min(axis=1), x.max(axis=1)
    cover = np.mean(lo <= closed_form(h, 0.95) * (hi - lo))
    se = (0.95 * 0.05 / n) ** 0.5
    if abs(cover - 0.95) > 4 * se:
        bad.append((h, cover))
if bad:
    fail("ranges_marshall_simulated_coverage", bad)
else:
    ok("ranges_marshall_simulated_coverage")

# 3. The tool on horizons at invented ages: every shallow last_ci_ma and
#    first_ci_ma equals the limit from the integral route.
with tempfile.TemporaryDirectory() as d:
    db = os.path.join(d, "m.gpkg")
    subprocess.run([BC, "init", db], check=True, capture_output=True)
    con = sqlite3.connect(db)
    con.execute("INSERT INTO import_batches(kind, file, sha256, tool_version) VALUES ('occurrences', 'x.csv', 'x', 'test')")
    cases = {"Aus": [71.3, 70.1, 68.8, 66.4, 66.1, 64.0, 61.2], "Bus": [50.0, 42.0], "Cus": [30.5, 29.5, 21.0]}
    line = 0
    for genus, mids in cases.items():
        for m in mids:
            line += 1
            con.execute("INSERT INTO occurrences(batch_id, line, scientific_name, genus, older_ma, younger_ma, age_status,"
                        " timescale, min_depth_m, max_depth_m) VALUES (1, ?, ?, ?, ?, ?, 'numeric', 't', 10, 20)",
                        (line, genus + " sp.", genus, m + 0.25, m - 0.25))
    con.commit()
    con.close()
    for level in (0.95, 0.8):
        out = subprocess.run([BC, "ranges", db, "--format", "json", "--level", str(level)], capture_output=True, text=True)
        if out.returncode != 0:
            fail("ranges_marshall_tool_%g" % level, out.stderr)
            continue
        taxa = {t["taxon"]: t for t in json.loads(out.stdout)["taxa"]}
        bad = []
        for genus, mids in cases.items():
            h, rng_ = len(mids), max(mids) - min(mids)
            r = extension_by_root(h, level)
            t = taxa[genus]
            want_last, want_first = max(0.0, min(mids) - r * rng_), max(mids) + r * rng_
            if t["shallow_horizons"] != h or abs(t["shallow_last_ci_ma"] - want_last) > 1e-6 or abs(t["shallow_first_ci_ma"] - want_first) > 1e-6:
                bad.append((genus, t["shallow_horizons"], t["shallow_last_ci_ma"], want_last, t["shallow_first_ci_ma"], want_first))
        if bad:
            fail("ranges_marshall_tool_%g" % level, bad)
        else:
            ok("ranges_marshall_tool_%g" % level)
sys.exit(0)
