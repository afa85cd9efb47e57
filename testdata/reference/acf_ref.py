#!/usr/bin/python3
"""Regenerates testdata/reference/acf_statsmodels.json: reference values for
trendsql's sample ACVF / ACF / PACF, Ljung-Box and Box-Pierce, computed with
Debian's statsmodels on datasets shipped with statsmodels.

    /usr/bin/python3 testdata/reference/acf_ref.py > testdata/reference/acf_statsmodels.json

Calls used (statsmodels 0.13.5, numpy 1.24):
  statsmodels.tsa.stattools.acovf(x, adjusted=False, demean=True, fft=False)
  statsmodels.tsa.stattools.acf(x, nlags=L, adjusted=False, fft=False)
  statsmodels.tsa.stattools.pacf(x, nlags=L, method="ldb")
  statsmodels.stats.diagnostic.acorr_ljungbox(x, lags=[h], boxpierce=True, model_df=k)
For a series with missing values (NaN):
  acovf(x, adjusted=False, demean=True, fft=False, missing="conservative")
      = S(h) / n           (n = number of present values)
  acovf(x, adjusted=True,  demean=True, fft=False, missing="conservative")
      = S(h) / m(h)        (m(h) = number of complete pairs at lag h)
  where S(h) is the sum of lag-h products of deviations from the mean of the
  present values. trendsql's divisor is m(h) + h (R's na.pass convention), so
  the Go test checks S(h) and m(h) against these two.
"""
import json
import sys
import warnings

import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.api as sm
from statsmodels.stats.diagnostic import acorr_ljungbox
from statsmodels.tsa.stattools import acf, acovf, pacf

warnings.simplefilter("ignore")


def fl(v):
    return [None if (x is None or not np.isfinite(x)) else float(x) for x in v]


def full_case(name, source, dates, y, L, boxes):
    y = np.asarray(y, dtype=float)
    out = {
        "name": name,
        "source": source,
        "dates": dates,
        "y": fl(y),
        "max_lag": L,
        "acvf": fl(acovf(y, adjusted=False, demean=True, fft=False)[: L + 1]),
        "acf": fl(acf(y, nlags=L, adjusted=False, fft=False)),
        "pacf": fl(pacf(y, nlags=L, method="ldb")),
        "box": [],
    }
    for h, k in boxes:
        r = acorr_ljungbox(y, lags=[h], boxpierce=True, model_df=k)
        out["box"].append({"type": "Ljung-Box", "lags": h, "fitdf": k,
                           "q": float(r["lb_stat"].iloc[0]), "p": float(r["lb_pvalue"].iloc[0])})
        out["box"].append({"type": "Box-Pierce", "lags": h, "fitdf": k,
                           "q": float(r["bp_stat"].iloc[0]), "p": float(r["bp_pvalue"].iloc[0])})
    return out


def missing_case(name, source, dates, y, L):
    y = np.asarray(y, dtype=float)
    b = acovf(y, adjusted=False, demean=True, fft=False, missing="conservative")[: L + 1]
    a = acovf(y, adjusted=True, demean=True, fft=False, missing="conservative")[: L + 1]
    return {
        "name": name,
        "source": source,
        "dates": dates,
        "y": fl(y),
        "max_lag": L,
        "acvf_conservative_biased": fl(b),
        "acvf_conservative_adjusted": fl(a),
    }


def main():
    cases = []
    nile = sm.datasets.nile.load_pandas().data
    years = [int(v) for v in nile["year"]]
    cases.append(full_case(
        "nile", "statsmodels.datasets.nile (annual Nile flow, 1871-1970)",
        ["%04d-01-01" % v for v in years], nile["volume"].values, 20,
        [(1, 0), (10, 0), (20, 2)]))

    co2 = sm.datasets.co2.load_pandas().data["co2"]
    dates = [d.strftime("%Y-%m-%d") for d in co2.index]
    # The longest run of consecutive weeks without a NaN.
    ok = ~co2.isna().values
    best, start, run_start = 0, 0, None
    for i, v in enumerate(list(ok) + [False]):
        if v and run_start is None:
            run_start = i
        if not v and run_start is not None:
            if i - run_start > best:
                best, start = i - run_start, run_start
            run_start = None
    seg = slice(start, start + best)
    cases.append(full_case(
        "co2_weekly_run",
        "statsmodels.datasets.co2 (weekly Mauna Loa CO2), longest run of weeks without NaN",
        dates[seg], co2.values[seg], 30, [(5, 0), (30, 1)]))
    cases.append(missing_case(
        "co2_weekly", "statsmodels.datasets.co2 (weekly Mauna Loa CO2 1958-2001, 59 NaN weeks)",
        dates, co2.values, 60))

    print(json.dumps({
        "generator": "testdata/reference/acf_ref.py",
        "versions": {"statsmodels": statsmodels.__version__, "numpy": np.__version__,
                     "scipy": scipy.__version__, "pandas": pd.__version__,
                     "python": sys.version.split()[0]},
        "cases": cases,
    }, indent=None, separators=(",", ":")))


if __name__ == "__main__":
    main()
