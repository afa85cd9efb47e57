#!/usr/bin/python3
"""Per-series summary the export-to-a-script way: pandas + statsmodels.

Reads every reading of a trendsql store with Python's sqlite3 module into a
pandas DataFrame, groups by series and computes, per series:

  * the OLS slope of value on time in years (365.25 d), with an intercept:
    statsmodels.api.OLS(y, statsmodels.api.add_constant(years)).fit()
  * the sample ACF of the OLS residuals to lag 48:
    statsmodels.tsa.stattools.acf(resid, nlags=48)   (library defaults)
  * the Ljung-Box statistic and p-value of the residuals at lag 24:
    statsmodels.stats.diagnostic.acorr_ljungbox(resid, lags=[24])

Readings are taken in time order as consecutive observations (gaps are not
filled), which is what such scripts usually do.

Run with Debian's interpreter (python3-pandas 1.5.3, python3-statsmodels
0.13.5):

  /usr/bin/python3 testdata/bench/pandas_summary.py STORE.db [--out per_series.csv]

Prints one JSON line to stdout: series, rows, wall seconds (whole script
after the imports, and import time separately), peak RSS (ru_maxrss).
Used by testdata/bench/compare.sh; see BENCHMARKS.md.
"""
import json
import resource
import sqlite3
import sys
import time

t_start = time.perf_counter()
import numpy as np  # noqa: E402
import pandas as pd  # noqa: E402
import statsmodels  # noqa: E402
import statsmodels.api as sm  # noqa: E402
from statsmodels.stats.diagnostic import acorr_ljungbox  # noqa: E402
from statsmodels.tsa.stattools import acf  # noqa: E402

YEAR = 365.25 * 86400


def main(argv):
    if len(argv) < 2:
        sys.exit("usage: pandas_summary.py STORE.db [--out FILE.csv]")
    path = argv[1]
    out = argv[argv.index("--out") + 1] if "--out" in argv else None
    t_imports = time.perf_counter() - t_start

    t0 = time.perf_counter()
    con = sqlite3.connect(f"file:{path}?mode=ro", uri=True)
    df = pd.read_sql_query(
        "SELECT series_id, t, value FROM readings ORDER BY series_id, t", con)
    con.close()
    t_read = time.perf_counter() - t0

    rows = []
    for sid, g in df.groupby("series_id", sort=True):
        t = g["t"].to_numpy(dtype=float)
        y = g["value"].to_numpy(dtype=float)
        years = (t - t.mean()) / YEAR
        fit = sm.OLS(y, sm.add_constant(years)).fit()
        resid = fit.resid
        rho = acf(resid, nlags=48)
        lb = acorr_ljungbox(resid, lags=[24], return_df=True)
        rows.append((int(sid), len(y), fit.params[1], rho[1], rho[48],
                     float(lb["lb_stat"].iloc[0]), float(lb["lb_pvalue"].iloc[0])))
    wall = time.perf_counter() - t0

    if out:
        with open(out, "w") as f:
            f.write("series_id,n,slope_per_year,resid_acf1,resid_acf48,lb_q24,lb_p24\n")
            for r in rows:
                f.write("%d,%d,%.17g,%.17g,%.17g,%.17g,%.17g\n" % r)
    print(json.dumps({
        "script": "pandas_summary.py",
        "pandas": pd.__version__, "statsmodels": statsmodels.__version__, "numpy": np.__version__,
        "series": len(rows), "rows": int(len(df)),
        "imports_s": round(t_imports, 3), "read_s": round(t_read, 3), "wall_s": round(wall, 3),
        "peak_rss_mib": round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, 1),
    }))


if __name__ == "__main__":
    main(sys.argv)
