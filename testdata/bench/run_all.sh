#!/bin/sh
# Regenerates every table of BENCHMARKS.md.
#
# usage (from the repository root):
#   CGO_ENABLED=0 go build -o trendsql ./cmd/trendsql
#   testdata/bench/run_all.sh [OUTDIR]        (default bench-results)
#
# Writes OUTDIR/bench.txt and OUTDIR/1000x10000.json (the main run, 1000
# series × 10000 hourly readings, 3 interleaved repetitions), OUTDIR/compare.md
# (outside comparisons on the same files, compare.sh; the pandas script runs
# PANDAS_REPS times, default 1, as it takes minutes), OUTDIR/scaling.md
# (scaling.sh; SCALING_REPS repetitions, default 5), OUTDIR/n100k.txt (one
# series of 100,000 readings), OUTDIR/adapter-on.txt and adapter-off.txt
# (1M rows with and without the C-level adapter) and OUTDIR/machine.txt.
# Needs about 1.5 GB of disk and, on a 2-core machine, about 15 minutes. Run
# it on an otherwise idle machine.
set -eu
OUT=${1:-bench-results}
TRENDSQL=${TRENDSQL:-./trendsql}
export TRENDSQL
HERE=$(cd "$(dirname "$0")" && pwd)
# Everything the comparisons need, checked before the long main run.
missing=""
[ -x /usr/bin/sqlite3 ] || missing="$missing sqlite3"
[ -x /usr/bin/time ] || missing="$missing time"
/usr/bin/python3 -c 'import pandas, statsmodels, numpy' 2>/dev/null || missing="$missing python3-pandas python3-statsmodels"
if [ -n "$missing" ]; then
	echo "$0: missing Debian packages:$missing (apt-get install$missing)" >&2
	exit 1
fi
[ -x "$TRENDSQL" ] || { echo "$0: no trendsql binary at $TRENDSQL (CGO_ENABLED=0 go build -o trendsql ./cmd/trendsql)" >&2; exit 1; }
mkdir -p "$OUT"
{
	echo "date: $(date -u +%Y-%m-%dT%H:%M:%SZ)"
	echo "nproc: $(nproc)"
	grep -m1 'model name' /proc/cpuinfo
	grep MemTotal /proc/meminfo
	go version 2>/dev/null || true
	"$TRENDSQL" version 2>/dev/null || true
	/usr/bin/sqlite3 --version
	/usr/bin/python3 -c 'import pandas, statsmodels, numpy; print("pandas", pandas.__version__, "statsmodels", statsmodels.__version__, "numpy", numpy.__version__)'
	echo "loadavg: $(cat /proc/loadavg)"
} > "$OUT/machine.txt"
"$TRENDSQL" bench --stations 1000 --readings 10000 --reps 3 --item-timeout 5m \
	--keep --dir "$OUT/data" --json "$OUT/1000x10000.json" > "$OUT/bench.txt"
"$HERE/compare.sh" "$OUT/data" 3 "${PANDAS_REPS:-1}" > "$OUT/compare.md"
"$TRENDSQL" bench --stations 1 --readings 100000 --reps 3 --item-timeout 5m > "$OUT/n100k.txt"
# The C-level adapter against the driver's public API, same size, same flags.
"$TRENDSQL" bench --stations 100 --readings 10000 --reps 3 > "$OUT/adapter-on.txt"
TRENDSQL_FASTPATH=off "$TRENDSQL" bench --stations 100 --readings 10000 --reps 3 > "$OUT/adapter-off.txt"
"$HERE/scaling.sh" "$OUT" "${SCALING_REPS:-5}" > "$OUT/scaling.md"
echo "loadavg after: $(cat /proc/loadavg)" >> "$OUT/machine.txt"
echo "results in $OUT" >&2
