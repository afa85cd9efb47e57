#!/usr/bin/python3
"""Exact-rational reference for the Hamed-Rao correction (Hamed & Rao 1998,
J. Hydrology 204:182-196) of the Mann-Kendall variance.

Run with Debian's Python (standard library only):

    /usr/bin/python3 testdata/reference/hamed_rao_exact.py

Writes hamed_rao_exact.json (read by sqlfuncs/stats/hamedrao_test.go and
the SQL-level tests). Everything up to the ranks is exact in decimal
arithmetic: each value is read as the shortest decimal that converts back
to the same double (Python's repr, e.g. 3.6 -> 36/10) and converted to
fractions.Fraction, the Theil-Sen slope is the exact median of the exact
pairwise slopes (mean of the two middle ones for an even number of pairs),
the detrended values y_i - beta*t_i are exact fractions and the average
ranks are taken on them. The rank autocorrelations (divisor n) and the factor are
also computed in fractions and only then converted to floating point; the
5 % significance test compares the float of r_k with the bound:

    normal    |r_k| > z/sqrt(n)
    anderson  r_k outside [(-1 - z sqrt(n-k-1))/(n-k), (-1 + z sqrt(n-k-1))/(n-k)]

with z = 1.959963984540054 (the 0.975 normal quantile). Var(S) is the
tie-corrected Mann-Kendall variance by its O(n^2) definition; z and p use
the continuity correction and math.erfc.

The module also serves kendall_ref.py (function hamed_rao_exact).
"""
import json
import math
import os
import random
from fractions import Fraction

Z975 = 1.959963984540054
HERE = os.path.dirname(os.path.abspath(__file__))


