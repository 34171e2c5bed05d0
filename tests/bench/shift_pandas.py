#!/usr/bin/python3
"""shift_pandas.py DB WIDTH - the same counting as `bathychron shift DB --bins WIDTH`
(majority span rule, split at 200 m, Wilson 95 % intervals), written the
straightforward way with pandas/numpy, for the speed comparison in
bench_shift.sh. Reads the same columns from the same database."""
import sqlite3
import sys

import numpy as np
import pandas as pd

db, width = sys.argv[1], float(sys.argv[2])
S = 200.0
con = sqlite3.connect(db)
df = pd.read_sql_query(
    "SELECT occurrence_pk, older_ma, younger_ma, min_depth_m, max_depth_m, reference_key, locality_id, articulation"
    " FROM occurrences ORDER BY occurrence_pk", con)
df = df[df.min_depth_m.notna() | df.max_depth_m.notna()].copy()
dmin = df.min_depth_m.fillna(df.max_depth_m)
dmax = df.max_depth_m.fillna(df.min_depth_m)
zone = np.where((dmax <= S) & (dmin < S), "shallow", np.where(dmin >= S, "deep", "straddle"))
o, y = df.older_ma.values, df.younger_ma.values
# majority rule: the bin holding most of the range; ties to the older bin
kt, kb = np.ceil(o / width), np.floor(y / width)
best = np.full(len(df), np.nan)
bestov = np.full(len(df), -1.0)
for k in range(int(kt.max()), int(kb.min()), -1):
    ov = np.minimum(o, k * width) - np.maximum(y, (k - 1) * width)
    take = (ov > 0) & (ov > bestov + 1e-9)
    best[take] = k
    bestov[take] = ov[take]
point = o == y
best[point] = np.floor(o[point] / width) + 1
df["bin"] = best
df["zone"] = zone
t = df.groupby(["bin", "zone"]).size().unstack(fill_value=0)
for c in ("shallow", "deep", "straddle"):
    if c not in t:
        t[c] = 0
t["refs"] = df[df.reference_key != ""].groupby("bin").reference_key.nunique()
t["locs"] = df.groupby("bin").locality_id.nunique()
m = t.shallow + t.deep
p = t.deep / m
z = 1.959963984540054
den = 2 * (m + z * z)
t["frac"] = p
t["lo"] = (2 * m * p + z * z - z * np.sqrt(z * z + 4 * m * p * (1 - p))) / den
t["hi"] = (2 * m * p + z * z + z * np.sqrt(z * z + 4 * m * p * (1 - p))) / den
t = t.sort_index(ascending=False)[["shallow", "deep", "straddle", "refs", "locs", "frac", "lo", "hi"]]
t.to_csv(sys.stdout)
