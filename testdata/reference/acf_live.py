#!/usr/bin/python3
"""Live cross-check helper for sqlfuncs/acf_live_test.go.

Reads JSON from stdin: {"series": [{"id": int, "x": [number|null...],
"max_lag": L, "pacf_lag": K, "lb_lags": h, "fitdf": k}, ...]} where x is the
series on its regular grid (null = missing slot). Writes JSON to stdout with,
per series, values from Debian's statsmodels (0.13.5):

  complete series (no null):
    acovf(x, adjusted=False, demean=True, fft=False)[:L+1]
    acf(x, nlags=L, adjusted=False, fft=False)
    pacf(x, nlags=K, method="ldb")                    (K < len(x)/2)
    acorr_ljungbox(x, lags=[h], boxpierce=True, model_df=k)
  series with missing slots:
    acovf(x, adjusted=False, demean=True, fft=False, missing="conservative")  = S(h)/n
    acovf(x, adjusted=True,  demean=True, fft=False, missing="conservative")  = S(h)/m(h)
"""
import json
import sys
import warnings

import numpy as np
import statsmodels
from statsmodels.stats.diagnostic import acorr_ljungbox
from statsmodels.tsa.stattools import acf, acovf, pacf

warnings.simplefilter("ignore")


def fl(v):
    return [None if not np.isfinite(x) else float(x) for x in v]


def main():
    req = json.load(sys.stdin)
    out = []
    for s in req["series"]:
        x = np.array([np.nan if v is None else v for v in s["x"]], dtype=float)
        L = s["max_lag"]
        r = {"id": s["id"]}
        if np.isnan(x).any():
            r["cons_biased"] = fl(acovf(x, adjusted=False, demean=True, fft=False, missing="conservative")[: L + 1])
            r["cons_adjusted"] = fl(acovf(x, adjusted=True, demean=True, fft=False, missing="conservative")[: L + 1])
        else:
            r["acvf"] = fl(acovf(x, adjusted=False, demean=True, fft=False)[: L + 1])
            r["acf"] = fl(acf(x, nlags=L, adjusted=False, fft=False))
            if s["pacf_lag"] >= 1:
                r["pacf"] = fl(pacf(x, nlags=s["pacf_lag"], method="ldb"))
            if s["lb_lags"] >= 1:
                lb = acorr_ljungbox(x, lags=[s["lb_lags"]], boxpierce=True, model_df=s["fitdf"])
                r["lb"] = [float(lb["lb_stat"].iloc[0]), float(lb["lb_pvalue"].iloc[0]),
                           float(lb["bp_stat"].iloc[0]), float(lb["bp_pvalue"].iloc[0])]
        out.append(r)
    json.dump({"statsmodels": statsmodels.__version__, "results": out}, sys.stdout)


if __name__ == "__main__":
    main()
