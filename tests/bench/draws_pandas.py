#!/usr/bin/python3
"""draws_pandas.py DB WIDTH DRAWS - one resampling draw of `bathychron shift DB
--bins WIDTH --draws N` (age uniform within its range, depth uniform within a
range straddling 200 m; split at 200 m; point-age rule: a bin holds its older
bound) written the straightforward way with pandas/numpy, for the per-draw
speed comparison in bench_draws.sh. Loads once, then times DRAWS draws and
prints the mean wall and CPU seconds per draw and each bin's mean frac_deep over them."""
import sqlite3
import sys
import time

import numpy as np
import pandas as pd

db, width, draws = sys.argv[1], float(sys.argv[2]), int(sys.argv[3])
S = 200.0
con = sqlite3.connect(db)
df = pd.read_sql_query(
    "SELECT older_ma, younger_ma, min_depth_m, max_depth_m FROM occurrences ORDER BY occurrence_pk", con)
df = df[df.min_depth_m.notna() | df.max_depth_m.notna()].reset_index(drop=True)
dmin = df.min_depth_m.fillna(df.max_depth_m).to_numpy()
dmax = df.max_depth_m.fillna(df.min_depth_m).to_numpy()
o, y = df.older_ma.to_numpy(), df.younger_ma.to_numpy()
rng = np.random.default_rng(1)


def one_draw():
    t = y + rng.random(len(y)) * (o - y)
    d = dmin + rng.random(len(dmin)) * (dmax - dmin)
    straddle = ~(((dmax <= S) & (dmin < S)) | (dmin >= S))
    deep = np.where(straddle, d >= S, dmin >= S)
    k = np.ceil(t / width)          # bin ((k-1)w, kw]: a bin holds its older bound
    k[t == 0] = 1                   # the youngest edge belongs to the bin ending there
    g = pd.DataFrame({"bin": k, "deep": deep}).groupby("bin").deep.agg(["sum", "size"])
    return (g["sum"] / g["size"]).sort_index(ascending=False)


one_draw()  # warm-up
start, cpu = time.perf_counter(), time.process_time()
fr = [one_draw() for _ in range(draws)]
per = (time.perf_counter() - start) / draws
per_cpu = (time.process_time() - cpu) / draws
print(f"seconds_per_draw {per:.6f}")
print(f"cpu_seconds_per_draw {per_cpu:.6f}")
mean = pd.concat(fr, axis=1).mean(axis=1)
for k, v in mean.items():
    print(f"bin {k * width:g} {v:.6f}")
