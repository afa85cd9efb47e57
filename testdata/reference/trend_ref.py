#!/usr/bin/python3
"""Reference values for trendsql's trend fits and regr_* aggregates.

Run with Debian's Python (statsmodels 0.13.5, scipy 1.10.1, numpy):

    /usr/bin/python3 testdata/reference/trend_ref.py > testdata/reference/trend_ref.json

Modes:
    (no argument)  print the committed reference file (fixed seeds, the
                   statsmodels datasets nile and co2)
    --stdin        read {"cases": [{"t": [...], "y": [...], "degree": d,
                   "period_s": P or 0, "harmonics": K, "hac_lags": L}]} from
                   stdin and print {"results": [...]} (the live cross-check
                   in sqlfuncs/stats/trend_test.go uses this)

Every trend case is fitted with statsmodels OLS on the design matrix that
trendsql documents in sqlfuncs/stats/trend.go:

    x = (t - t_c) / 31557600,  t_c = mean(t)
    columns 1, x, ..., x^d, sin(2 pi k u), cos(2 pi k u), u = fmod(t, P) / P

Calls (statsmodels 0.13.5):
    OLS(y, X).fit()                                   params, bse, rsquared,
                                                      scale, df_resid, pvalues
    OLS(y, X).fit(cov_type='HAC',
                  cov_kwds={'maxlags': L, 'use_correction': True},
                  use_t=True)                         bse[1], pvalues[1]
    statsmodels.tsa.stattools.acf(resid, nlags=1, fft=False)[1]
                                                      resid_acf1
n_eff and n_eff_p are evaluated from those numbers with scipy.stats.t.sf
(n_eff = n(1-r1)/(1+r1), r1 <= 0 -> n; se * sqrt((n-p)/(n_eff-p)), t with
n_eff-p df).

"highprec" cases check the solver itself on badly scaled designs (degree 6
over 3.65 days and over 100 years, where statsmodels' pinv-based OLS loses
digits): the least-squares coefficients for the float64 design above are
solved in 80-digit arithmetic with mpmath (Debian python3-mpmath 1.2.1):
mpmath.lu_solve(A.T*A, A.T*b) with mp.dps = 80, then rounded to float64.

regr_* cases are exact: Python's fractions.Fraction evaluates the sums of
centred products of the float64 inputs in rational arithmetic, rounded to
float64 only at the end (square roots taken in float64 of the exact ratio).
"""

import json
import math
import sys
from fractions import Fraction

import numpy as np
import scipy
import scipy.stats
import statsmodels
import statsmodels.api as sm
from statsmodels.tsa.stattools import acf

YEAR = 365.25 * 86400


def t_center(t):
    t = np.asarray(t, dtype=float)
    n = len(t)
    tc = math.fsum(t) / n
    return tc


def design(t, tc, degree, period, harmonics):
    t = np.asarray(t, dtype=float)
    x = (t - tc) / YEAR
    cols = [np.ones_like(t)]
    pw = np.ones_like(t)
    for _ in range(degree):
        pw = pw * x
        cols.append(pw)
    if harmonics > 0:
        u = np.fmod(t, period) / period
        for k in range(1, harmonics + 1):
            a = 2 * np.pi * k * u
            cols.append(np.sin(a))
            cols.append(np.cos(a))
    return np.column_stack(cols)


def num(v):
    v = float(v)
    if math.isnan(v) or math.isinf(v):
        return None
    return v


