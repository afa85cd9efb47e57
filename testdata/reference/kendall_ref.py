#!/usr/bin/python3
"""Reference values for mann_kendall, sen_slope, seasonal_kendall, pettitt
and cross_corr / cross_correlogram.

Run with Debian's Python (scipy 1.10.1, statsmodels 0.13.5, numpy 1.24):

    /usr/bin/python3 testdata/reference/kendall_ref.py

Writes kendall_ref.json (read by the Go tests) and kendall_cases.txt (the
same series, read by kendall_ref.R). Sources per block:

  mk        scipy.stats.kendalltau(t, y)  -> tau (tau-b)
            S and Var(S) by the O(n^2) definition in numpy (independent of
            the Go O(n log n) code)
  sen       scipy.stats.theilslopes(y, x=t/31557600, alpha=conf)
            (slope per year, intercept = median(y) - slope*median(x),
            low_slope, high_slope)
  hamed_rao the published formula (Hamed & Rao 1998) written out here with
            the exact ranks of the Sen-detrended values from
            hamed_rao_exact.exact_ranks (fractions.Fraction) and
            statsmodels.tsa.stattools.acf(adjusted=False, fft=False)
  seasonal  scipy.stats.mstats.kendalltau_seasonal (per-season S, the
            per-season and global "indep" and "dep" p-values with continuity
            correction); seasonal Sen slope by numpy brute force
  pettitt   the double-sum definition U_k = sum_{i<=k} sum_{j>k} sgn(y_i-y_j)
            in numpy; p = 2 exp(-6K^2/(n^3+n^2))
  ccf       statsmodels.tsa.stattools.ccf(a, b, adjusted=False)
  nile      statsmodels.datasets.nile (annual Nile flow at Aswan, 1871-1970)
"""
import json
import os
import sys

import numpy as np
import scipy
import scipy.stats as ss
import scipy.stats.mstats as ms
import statsmodels
import statsmodels.api as sm
from statsmodels.tsa.stattools import acf, ccf

from hamed_rao_exact import exact_ranks

SPY = 365.25 * 86400
HERE = os.path.dirname(os.path.abspath(__file__))
rng = np.random.RandomState(20240601)


def mk_brute(y):
    y = np.asarray(y, float)
    n = len(y)
    s = 0
    for i in range(n - 1):
        s += int(np.sign(y[i + 1:] - y[i]).sum())
    _, counts = np.unique(y, return_counts=True)
    tie = sum(float(g) * (g - 1) * (2 * g + 5) for g in counts if g > 1)
    var = (n * (n - 1) * (2 * n + 5) - tie) / 18.0
    return s, var


def mkz(s, var):
    if var <= 0:
        return None
    if s > 0:
        return (s - 1) / np.sqrt(var)
    if s < 0:
        return (s + 1) / np.sqrt(var)
    return 0.0


def fl(v):
    if v is None:
        return None
    v = float(v)
    return None if not np.isfinite(v) else v


cases = []


def add(name, t, y):
    """Record a series sorted by time (S below is computed in time order)."""
    t, y = np.asarray(t, float), np.asarray(y, float)
    o = np.argsort(t, kind="stable")
    cases.append({"name": name, "t": [float(v) for v in t[o]], "y": [float(v) for v in y[o]]})


T0 = 1.5e9  # 2017-07-14T02:40:00Z
day = 86400.0
# Worked example of Kendall's tau shipped with R's cor.test documentation
# (Hollander & Wolfe 1973, p. 187f); x serves as the (distinct) time.
add("hollander_wolfe_1973", [44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1],
    [2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8])
add("n2", [T0, T0 + day], [1.0, 3.0])
add("n3", [T0, T0 + day, T0 + 3 * day], [2.0, 1.0, 5.0])
add("monotone_up_20", T0 + day * np.arange(20), 0.5 * np.arange(20) + 3)
add("monotone_down_20", T0 + day * np.arange(20), -0.25 * np.arange(20) ** 1.5)
for n in (10, 50, 200, 1000):
    t = T0 + np.cumsum(rng.randint(3600, 40 * day, size=n)).astype(float)
    y = rng.normal(0, 1, n) + 0.3 * (t - T0) / SPY
    add("random_%d" % n, t, y)
for n in (30, 100, 500):
    t = T0 + day * np.arange(n)
    y = np.round(rng.normal(0, 1, n) * 2 + 0.002 * np.arange(n)) / 2.0  # ties in y
    add("ties_%d" % n, t, y)
