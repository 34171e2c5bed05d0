#!/usr/bin/python3
"""External checks of `bathychron encounter` against check-values.md section 11
(prevalence, incidence and duration) and against SciPy / statsmodels.
Prints "ok NAME" or "FAIL NAME: why" per check."""
import csv
import io
import math
import os
import subprocess
import sys
import tempfile

from scipy import stats
from statsmodels.stats.proportion import proportion_confint

top = os.environ.get("BC_SOURCE_DIR") or os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
bc = os.environ.get("BC_PROGRAM") or os.path.join(top, "build", "bathychron")
failures = 0


def check(name, cond, why=""):
    global failures
    if cond:
        print(f"ok {name}")
    else:
        failures += 1
        print(f"FAIL {name}: {why}")


def rel(a, b):
    return abs(a - b) / abs(b)


YEAR = 365.25  # days; the check values are per year, the tool works in days
# Sites (name, depth m, examined, regenerating, duration days). Durations are
# exact (a single value), so the rate depends on the prevalence alone.
SITES = [
    ("P12-D025", 10, 100, 12, 0.25 * YEAR),
    ("P12-D050", 1010, 100, 12, 0.5 * YEAR),
    ("P30-D025", 2010, 100, 30, 0.25 * YEAR),
    ("P01-D025", 3010, 100, 1, 0.25 * YEAR),
]

with tempfile.TemporaryDirectory() as d:
    db = os.path.join(d, "x.gpkg")
    src = os.path.join(d, "sites.csv")
    with open(src, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["locality", "depth", "age", "scientificName", "individualsExamined",
                    "individualsRegenerating", "regenerationDays"])
        for name, depth, n, x, dur in SITES:
            w.writerow([name, depth, "Recent", "Somnicrinus checkus", n, x, repr(dur)])
    subprocess.run([bc, "init", db], check=True, capture_output=True)
    r = subprocess.run([bc, "injuries", "import", db, src], capture_output=True, text=True)
    check("import", r.returncode == 0, r.stderr)

    def run(*extra):
        r = subprocess.run([bc, "encounter", db, "--by", "site", "--zones", "1000,2000,3000", *extra],
                           capture_output=True, text=True)
        if r.returncode != 0:
            check("encounter " + " ".join(extra), False, r.stderr)
            sys.exit(1)
        rows = [l for l in r.stdout.splitlines() if not l.startswith("#")]
        return {row["site"]: row for row in csv.DictReader(io.StringIO("\n".join(rows)))}

    ss = run("--draws", "200000", "--seed", "3")
    po = run("--draws", "2000", "--model", "poisson")

# check-values.md section 11: P/(1-P) = I x D (Freeman J, Hutchison GB (1980)
# Am J Epidemiol 112(5):707-723, volume/pages from memory; Rothman, Greenland &
# Lash (2008) Modern Epidemiology 3rd ed. ch. 3, chapter from memory).
# Expected per-year values as printed there (10 decimals; computed, check script
# prevalence_affinity.py).
EXPECTED = {"P12-D025": (0.5454545455, 0.48), "P12-D050": (0.2727272727, 0.24),
            "P30-D025": (1.7142857143, 1.2), "P01-D025": (0.0404040404, 0.04)}
for site, (at_risk, per_capita) in EXPECTED.items():
    got = float(ss[site]["incidence_per_day"]) * YEAR
    check(f"check_values_11_at_risk_{site}", rel(got, at_risk) < 1e-9, f"{got} vs {at_risk}")
    got = float(ss[site]["incidence_per_capita_per_day"]) * YEAR
    check(f"check_values_11_per_capita_{site}", rel(got, per_capita) < 1e-9, f"{got} vs {per_capita}")
    got = float(ss[site]["interval_days"])
    check(f"interval_is_inverse_rate_{site}", rel(got, YEAR / at_risk) < 1e-9, f"{got} vs {YEAR / at_risk}")

for name, depth, n, x, dur in SITES:
    row = ss[name]
    # Wilson interval: statsmodels proportion_confint(method='wilson') (Debian
    # python3-statsmodels), the reference used in check-values.md section 1.
    lo, hi = proportion_confint(x, n, alpha=0.05, method="wilson")
    check(f"wilson_vs_statsmodels_{name}",
          abs(float(row["prevalence_lo"]) - lo) < 1e-9 and abs(float(row["prevalence_hi"]) - hi) < 1e-9,
          f"{row['prevalence_lo']}, {row['prevalence_hi']} vs {lo}, {hi}")
    # Monte Carlo limits with an exact duration: the tool draws the prevalence
    # from Beta(x + 1/2, n - x + 1/2) (Jeffreys), and I = P/((1-P)D) is
    # monotone, so the limits are the transformed Beta quantiles (SciPy
    # stats.beta.ppf). 200000 draws: the 2.5 % quantile carries well under 1 %
    # Monte Carlo error; tolerance 1.5 % (common practice, no source).
    f = lambda p: p / ((1 - p) * dur)
    a, b = x + 0.5, n - x + 0.5
    want_lo, want_hi = f(stats.beta.ppf(0.025, a, b)), f(stats.beta.ppf(0.975, a, b))
    got_lo, got_hi = float(row["incidence_lo"]), float(row["incidence_hi"])
    check(f"mc_limits_vs_scipy_beta_{name}", rel(got_lo, want_lo) < 0.015 and rel(got_hi, want_hi) < 0.015,
          f"{got_lo}, {got_hi} vs {want_lo}, {want_hi}")
    # Poisson model: lambda = -ln(1 - P) / D (the zero term of the Poisson
    # distribution, P(no injury in D) = exp(-lambda D)).
    lam = -math.log1p(-x / n) / dur
    got = float(po[name]["incidence_per_day"])
    check(f"poisson_model_{name}", rel(got, lam) < 1e-9, f"{got} vs {lam}")

sys.exit(1 if failures else 0)