def fit_case(c):
    t = np.asarray(c["t"], dtype=float)
    y = np.asarray(c["y"], dtype=float)
    d, P, K = c["degree"], c.get("period_s") or 0.0, c.get("harmonics", 0)
    n = len(t)
    tc = t_center(t)
    X = design(t, tc, d, P, K)
    p = X.shape[1]
    L = c.get("hac_lags")
    if L is None or L < 0:
        L = int(math.floor(4 * (n / 100.0) ** (2.0 / 9.0)))
    res = sm.OLS(y, X).fit()
    out = {
        "n": n,
        "t_center": tc,
        "coef": [float(v) for v in res.params],
        "se": [float(v) for v in res.bse],
        "r2": num(res.rsquared),
        "sigma": float(math.sqrt(res.scale)),
        "df_resid": int(res.df_resid),
        "hac_lags": L,
    }
    r1 = float(acf(res.resid, nlags=1, fft=False)[1])
    out["resid_acf1"] = num(r1)
    if d >= 1:
        hac = sm.OLS(y, X).fit(cov_type="HAC", cov_kwds={"maxlags": L, "use_correction": True}, use_t=True)
        out["slope_per_year"] = float(res.params[1])
        out["slope_se"] = float(res.bse[1])
        out["slope_p"] = num(res.pvalues[1])
        out["hac_slope_se"] = float(hac.bse[1])
        out["hac_p"] = num(hac.pvalues[1])
        neff = n if r1 <= 0 else n * (1 - r1) / (1 + r1)
        out["n_eff"] = neff
        if neff > p:
            se = res.bse[1] * math.sqrt((n - p) / (neff - p))
            out["n_eff_p"] = float(2 * scipy.stats.t.sf(abs(res.params[1] / se), neff - p))
        else:
            out["n_eff_p"] = None
    # Predictions at a few other times (model evaluation, trend_value).
    tq = c.get("t_eval")
    if tq:
        out["t_eval"] = tq
        out["value"] = [float(v) for v in design(tq, tc, d, P, K) @ res.params]
    return out


def exact_regr(x, y):
    fx = [Fraction(v) for v in x]
    fy = [Fraction(v) for v in y]
    n = len(fx)
    mx = sum(fx) / n
    my = sum(fy) / n
    sxx = sum((a - mx) ** 2 for a in fx)
    syy = sum((b - my) ** 2 for b in fy)
    sxy = sum((a - mx) * (b - my) for a, b in zip(fx, fy))
    slope = sxy / sxx
    return {
        "x": list(x),
        "y": list(y),
        "count": n,
        "avgx": float(mx),
        "avgy": float(my),
        "sxx": float(sxx),
        "syy": float(syy),
        "sxy": float(sxy),
        "slope": float(slope),
        "intercept": float(my - slope * mx),
        "r2": float(sxy * sxy / (sxx * syy)),
        "covar_pop": float(sxy / n),
        "covar_samp": float(sxy / (n - 1)),
        "corr": float(sxy / sxx) * math.sqrt(float(sxx / syy)),
        # statsmodels OLS slope as a second, independent source.
        "sm_slope": float(sm.OLS(np.asarray(y), sm.add_constant(np.asarray(x))).fit().params[1]),
    }


def epoch(datestr):
    return float(np.datetime64(datestr, "s").astype("int64"))


