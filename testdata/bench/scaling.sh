#!/bin/sh
# How cost grows with the data (see BENCHMARKS.md).
#
# usage: testdata/bench/scaling.sh OUTDIR [REPS]
#
# Measures `trendsql bench --format json` for
#   total rows 1M, 3M, 10M at 10,000 readings per series
#       (100×10000, 300×10000, 1000×10000)
#   per-series n of 1k, 10k, 100k at 1M rows in total
#       (1000×1000, 100×10000, 10×100000)
# The host's speed drifts from minute to minute, so the configurations are
# interleaved: REPS rounds (default 3), each running every configuration
# once (`--reps 1`, fresh data of the same seed), written to
# OUTDIR/scaling/<series>x<readings>.<round>.json. The 10M configuration
# takes minutes per repetition and is not repeated here: OUTDIR/1000x10000.json
# (the main run of run_all.sh, its own interleaved repetitions) is used, and
# made with --reps REPS if missing. A round file that already exists is
# reused. Then prints, per measurement, the time per row (median over the
# rounds of the wall time / rows) of each configuration, its spread
# (max/min − 1) and the largest deviation from the median of the three (the
# ±15 % of the target read as "every value within 15 % of the middle one").
# A second pair of tables gives each item as a multiple of the avg() scan
# measured in the same invocation (median over the rounds): the scan does
# the same work per row at every size, so this view removes the host's
# drift between configurations, in particular between the 10M run and the
# rounds.
#
# Environment: TRENDSQL (default ./trendsql), PYTHON (default /usr/bin/python3),
# ITEM_TIMEOUT (default 5m; a repetition running longer is cancelled),
# SCALING_ONLY (default empty: both; "length": only the per-series-n
# configurations and tables, without the 10M run, the 3M configuration and
# the total-rows tables).
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
ONLY=${SCALING_ONLY:-}
case $ONLY in
"") CFGS="100x10000 300x10000 1000x1000 10x100000" ;;
length) CFGS="1000x1000 100x10000 10x100000" ;;
*) echo "$0: SCALING_ONLY must be empty or \"length\", not \"$ONLY\"" >&2; exit 2 ;;
esac
mkdir -p "$OUT/scaling"
bench() { # bench SERIES READINGS REPS FILE
	"$TRENDSQL" bench --stations "$1" --readings "$2" --reps "$3" --item-timeout "$ITEM_TIMEOUT" --quiet --format json > "$4.tmp"
	mv "$4.tmp" "$4"
}
if [ -z "$ONLY" ] && [ ! -s "$OUT/1000x10000.json" ]; then
	echo "scaling: 1000 series × 10000 readings, $REPS repetitions" >&2
	bench 1000 10000 "$REPS" "$OUT/1000x10000.json"
fi
round=1
while [ "$round" -le "$REPS" ]; do
	for cfg in $CFGS; do
		f=$OUT/scaling/$cfg.$round.json
		[ -s "$f" ] && continue
		echo "scaling: round $round/$REPS, ${cfg%x*} series × ${cfg#*x} readings" >&2
		bench "${cfg%x*}" "${cfg#*x}" 1 "$f"
	done
	round=$(( round + 1 ))
done
"$PYTHON" - "$OUT" "$REPS" "$ONLY" <<'PY'
import json, os, statistics, sys
out, reps, only = sys.argv[1], int(sys.argv[2]), sys.argv[3]
def load(cfg):
    """Per item: the median over the rounds of its wall time, and the rows."""
    if cfg == "1000x10000":
        runs = [json.load(open(os.path.join(out, cfg + ".json")))]
    else:
        runs = [json.load(open(os.path.join(out, "scaling", "%s.%d.json" % (cfg, r)))) for r in range(1, reps + 1)]
    items, ratios = {}, {}
    for run in runs:
        scan = next((i.get("median_s") for i in run["items"] if i["name"] == "scan avg()"), None)
        for it in run["items"]:
            if it["status"] == "ok" and it.get("median_s"):
                items.setdefault(it["name"], []).append(it["median_s"])
                if scan:
                    ratios.setdefault(it["name"], []).append(it["median_s"] / scan)
            else:
                items.setdefault(it["name"], [])
    names = [it["name"] for it in runs[0]["items"]]
    status = {it["name"]: it["status"] for it in runs[0]["items"]}
    return {"series": runs[0]["series"], "readings": runs[0]["readings_per_series"], "rows": runs[0]["rows"],
            "names": names, "status": status,
            "median": {k: statistics.median(v) for k, v in items.items() if len(v) == len(runs)},
            "ratio": {k: statistics.median(v) for k, v in ratios.items() if len(v) == len(runs)}}
def table(title, cfgs, ratio=False):
    reps_ = [load(c) for c in cfgs]
    head = ["%d×%d (%gM rows)" % (r["series"], r["readings"], r["rows"] / 1e6) for r in reps_]
    print("\n" + title + "\n")
    unit = "× scan " if ratio else "ns/row "
    print("| measurement | " + " | ".join(unit + h for h in head) + " | spread (max/min − 1) | largest deviation from the median |")
    print("|---|" + "---:|" * (len(head) + 2))
    for name in reps_[0]["names"]:
        cells, vals = [], []
        for r in reps_:
            if name not in r["median"]:
                cells.append(r["status"].get(name, "—"))
                continue
            v = r["ratio"][name] if ratio else r["median"][name] / r["rows"] * 1e9
            vals.append(v)
            cells.append("%.2f" % v if ratio else "%.0f" % v)
        spread = dev = "—"
        if len(vals) == len(reps_):
            spread = "%.0f %%" % ((max(vals) / min(vals) - 1) * 100)
            mid = sorted(vals)[len(vals) // 2]
            dev = "%+.0f %%" % (max((v / mid - 1 for v in vals), key=abs) * 100)
        print("| %s | %s | %s | %s |" % (name, " | ".join(cells), spread, dev))
total = ["100x10000", "300x10000", "1000x10000"]
length = ["1000x1000", "100x10000", "10x100000"]
if not only:
    table("**Total rows grow, 10,000 readings per series**", total)
table("**Per-series n grows, 1M rows in total**", length)
if not only:
    table("**Total rows grow, as multiples of the same invocation's avg() scan**", total, ratio=True)
table("**Per-series n grows, as multiples of the same invocation's avg() scan**", length, ratio=True)
PY
