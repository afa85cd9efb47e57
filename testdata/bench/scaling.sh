#!/bin/sh
# How cost grows with the data (see BENCHMARKS.md).
#
# usage: testdata/bench/scaling.sh OUTDIR [REPS]
#
# Runs `trendsql bench --format json` for
#   total rows 1M, 3M, 10M at 10,000 readings per series
#       (100×10000, 300×10000, 1000×10000)
#   per-series n of 1k, 10k, 100k at 1M rows in total
#       (1000×1000, 100×10000, 10×100000)
# writing OUTDIR/<series>x<readings>.json; a file that already exists is
# reused (so the 10M run of run_all.sh is not repeated). Then prints, per
# measurement, the time per row (median wall time / rows) of each
# configuration, its spread (max/min − 1) and the largest deviation from
# the median of the three (the ±15 % of the target read as "every value
# within 15 % of the middle one").
#
# Environment: TRENDSQL (default ./trendsql), PYTHON (default /usr/bin/python3),
# ITEM_TIMEOUT (default 5m; a repetition running longer is cancelled).
set -eu
if [ $# -lt 1 ]; then
	echo "usage: $0 OUTDIR [REPS]" >&2
	exit 2
fi
OUT=$1
REPS=${2:-3}
TRENDSQL=${TRENDSQL:-./trendsql}
PYTHON=${PYTHON:-/usr/bin/python3}
ITEM_TIMEOUT=${ITEM_TIMEOUT:-5m}
mkdir -p "$OUT"
for cfg in 100x10000 300x10000 1000x10000 1000x1000 10x100000; do
	f=$OUT/$cfg.json
	[ -s "$f" ] && continue
	s=${cfg%x*}
	n=${cfg#*x}
	echo "scaling: $s series × $n readings" >&2
	"$TRENDSQL" bench --stations "$s" --readings "$n" --reps "$REPS" --item-timeout "$ITEM_TIMEOUT" --quiet --format json > "$f.tmp"
	mv "$f.tmp" "$f"
done
"$PYTHON" - "$OUT" <<'PY'
import json, os, sys
out = sys.argv[1]
def load(cfg):
    return json.load(open(os.path.join(out, cfg + ".json")))
def table(title, cfgs):
    reps = [load(c) for c in cfgs]
    names = [it["name"] for it in reps[0]["items"]]
    head = ["%d×%d (%gM rows)" % (r["series"], r["readings_per_series"], r["rows"] / 1e6) for r in reps]
    print("\n" + title + "\n")
    print("| measurement | " + " | ".join("ns/row " + h for h in head) + " | spread (max/min − 1) | largest deviation from the median |")
    print("|---|" + "---:|" * (len(head) + 2))
    for name in names:
        cells, vals = [], []
        for r in reps:
            it = next((i for i in r["items"] if i["name"] == name), None)
            if it is None or it["status"] != "ok" or not it.get("median_s"):
                cells.append(it["status"] if it else "—")
                continue
            ns = it["median_s"] / r["rows"] * 1e9
            vals.append(ns)
            cells.append("%.0f" % ns)
        spread = dev = "—"
        if len(vals) == len(reps):
            spread = "%.0f %%" % ((max(vals) / min(vals) - 1) * 100)
            mid = sorted(vals)[len(vals) // 2]
            dev = "%+.0f %%" % (max((v / mid - 1 for v in vals), key=abs) * 100)
        print("| %s | %s | %s | %s |" % (name, " | ".join(cells), spread, dev))
table("**Total rows grow, 10,000 readings per series**", ["100x10000", "300x10000", "1000x10000"])
table("**Per-series n grows, 1M rows in total**", ["1000x1000", "100x10000", "10x100000"])
PY