def reference():
    cases = []
    # Annual Nile flow at Aswan, 1871-1970 (statsmodels.datasets.nile);
    # time = 1 January of each year, 00:00 UTC.
    nile = sm.datasets.nile.load_pandas().data
    tn = [epoch("%04d-01-01" % int(yr)) for yr in nile["year"]]
    yn = [float(v) for v in nile["volume"]]
    for spec in [dict(degree=1), dict(degree=0), dict(degree=2, hac_lags=5), dict(degree=1, hac_lags=0)]:
        c = dict(name="nile " + json.dumps(spec), source="statsmodels.datasets.nile", t=tn, y=yn, harmonics=0, period_s=0, hac_lags=-1)
        c.update(spec)
        c["t_eval"] = [epoch("1850-06-01"), epoch("1921-01-01"), epoch("2000-01-01")]
        cases.append(c)
    # Weekly Mauna Loa CO2, 1958-2001 (statsmodels.datasets.co2), NaNs
    # dropped; time = the week's date at 00:00 UTC.
    co2 = sm.datasets.co2.load_pandas().data.dropna()
    tc = [float(v) for v in (co2.index.values.astype("datetime64[s]").astype("int64"))]
    yc = [float(v) for v in co2["co2"]]
    for spec in [dict(degree=1, period_s=YEAR, harmonics=2), dict(degree=2, period_s=YEAR, harmonics=3, hac_lags=10)]:
        c = dict(name="co2 " + json.dumps(spec), source="statsmodels.datasets.co2", t=tc, y=yc, hac_lags=-1)
        c.update(spec)
        c["t_eval"] = [epoch("1960-03-15"), epoch("1985-07-01"), epoch("2010-12-31")]
        cases.append(c)
    # Seeded random series: unix times near 1.7e9 s with random gaps,
    # quadratic trend + annual cycle + AR(1) noise.
    rng = np.random.default_rng(20261202)
    for i, (n, d, K, L) in enumerate([(3, 1, 0, -1), (4, 1, 0, 2), (25, 1, 0, -1), (200, 2, 1, -1),
                                      (731, 1, 2, 7), (1500, 3, 1, -1), (60, 0, 1, -1), (500, 1, 0, 40)]):
        step = 86400.0
        gaps = rng.integers(1, 4, size=n) * step + rng.uniform(0, 3600, size=n)
        t = 1.7e9 + np.cumsum(gaps)
        x = (t - t[0]) / YEAR
        e = np.zeros(n)
        for j in range(n):
            e[j] = (0.6 * e[j - 1] if j else 0) + rng.normal(0, 0.5)
        yv = 10 + 0.8 * x - 0.1 * x ** 2 + 1.5 * np.sin(2 * np.pi * t / YEAR + 0.3) + e
        c = dict(name="random %d" % i, source="numpy default_rng(20261202)", t=[float(v) for v in t],
                 y=[float(v) for v in yv], degree=d, period_s=YEAR if K else 0, harmonics=K, hac_lags=L,
                 t_eval=[float(t[0] - 1e7), float(t[n // 2]), float(t[-1] + 3e7)])
        cases.append(c)
    highprec = []
    import mpmath
    mpmath.mp.dps = 80
    for span, deg, K in ((0.01, 6, 0), (100.0, 6, 0), (3.0, 4, 3)):
        n = 1200
        t = np.array([1.7e9 + i * span * YEAR / n for i in range(n)])
        yv = np.array([math.sin(i / 100) + (i % 7) * 0.1 for i in range(n)])
        P = YEAR if K else 0.0
        X = design(t, t_center(t), deg, P, K)
        A = mpmath.matrix(X.tolist())
        b = mpmath.matrix(yv.tolist())
        coef = mpmath.lu_solve(A.T * A, A.T * b)
        highprec.append({"name": "degree %d over %g years, %d harmonics" % (deg, span, K),
                         "input": {"t": [float(v) for v in t], "y": [float(v) for v in yv], "degree": deg,
                                   "period_s": P, "harmonics": K, "hac_lags": -1},
                         "coef": [float(v) for v in coef]})
    out = {
        "generator": "testdata/reference/trend_ref.py",
        "versions": {"python": sys.version.split()[0], "numpy": np.__version__, "scipy": scipy.__version__,
                     "statsmodels": statsmodels.__version__, "mpmath": mpmath.__version__},
        "trend": [],
        "regr": [],
        "highprec": highprec,
    }
    for c in cases:
        r = fit_case(c)
        r["name"] = c["name"]
        r["source"] = c["source"]
        r["input"] = {k: c[k] for k in ("t", "y", "degree", "period_s", "harmonics", "hac_lags")}
        out["trend"].append(r)
    rng = np.random.default_rng(7)
    for n in (2, 3, 10, 1000):
        x = 1.7e9 + np.sort(rng.choice(10 ** 7, size=n, replace=False)).astype(float) + 0.25
        y = 1234.5 + 1e-6 * (x - 1.7e9) + rng.normal(0, 0.01, size=n)
        out["regr"].append(exact_regr([float(v) for v in x], [float(v) for v in y]))
    return out


def main():
    if len(sys.argv) > 1 and sys.argv[1] == "--stdin":
        req = json.load(sys.stdin)
        json.dump({"results": [fit_case(c) for c in req["cases"]]}, sys.stdout)
        return
    json.dump(reference(), sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