add("decimal_ties_80", T0 + 7 * day * np.arange(80), np.round(rng.normal(5, 0.3, 80), 1))

out = {"versions": {"python": sys.version.split()[0], "numpy": np.__version__,
                    "scipy": scipy.__version__, "statsmodels": statsmodels.__version__},
       "mk": [], "sen": [], "hamed_rao": [], "seasonal": [], "pettitt": [], "ccf": [], "nile": {}}

for c in cases:
    t, y = np.array(c["t"]), np.array(c["y"])
    s, var = mk_brute(y)
    tau = ss.kendalltau(t, y).statistic if hasattr(ss.kendalltau(t, y), "statistic") else ss.kendalltau(t, y)[0]
    out["mk"].append({"name": c["name"], "s": s, "var_s": var, "tau": fl(tau)})
    for conf in (0.90, 0.95, 0.99):
        r = ss.theilslopes(y, t / SPY, alpha=conf)
        out["sen"].append({"name": c["name"], "confidence": conf, "slope_per_year": fl(r[0]),
                           "intercept": fl(r[1]), "lower": fl(r[2]), "upper": fl(r[3])})

# all-equal series: tau undefined (scipy returns nan), S = 0, Var = n(n-1)(2n+5)/18 - same = 0
add("all_equal_6", T0 + day * np.arange(6), [4.0] * 6)
s, var = mk_brute(cases[-1]["y"])
out["mk"].append({"name": "all_equal_6", "s": s, "var_s": var, "tau": None})

# Hamed-Rao: trend + AR(1) noise on a daily grid
for n, phi in ((60, 0.6), (150, 0.4), (400, 0.7)):
    e = np.zeros(n)
    w = rng.normal(0, 1, n)
    for i in range(n):
        e[i] = (phi * e[i - 1] if i else 0) + w[i]
    t = T0 + day * np.arange(n)
    y = 0.5 * (t - T0) / SPY + e
    name = "ar1_%d" % n
    add(name, t, y)
    s, var = mk_brute(y)
    # ranks of the Sen-detrended values in exact decimal arithmetic
    # (hamed_rao_exact.py), not of floating-point y - slope*t
    r = np.array([float(v) for v in exact_ranks(list(t), list(y))[1]])
    rho = acf(r, nlags=n - 1, adjusted=False, fft=False)
    thr = ss.norm.ppf(0.975) / np.sqrt(n)
    tot = 0.0
    used = 0
    for k in range(1, n):
        if abs(rho[k]) > thr:
            used += 1
            tot += (n - k) * (n - k - 1) * (n - k - 2) * rho[k]
    factor = 1 + 2 * tot / (n * (n - 1) * (n - 2))
    varc = var * factor
    z = mkz(s, varc)
    out["hamed_rao"].append({"name": name, "s": s, "var_s": var, "factor": factor, "lags_used": used,
                             "var_s_corrected": varc, "z_corrected": z,
                             "p_corrected": fl(2 * ss.norm.sf(abs(z)))})

# Seasonal Kendall: years x seasons. The first three are complete with
# continuous values; "missing" masks some cells (the "indep" p then uses
# mstats' mid-rank variance, which equals the per-season Mann-Kendall
# variance only without ties), "ties" rounds the values.
for years, m, seed_trend, kind in ((10, 12, 0.15, ""), (15, 4, -0.1, ""), (8, 12, 0.0, ""),
                                   (12, 6, 0.1, "missing"), (14, 4, 0.05, "ties")):
    X = rng.normal(0, 1, (years, m)) + seed_trend * np.arange(years)[:, None] + np.sin(np.arange(m) / m * 2 * np.pi)[None, :]
    if kind == "ties":
        X = np.round(X)
    mask = np.zeros_like(X, dtype=bool)
    if kind == "missing":
        mask[rng.rand(years, m) < 0.15] = True
    Xm = np.ma.array(X, mask=mask)
    Y0 = 30 * SPY  # a multiple of the period: slices start at the epoch
    t = np.array([[Y0 + yr * SPY + (g + 0.5) * SPY / m for g in range(m)] for yr in range(years)])
    res = ms.kendalltau_seasonal(Xm)
    # S per season (time order = row order), present values only
    S_szn = []
    slopes = []
    for g in range(m):
        rows = [i for i in range(years) if not mask[i, g]]
        S_szn.append(int(sum(np.sign(X[j, g] - X[i, g]) for a, i in enumerate(rows) for j in rows[a + 1:])))
        for a, i in enumerate(rows):
            for j in rows[a + 1:]:
                slopes.append((X[j, g] - X[i, g]) / ((t[j, g] - t[i, g]) / SPY))
    name = "seasonal_%dx%d%s" % (years, m, ("_" + kind) if kind else "")
    keep = ~mask.ravel()
    tt, yy = t.ravel()[keep], X.ravel()[keep]
    order = np.argsort(tt)
    out["seasonal"].append({"name": name, "period": "1y", "seasons": m, "kind": kind,
                            "t": [float(v) for v in tt[order]], "y": [float(v) for v in yy[order]],
                            "s_season": S_szn, "s": int(sum(S_szn)),
                            "p_season": [fl(v) for v in np.asarray(res["seasonal p-value"])],
                            "p_global_indep": fl(res["global p-value (indep)"]),
                            "p_global_dep": fl(res["global p-value (dep)"]),
                            "slope_per_year": fl(np.median(slopes))})