def exact_ranks(t, y):
    """Average ranks of y_i - beta*t_i with beta the exact Theil-Sen median."""
    n = len(y)
    T = [Fraction(repr(float(v))) for v in t]
    Y = [Fraction(repr(float(v))) for v in y]
    slopes = sorted((Y[b] - Y[a]) / (T[b] - T[a]) for a in range(n) for b in range(a + 1, n))
    N = len(slopes)
    beta = slopes[N // 2] if N % 2 else (slopes[N // 2 - 1] + slopes[N // 2]) / 2
    x = [Y[i] - beta * T[i] for i in range(n)]
    order = sorted(range(n), key=lambda i: x[i])
    ranks = [Fraction(0)] * n
    i = 0
    while i < n:
        j = i + 1
        while j < n and x[order[j]] == x[order[i]]:
            j += 1
        avg = Fraction(i + 1 + j, 2)
        for k in range(i, j):
            ranks[order[k]] = avg
        i = j
    return beta, ranks


def mk_s_var(y):
    n = len(y)
    s = sum((y[j] > y[i]) - (y[j] < y[i]) for i in range(n) for j in range(i + 1, n))
    counts = {}
    for v in y:
        counts[v] = counts.get(v, 0) + 1
    tie = sum(g * (g - 1) * (2 * g + 5) for g in counts.values() if g > 1)
    return s, Fraction(n * (n - 1) * (2 * n + 5) - tie, 18)


def significant(r, n, k, bound):
    if bound == "anderson":
        m = n - k
        w = Z975 * math.sqrt(max(m - 1, 0))
        return r < (-1 - w) / m or r > (-1 + w) / m
    return abs(r) > Z975 / math.sqrt(n)


def hamed_rao_exact(t, y, bound="normal"):
    n = len(y)
    beta, R = exact_ranks(t, y)
    s, var = mk_s_var(y)
    out = {"s": s, "var_s": float(var), "sen_slope": float(beta), "bound": bound}
    mean = sum(R) / n
    d = [r - mean for r in R]
    c0 = sum(v * v for v in d)
    if c0 == 0:
        out.update({"factor": None, "lags_used": 0, "var_s_corrected": None,
                    "z_corrected": None, "p_corrected": None})
        return out
    tot = Fraction(0)
    used = 0
    for k in range(1, n):
        rk = sum(d[i] * d[i + k] for i in range(n - k)) / c0
        if significant(float(rk), n, k, bound):
            used += 1
            tot += (n - k) * (n - k - 1) * (n - k - 2) * rk
    factor = 1 + 2 * tot / (n * (n - 1) * (n - 2))
    out["factor"] = float(factor)
    out["lags_used"] = used
    if factor <= 0 or var <= 0:
        out.update({"var_s_corrected": None, "z_corrected": None, "p_corrected": None})
        return out
    varc = var * factor
    z = 0.0 if s == 0 else (s - (1 if s > 0 else -1)) / math.sqrt(varc)
    out.update({"var_s_corrected": float(varc), "z_corrected": z,
                "p_corrected": math.erfc(abs(z) / math.sqrt(2))})
    return out


def naive_float_ranks(t, y):
    """The floating-point detrending the exact ranks replace (for choosing
    cases where the two differ; not written to the JSON)."""
    n = len(y)
    sl = sorted((y[b] - y[a]) / (t[b] - t[a]) for a in range(n) for b in range(a + 1, n))
    N = len(sl)
    beta = sl[N // 2] if N % 2 else (sl[N // 2 - 1] + sl[N // 2]) / 2
    x = [y[i] - beta * (t[i] - t[0]) for i in range(n)]
    return sorted(x), x


def main():
    T0 = 1600000000.0
    day = 86400.0
    cases = []

    def add(name, t, y, bound="normal", note=""):
        ref = hamed_rao_exact(t, y, bound)
        ref.update({"name": name, "t": t, "y": y, "note": note})
        cases.append(ref)

    # Decimal readings on a daily grid (0.1 steps around a 0.1-per-day
    # line), chosen because rounding in floating-point detrending changes
    # the ties: for decimal_7 the exact ranks give a factor of about 0.086
    # where rounded ones give 1; for decimal_7b the other way round.
    y7 = [3.1, 3.0, 3.3, 3.1, 3.5, 3.3, 3.7]
    t7 = [T0 + day * i for i in range(7)]
    add("decimal_7", t7, y7, note="exact ties after Sen detrending")
    add("decimal_7_anderson", t7, y7, bound="anderson")
    add("decimal_7b", t7, [3.2, 3.1, 3.3, 3.2, 3.3, 3.3, 3.4])
    # Decimal times (tenths of a second).
    add("decimal_times_9", [round(0.1 * i, 1) for i in range(9)],
        [1.2, 1.1, 1.5, 1.3, 1.6, 1.4, 1.9, 1.7, 2.0])

    # An even number of pairs (n = 8: 28 pairs), with two different middle slopes.
    y8 = [0.3, 0.1, 0.7, 0.4, 0.9, 0.6, 1.3, 0.8]
    add("even_pairs_8", [T0 + day * i for i in range(8)], y8)

    # All equal: the rank ACF is 0/0, the factor undefined.
    add("all_equal_9", [T0 + day * i for i in range(9)], [2.5] * 9)
    # Exactly linear in exact arithmetic of the stored values: x all equal.
    add("linear_int_9", [T0 + day * i for i in range(9)], [10.0 + 3 * i for i in range(9)])

    # Random readings quantised to 0.1 on a daily grid with a trend and
    # AR(1)-like noise (seeded; the series are stored in the JSON).
    rng = random.Random(20261204)
    for k in range(12):
        n = rng.choice([12, 15, 20, 25, 30, 40])
        e = 0.0
        y = []
        for i in range(n):
            e = 0.6 * e + rng.gauss(0, 1)
            y.append(round(5 + 0.1 * i + 0.3 * e, 1))
        t = [T0 + day * i for i in range(n)]
        add("quantised_%02d" % k, t, y, bound="anderson" if k % 4 == 3 else "normal")

    with open(os.path.join(HERE, "hamed_rao_exact.json"), "w") as f:
        json.dump({"source": "hamed_rao_exact.py (fractions.Fraction, Python standard library)",
                   "cases": cases}, f, indent=1)


if __name__ == "__main__":
    main()
