#!/usr/bin/python3
"""test_affinity_scipy.py - `bathychron shift --background` (the binomial
depth-affinity test against the sampled background) checked end to end
against SciPy (Debian's python3-scipy: scipy.stats.binom, binomtest):

  * the worked example of check-values.md section 12 (values computed there
    with scipy.stats.binom and an exact rational sum; the attribution of the
    test to Kiessling & Aberhan 2007 / Simpson & Harnik 2009 is from memory,
    unverified), in all four variants: pooled or bin-weighted background,
    focal occurrences included or removed;
  * seeded random tables (2 to 4 bins, random counts, random variant): every
    bin's background share and one-sided tails, and the overall test.

Builds small databases with the program (`bathychron init`) and the sqlite3
module, runs `bathychron shift ... --format csv` and reads the rows and the
'# tests.' lines. p-values are printed with 6 significant digits, so the
tolerance is 1e-5 relative. Prints `ok NAME` / `FAIL NAME: why` per check.
Run with /usr/bin/python3 (tests/run.sh does).
"""
import io
import os
import re
import sqlite3
import subprocess
import sys
import tempfile

import numpy as np
import pandas as pd
from scipy import stats

TOP = os.environ.get("BC_SOURCE_DIR") or os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
BC = os.environ.get("BC_PROGRAM") or os.path.join(TOP, "build", "bathychron")
rng = np.random.default_rng(20261201)  # fixed seed: the same tables on every run
failures = 0


def report(name, ok, why=""):
    global failures
    if ok:
        print(f"ok {name}")
    else:
        failures += 1
        print(f"FAIL {name}: {why}"[:600])


def close(a, b, rel=1e-5, absolute=1e-12):
    return abs(a - b) <= max(absolute, rel * abs(b))


def make_db(path, bins):
    """bins: list of (focal_deep, focal_n, other_deep, other_n), bin i is
    (60 - 5i, 55 - 5i] Ma; focal = group 'focal', the rest group 'other'."""
    subprocess.run([BC, "init", path], check=True, capture_output=True)
    con = sqlite3.connect(path)
    con.execute("INSERT INTO import_batches(kind, file, sha256, tool_version) VALUES ('occurrences', 'x.csv', 'x', 'test')")
    rows = []
    for i, (fd, fn, od, on) in enumerate(bins):
        age = 58.0 - 5 * i
        for group, deep, n in (("focal", fd, fn), ("other", od, on)):
            for j in range(n):
                d = 500.0 if j < deep else 20.0
                rows.append((len(rows) + 2, group, age, age - 1, d, d))
    con.executemany(
        "INSERT INTO occurrences(batch_id, line, scientific_name, taxon_group, older_ma, younger_ma, age_status, timescale,"
        " min_depth_m, max_depth_m) VALUES (1, ?, 'Aus bus', ?, ?, ?, 'numeric', 't', ?, ?)", rows)
    con.commit()
    con.close()


def run(path, variant, with_focal):
    cmd = [BC, "shift", path, "--group", "focal", "--bins", "5", "--background", variant]
    if with_focal:
        cmd.append("--background-with-focal")
    r = subprocess.run(cmd, capture_output=True, text=True)
    if r.returncode != 0:
        raise RuntimeError(f"{' '.join(cmd)}: exit {r.returncode}: {r.stderr.strip()}")
    tests = dict(re.findall(r"^# tests\.(\w+): (.*)$", r.stdout, re.M))
    df = pd.read_csv(io.StringIO(r.stdout), comment="#")
    return df, tests


def expected(bins, variant, with_focal):
    """The section 12 formulation computed with SciPy: per bin p_b = K_b/N_b;
    overall p0 pooled = sum K / sum N, bin-weighted = sum n_b p_b / n."""
    per, k, n, K, N, w = [], 0, 0, 0, 0, 0.0
    for fd, fn, od, on in bins:
        Kb, Nb = (fd + od, fn + on) if with_focal else (od, on)
        pb = Kb / Nb if Nb else float("nan")
        if fn and Nb:
            per.append((pb, stats.binom.sf(fd - 1, fn, pb), stats.binom.cdf(fd, fn, pb)))
            k, n, K, N, w = k + fd, n + fn, K + Kb, N + Nb, w + fn * pb
        else:
            per.append((pb, float("nan"), float("nan")))
    p0 = K / N if variant == "pooled" else w / n
    return per, k, n, p0, stats.binom.sf(k - 1, n, p0), stats.binom.cdf(k, n, p0)