# Pettitt: shifts, ties
for name, y in (("shift_40", np.r_[rng.normal(0, 1, 25), rng.normal(1.5, 1, 15)]),
                ("ties_60", np.round(np.r_[rng.normal(2, 1, 20), rng.normal(1, 1, 40)])),
                ("noshift_30", rng.normal(0, 1, 30))):
    n = len(y)
    U = [int(sum(np.sign(y[i] - y[j]) for i in range(k) for j in range(k, n))) for k in range(1, n)]
    K = max(abs(u) for u in U)
    k = [abs(u) for u in U].index(K) + 1
    p = min(1.0, 2 * np.exp(-6.0 * K * K / (n ** 3 + n ** 2)))
    out["pettitt"].append({"name": name, "t": [float(T0 + day * i) for i in range(n)], "y": [float(v) for v in y],
                           "k": k, "u": U[k - 1], "p": fl(p)})

# Cross-correlation on a regular daily grid; y lags x by 3 days
for n in (60, 200):
    base = rng.normal(0, 1, n + 3)
    x = base[3:] + 0.2 * rng.normal(0, 1, n)
    y = base[:-3] * 0.8 + 0.5 * rng.normal(0, 1, n)
    # y_t = 0.8 base_t, x_t = base_{t+3}: x_{t} pairs with y_{t+3} -> x leads y by 3
    L = 10
    pos = ccf(y, x, adjusted=False)[:L + 1]   # pos[h]: sum y_{t+h} x_t / n
    neg = ccf(x, y, adjusted=False)[:L + 1]   # neg[h]: sum x_{t+h} y_t / n
    out["ccf"].append({"name": "ccf_%d" % n, "t": [float(T0 + day * i) for i in range(n)],
                       "x": [float(v) for v in x], "y": [float(v) for v in y], "max_lag": L,
                       "ccf_y_x": [float(v) for v in pos], "ccf_x_y": [float(v) for v in neg]})

nile = sm.datasets.nile.load_pandas().data
ny = nile["volume"].to_numpy(float)
years = nile["year"].to_numpy(int)
n = len(ny)
U = [int(sum(np.sign(ny[i] - ny[j]) for i in range(k) for j in range(k, n))) for k in range(1, n)]
K = max(abs(u) for u in U)
k = [abs(u) for u in U].index(K) + 1
s, var = mk_brute(ny)
r = ss.theilslopes(ny, years.astype(float))
out["nile"] = {"year": [int(v) for v in years], "volume": [float(v) for v in ny],
               "pettitt_k": k, "pettitt_u": U[k - 1], "pettitt_year": int(years[k - 1]),
               "pettitt_p": fl(min(1.0, 2 * np.exp(-6.0 * K * K / (n ** 3 + n ** 2)))),
               "mk_s": s, "mk_var_s": var, "tau": fl(ss.kendalltau(years, ny)[0]),
               "sen_slope_per_index_year": fl(r[0]), "sen_lower": fl(r[2]), "sen_upper": fl(r[3])}

with open(os.path.join(HERE, "kendall_ref.json"), "w") as f:
    json.dump(out, f, indent=1)
with open(os.path.join(HERE, "kendall_cases.txt"), "w") as f:
    for c in cases:
        f.write(c["name"] + "|" + " ".join(repr(v) for v in c["t"]) + "|" + " ".join(repr(v) for v in c["y"]) + "\n")
print("wrote", len(cases), "cases")
