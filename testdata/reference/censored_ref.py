#!/usr/bin/python3
"""Reference values for the censored Mann-Kendall, seasonal Kendall and
Akritas-Theil-Sen code (sqlfuncs/stats/censored_*.go).

Equivalence used (common practice; Helsel 2012, Statistics for Censored
Environmental Data, 2nd ed., chapters on correlation and trend): with a
single reporting limit L and every value below L censored, each "<L" ties
every other "<L" and lies below every value >= L, so the censored test
equals the ordinary test on the data with the censored values replaced by
one common value below L. This script computes the ordinary test on the
substituted data with Debian's scipy (1.10.1) and numpy:

  mk        scipy.stats.kendalltau(t, y_sub, method="asymptotic")
            -> tau (tau-b) and p (tie-corrected variance, no continuity
            correction); S and Var(S) by the O(n^2) definition in numpy
  seasonal  scipy.stats.mstats.kendalltau_seasonal(X_sub) on a complete
            years x seasons matrix -> per-season S and "global p-value
            (indep)" and "global p-value (dep)" (the between-season
            covariance of Dietz & Killeen / Hirsch & Slack; both continuity
            corrected)
  sen       scipy.stats.theilslopes(y, t / 31557600) on uncensored series:
            the Akritas-Theil-Sen slope without censoring is the Sen slope

Two modes:

  /usr/bin/python3 testdata/reference/censored_ref.py
      writes censored_ref.json (read by the Go tests) and censored_cases.txt
      (name|t|y_sub per line, read by censored_ref.R)
  /usr/bin/python3 testdata/reference/censored_ref.py --stdin
      reads {"mk": [...], "seasonal": [...]} cases from stdin (the live
      test's random draws) and writes the same fields to stdout
"""
import json
import os
import sys
import warnings

import numpy as np
import scipy
import scipy.stats as ss
import scipy.stats.mstats as ms

warnings.simplefilter("ignore")
SPY = 365.25 * 86400
HERE = os.path.dirname(os.path.abspath(__file__))


def fl(v):
    v = float(v)
    return v if np.isfinite(v) else None


def substitute(y, c, sub):
    return np.array([sub if m == -1 else v for v, m in zip(y, c)], float)


def mk_case(case):
    """case: name, t, y (limits for censored values), c (-1 or 0), sub."""
    t = np.asarray(case["t"], float)
    ys = substitute(case["y"], case["c"], case["sub"])
    n = len(ys)
    s = 0
    for i in range(n - 1):
        s += int(np.sign(ys[i + 1:] - ys[i]).sum())
    _, counts = np.unique(ys, return_counts=True)
    tie = sum(float(g) * (g - 1) * (2 * g + 5) for g in counts if g > 1)
    var = (n * (n - 1) * (2 * n + 5) - tie) / 18.0
    r = ss.kendalltau(t, ys, method="asymptotic")
    return {"name": case["name"], "s": s, "var_s": var, "tau": fl(r[0]), "p": fl(r[1])}


def seasonal_case(case):
    """case: name, x (years x seasons, limits), cx (marks), sub."""
    X = np.array([substitute(row, crow, case["sub"]) for row, crow in zip(case["x"], case["cx"])])
    res = ms.kendalltau_seasonal(X)
    years = X.shape[0]
    s_szn = [int(sum(np.sign(X[j, g] - X[i, g]) for i in range(years) for j in range(i + 1, years)))
             for g in range(X.shape[1])]
    return {"name": case["name"], "s_season": s_szn,
            "p_indep": fl(res["global p-value (indep)"]),
            "p_dep": fl(res["global p-value (dep)"])}


def versions():
    return {"python": sys.version.split()[0], "numpy": np.__version__, "scipy": scipy.__version__}


if "--stdin" in sys.argv:
    req = json.load(sys.stdin)
    json.dump({"versions": versions(),
               "mk": [mk_case(c) for c in req.get("mk", [])],
               "seasonal": [seasonal_case(c) for c in req.get("seasonal", [])]}, sys.stdout)
    sys.exit(0)

rng = np.random.RandomState(20261204)
T0 = 1.5e9
day = 86400.0


def censor(v, limit):
    """Values below the limit become (limit, -1); values on a 0.1 grid."""
    v = np.round(v, 1)
    return [float(limit) if x < limit else float(x) for x in v], [-1 if x < limit else 0 for x in v]


mk_cases = []
for n, limit, trend in ((5, 2.0, 0.0), (12, 2.0, 0.3), (30, 1.5, 0.05), (100, 2.0, 0.01),
                        (400, 2.5, 0.004), (60, 3.5, 0.0), (25, 0.5, 0.1)):
    t = T0 + np.cumsum(rng.randint(3600, 30 * day, size=n)).astype(float)
    y, c = censor(rng.lognormal(0.7, 0.6, n) + trend * np.arange(n), limit)
    mk_cases.append({"name": "mk_%d_rl%g" % (n, limit), "t": [float(v) for v in t], "y": y, "c": c,
                     "sub": limit / 2})
# One uncensored value among censored ones; all censored but one limit.
mk_cases.append({"name": "one_uncensored", "t": [T0 + k * day for k in range(6)],
                 "y": [1.0, 1.0, 1.0, 3.2, 1.0, 1.0], "c": [-1, -1, -1, 0, -1, -1], "sub": 0.0})
# Values equal to the limit (uncensored 1.0 ties nothing censored; above "<1").
mk_cases.append({"name": "at_limit", "t": [T0 + k * day for k in range(8)],
                 "y": [1.0, 1.0, 1.0, 2.0, 1.0, 1.0, 1.0, 3.0], "c": [-1, 0, -1, 0, 0, -1, 0, 0], "sub": 0.5})

seasonal_cases = []
for years, m, limit, trend in ((10, 12, 2.0, 0.1), (15, 4, 1.0, -0.05), (8, 6, 2.5, 0.0)):
    X = rng.lognormal(0.6, 0.5, (years, m)) + trend * np.arange(years)[:, None]
    x, cx = [], []
    for row in X:
        yr, cr = censor(row, limit)
        x.append(yr)
        cx.append(cr)
    seasonal_cases.append({"name": "seasonal_%dx%d_rl%g" % (years, m, limit), "x": x, "cx": cx, "sub": 0.0})

sen_cases = []
for n in (7, 40, 150):
    t = T0 + np.cumsum(rng.randint(3600, 20 * day, size=n)).astype(float)
    y = rng.normal(5, 1, n) + 0.4 * (t - T0) / SPY
    r = ss.theilslopes(y, t / SPY)
    sen_cases.append({"name": "sen_%d" % n, "t": [float(v) for v in t], "y": [float(v) for v in y],
                      "slope_per_year": fl(r[0])})

out = {"versions": versions(),
       "mk_cases": mk_cases, "mk": [mk_case(c) for c in mk_cases],
       "seasonal_cases": seasonal_cases, "seasonal": [seasonal_case(c) for c in seasonal_cases],
       "sen": sen_cases}
with open(os.path.join(HERE, "censored_ref.json"), "w") as f:
    json.dump(out, f, indent=0)
    f.write("\n")
with open(os.path.join(HERE, "censored_cases.txt"), "w") as f:
    for c in mk_cases:
        ys = substitute(c["y"], c["c"], c["sub"])
        f.write("%s|%s|%s\n" % (c["name"], " ".join(repr(float(v)) for v in c["t"]),
                                " ".join(repr(float(v)) for v in ys)))
print("wrote %d mk, %d seasonal, %d sen cases" % (len(mk_cases), len(seasonal_cases), len(sen_cases)))