with tempfile.TemporaryDirectory() as tmp:
    # check-values.md section 12: bin 1 taxon 5 deep of 6, background 60 of
    # 200; bin 2 taxon 6 of 8, background 120 of 300 (backgrounds include the
    # taxon). Expected P(X >= 11) and P(X <= 11) as listed there.
    path = os.path.join(tmp, "s12.gpkg")
    make_db(path, [(5, 6, 55, 194), (6, 8, 114, 292)])
    s12 = {
        ("pooled", True): (0.36, 0.001448454521, 0.9998074853),
        ("pooled", False): (169 / 486, 0.001039416809, 0.9998686654),
        ("binned", True): (5 / 14, 0.00134235956, 0.9998236617),
    }
    for (variant, with_focal), (p0, up, lo) in s12.items():
        name = f"affinity_section12_{variant}_{'with' if with_focal else 'without'}_focal"
        try:
            df, t = run(path, variant, with_focal)
            ok = (close(float(t["affinity_expected_share"]), p0) and close(float(t["affinity_p_deep"]), up)
                  and close(float(t["affinity_p_shallow"]), lo) and t["affinity_deep"] == "11" and t["affinity_n"] == "14"
                  and t["affinity"].startswith("deep"))
            report(name, ok, f"{t}")
        except Exception as e:  # noqa: BLE001 - report, do not stop
            report(name, False, str(e))
    # the fourth variant (bin-weighted, taxon removed) is not tabulated in
    # section 12: compare with SciPy directly
    bins = [(5, 6, 55, 194), (6, 8, 114, 292)]
    per, k, n, p0, up, lo = expected(bins, "binned", False)
    df, t = run(path, "binned", False)
    report("affinity_section12_binned_without_focal_scipy",
           close(float(t["affinity_expected_share"]), p0) and close(float(t["affinity_p_deep"]), up)
           and close(float(t["affinity_p_shallow"]), lo), f"{t} vs p0={p0} up={up} lo={lo}")

    # Seeded random tables.
    worst = 0.0
    bad = []
    for case in range(16):
        nb = int(rng.integers(2, 5))
        bins = []
        for _ in range(nb):
            fn = int(rng.integers(0, 40))
            fd = int(rng.integers(0, fn + 1))
            on = int(rng.integers(1, 300))
            od = int(rng.integers(0, on + 1))
            bins.append((fd, fn, od, on))
        if sum(b[1] for b in bins) == 0:
            bins[0] = (1, 3, bins[0][2], bins[0][3])
        variant = ["binned", "pooled"][case % 2]
        with_focal = bool((case // 2) % 2)
        path = os.path.join(tmp, f"r{case}.gpkg")
        make_db(path, bins)
        try:
            df, t = run(path, variant, with_focal)
        except Exception as e:  # noqa: BLE001
            bad.append(f"case {case}: {e}")
            continue
        per, k, n, p0, up, lo = expected(bins, variant, with_focal)
        # rows are the bins from the oldest to the youngest occupied one
        byname = {r["bin"]: r for _, r in df.iterrows()}
        for i, (pb, pup, plo) in enumerate(per):
            name = f"{60 - 5 * i:g}-{55 - 5 * i:g} Ma"
            if name not in byname:
                if bins[i][1]:
                    bad.append(f"case {case}: bin {name} missing")
                continue
            r = byname[name]
            for got, want in ((r["bg_frac_deep"], pb), (r["affinity_p_deep"], pup), (r["affinity_p_shallow"], plo)):
                if np.isnan(want):
                    if not pd.isna(got):
                        bad.append(f"case {case} {name}: {got} for NA")
                    continue
                if pd.isna(got) or not close(float(got), want):
                    bad.append(f"case {case} {name}: {got} vs {want}")
                else:
                    worst = max(worst, abs(float(got) - want) / max(abs(want), 1e-300))
        for key, want in (("affinity_expected_share", p0), ("affinity_p_deep", up), ("affinity_p_shallow", lo)):
            got = float(t[key])
            if not close(got, want):
                bad.append(f"case {case} {key}: {got} vs {want}")
        # scipy's binomtest gives the same one-sided p
        bt = stats.binomtest(k, n, p0, alternative="greater").pvalue
        if not close(float(t["affinity_p_deep"]), bt):
            bad.append(f"case {case}: binomtest {bt} vs {t['affinity_p_deep']}")
    report("affinity_random_tables_scipy", not bad, "; ".join(bad[:5]))
    if not bad:
        print(f"# 16 random tables, worst relative difference {worst:.2e} (output has 6 significant digits)")

sys.exit(1 if failures else 0)
