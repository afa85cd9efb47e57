#!/usr/bin/python3
"""The same per-series summary as pandas_summary.py, numpy only, vectorised.

Best effort at the fastest plain-Python-stack script: rows are streamed from
Python's sqlite3 module straight into one numpy array (no DataFrame), and
every statistic is computed for all series at once with segment sums
(numpy.add.reduceat) instead of a Python loop over series:

  * OLS slope of value on time in years (365.25 d) with an intercept:
    Sxy / Sxx on per-series centred t and y;
  * residuals r = (y - ybar) - slope * (x - xbar);
  * sample ACF of r to lag 48: rho_k = sum_i r_i r_{i+k} / sum_i r_i^2
    within each series (divisor n for both, mean removed: the definition
    statsmodels.tsa.stattools.acf uses with its defaults);
  * Ljung-Box at lag 24: Q = n (n + 2) sum_{k=1}^{24} rho_k^2 / (n - k), p =
    chi-square(24) upper tail, in the closed form for even degrees of freedom
    exp(-Q/2) sum_{j<12} (Q/2)^j / j!.

Readings are taken in time order as consecutive observations (gaps are not
filled), as in pandas_summary.py; with --out the per-series figures can be
compared with that script's.

  /usr/bin/python3 testdata/bench/numpy_summary.py STORE.db [--out per_series.csv]

Prints one JSON line to stdout like pandas_summary.py. Used by
testdata/bench/compare.sh; see BENCHMARKS.md.
"""
import itertools
import json
import resource
import sqlite3
import sys
import time

t_start = time.perf_counter()
import numpy as np  # noqa: E402

YEAR = 365.25 * 86400
MAXLAG = 48
LBLAG = 24


def seg_sum(v, starts):
    return np.add.reduceat(v, starts)


def main(argv):
    if len(argv) < 2:
        sys.exit("usage: numpy_summary.py STORE.db [--out FILE.csv]")
    path = argv[1]
    out = argv[argv.index("--out") + 1] if "--out" in argv else None
    t_imports = time.perf_counter() - t_start

    t0 = time.perf_counter()
    con = sqlite3.connect(f"file:{path}?mode=ro", uri=True)
    n = con.execute("SELECT count(*) FROM readings").fetchone()[0]
    cur = con.execute("SELECT series_id, t, value FROM readings ORDER BY series_id, t")
    a = np.fromiter(itertools.chain.from_iterable(cur), dtype=np.float64, count=3 * n).reshape(n, 3)
    con.close()
    t_read = time.perf_counter() - t0

    sid = a[:, 0].astype(np.int64)
    t = a[:, 1]
    y = a[:, 2]
    del a
    starts = np.flatnonzero(np.r_[True, sid[1:] != sid[:-1]])
    ends = np.r_[starts[1:], n]
    counts = ends - starts
    g = np.repeat(np.arange(len(starts)), counts)

    x = t / YEAR
    x -= (seg_sum(x, starts) / counts)[g]
    yc = y - (seg_sum(y, starts) / counts)[g]
    sxx = seg_sum(x * x, starts)
    sxy = seg_sum(x * yc, starts)
    slope = sxy / sxx
    r = yc - slope[g] * x
    r -= (seg_sum(r, starts) / counts)[g]
    c0 = seg_sum(r * r, starts)

    rho = np.zeros((len(starts), MAXLAG + 1))
    rho[:, 0] = 1.0
    for k in range(1, MAXLAG + 1):
        prod = np.empty(n - k + 1)
        np.multiply(r[:-k], r[k:], out=prod[:-1])
        prod[-1] = 0.0
        hi = ends - k
        ok = hi > starts
        idx = np.empty(2 * len(starts), dtype=np.int64)
        idx[0::2] = starts
        idx[1::2] = np.where(ok, hi, starts + 1)
        idx = np.minimum(idx, n - k)
        s = np.add.reduceat(prod, idx)[0::2]
        rho[:, k] = np.where(ok, s, 0.0) / c0

    nn = counts.astype(np.float64)
    lags = np.arange(1, LBLAG + 1)
    q = nn * (nn + 2) * np.sum(rho[:, 1:LBLAG + 1] ** 2 / (nn[:, None] - lags), axis=1)
    half = q / 2
    term = np.ones_like(half)
    tail = np.ones_like(half)
    for j in range(1, LBLAG // 2):
        term = term * half / j
        tail += term
    p = np.exp(-half) * tail
    wall = time.perf_counter() - t0

    if out:
        with open(out, "w") as f:
            f.write("series_id,n,slope_per_year,resid_acf1,resid_acf48,lb_q24,lb_p24\n")
            for i in range(len(starts)):
                f.write("%d,%d,%.17g,%.17g,%.17g,%.17g,%.17g\n" % (
                    sid[starts[i]], counts[i], slope[i], rho[i, 1], rho[i, 48], q[i], p[i]))
    print(json.dumps({
        "script": "numpy_summary.py", "numpy": np.__version__,
        "series": int(len(starts)), "rows": int(n),
        "imports_s": round(t_imports, 3), "read_s": round(t_read, 3), "wall_s": round(wall, 3),
        "peak_rss_mib": round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, 1),
    }))


if __name__ == "__main__":
    main(sys.argv)
