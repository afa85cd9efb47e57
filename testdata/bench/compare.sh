#!/bin/sh
# Outside comparisons for `trendsql bench` (see BENCHMARKS.md).
#
# usage: testdata/bench/compare.sh DIR [REPS [SLOW_REPS]]
#
# DIR is a directory kept by `trendsql bench --keep --dir DIR` (it holds
# readings.csv and the store bench.db built from it). Every measurement runs
# as its own process, REPS times (default 3), the repetitions interleaved;
# wall time (date +%s%N around the process) and peak RSS (/usr/bin/time %M)
# are recorded per run, and the medians are printed as a Markdown table with
# every time as a ratio to the sqlite3 shell's avg() scan of bench.db. The
# pandas + statsmodels script, by far the slowest, runs only in the first
# SLOW_REPS repetitions (default REPS).
#
# Measured, in this order within each repetition:
#   shell .import      Debian sqlite3: .import --csv --skip 1 of readings.csv
#                      into a new file with a table of the store's readings
#                      layout, WITHOUT ROWID (shell defaults: rollback
#                      journal, synchronous FULL)
#   trendsql import    `trendsql init` + `trendsql import` of the same CSV
#                      into a new store (if this build has the command)
#   shell avg() scan   sqlite3 bench.db "SELECT series_id, avg(value), count(*) FROM readings GROUP BY series_id"
#   trendsql avg() scan   the same statement through `trendsql query`
#   trendsql trend+correlogram+LB   trend_slope, correlogram(…, 48) and
#                      ljung_box(…, 24) of the residuals of the straight-line
#                      fit (detrend=linear), the scripts' three figures, for
#                      every series in one `trendsql query`
#   trendsql one-pass  the same three figures from one correlogram(…, 48,
#                      'detrend=linear') per series: the removed line's slope
#                      and the Ljung–Box test at lag 24 are in its JSON
#   trendsql summarize the full summary run (written to bench.db) with the
#                      model of `trendsql bench`'s "summarize" item: no
#                      seasonal model, every figure on the raw readings; the
#                      script stops if any series was skipped as too short
#   pandas+statsmodels testdata/bench/pandas_summary.py on bench.db
#   numpy              testdata/bench/numpy_summary.py on bench.db
#
# Environment: TRENDSQL (default ./trendsql), SQLITE3 (default
# /usr/bin/sqlite3), PYTHON (default /usr/bin/python3, which has Debian's
# pandas 1.5.3 and statsmodels 0.13.5).
set -eu

if [ $# -lt 1 ]; then
	echo "usage: $0 DIR [REPS]" >&2
	exit 2
fi
DIR=$1
REPS=${2:-3}
SLOW_REPS=${3:-$REPS}
HERE=$(cd "$(dirname "$0")" && pwd)
TRENDSQL=${TRENDSQL:-./trendsql}
SQLITE3=${SQLITE3:-/usr/bin/sqlite3}
PYTHON=${PYTHON:-/usr/bin/python3}
CSV=$DIR/readings.csv
DB=$DIR/bench.db
for f in "$CSV" "$DB"; do
	[ -f "$f" ] || { echo "$0: $f missing (run: trendsql bench --keep --dir $DIR)" >&2; exit 1; }
done
[ -x /usr/bin/time ] || { echo "$0: needs GNU time at /usr/bin/time" >&2; exit 1; }

SCAN="SELECT series_id, avg(value), count(*) FROM readings GROUP BY series_id"
COMBINED="SELECT series_id, trend_slope(t, value), correlogram(t, value, 48, 'detrend=linear'), ljung_box(t, value, 24, 0, 'detrend=linear') FROM readings GROUP BY series_id"
ONEPASS="SELECT series_id, c ->> 'detrend_slope_per_year' AS slope_per_year, c ->> '\$.lags[23].q_lb' AS lb_q, c ->> '\$.lags[23].p_lb' AS lb_p, c AS correlogram FROM (SELECT series_id, correlogram(t, value, 48, 'detrend=linear') AS c FROM readings GROUP BY series_id)"
ROWS=$("$SQLITE3" "$DB" "SELECT count(*) FROM readings")

has_cmd() { "$TRENDSQL" "$1" --help >/dev/null 2>&1; }
has_fn() { "$TRENDSQL" functions 2>/dev/null | grep -q "^$1("; }
HAVE_IMPORT=no; "$TRENDSQL" import readings --help >/dev/null 2>&1 && HAVE_IMPORT=yes
HAVE_SUMMARIZE=no; has_cmd summarize && HAVE_SUMMARIZE=yes
HAVE_COMBINED=yes
for f in trend_slope correlogram ljung_box; do has_fn $f || HAVE_COMBINED=no; done
# The one-pass form needs the correlogram's detrend_slope_per_year key.
HAVE_ONEPASS=no
[ "$("$TRENDSQL" query --db "$DB" --format csv "SELECT correlogram(t, value, 2, 'detrend=linear') ->> 'detrend_slope_per_year' IS NOT NULL AS ok FROM readings WHERE series_id = (SELECT min(series_id) FROM readings)" 2>/dev/null | tail -n 1)" = 1 ] && HAVE_ONEPASS=yes

cat > "$DIR/shell-import.sql" <<SQL
CREATE TABLE readings (
    series_id INTEGER NOT NULL,
    t         INTEGER NOT NULL,
    value     REAL NOT NULL,
    qualifier TEXT,
    PRIMARY KEY (series_id, t)
) WITHOUT ROWID;
.import --csv --skip 1 $CSV readings
SQL

TIMES=$DIR/compare-times.tsv
: > "$TIMES"
# run NAME CMD...: time one process, append "name rep seconds peak_kib" to $TIMES.
run() {
	name=$1
	shift
	t0=$(date +%s%N)
	if ! /usr/bin/time -f "%M" -o "$DIR/.time" "$@" > "$DIR/.out" 2> "$DIR/.err"; then
		echo "$0: $name failed:" >&2
		cat "$DIR/.err" >&2
		exit 1
	fi
	t1=$(date +%s%N)
	printf '%s\t%s\t%s\t%s\n' "$name" "$rep" "$(( t1 - t0 ))" "$(tail -n 1 "$DIR/.time")" >> "$TIMES"
	echo "  $name: $(( (t1 - t0) / 1000000 )) ms" >&2
}

rep=1
while [ "$rep" -le "$REPS" ]; do
	echo "repetition $rep/$REPS" >&2
	rm -f "$DIR/shell.db" "$DIR/shell.db-journal"
	run "sqlite3 shell .import" sh -c 'exec "$1" "$2" < "$3"' _ "$SQLITE3" "$DIR/shell.db" "$DIR/shell-import.sql"
	n=$("$SQLITE3" "$DIR/shell.db" "SELECT count(*) FROM readings")
	[ "$n" = "$ROWS" ] || { echo "$0: shell import stored $n rows, expected $ROWS" >&2; exit 1; }
	if [ $HAVE_IMPORT = yes ]; then
		rm -f "$DIR/ts-import.db" "$DIR/ts-import.db-wal" "$DIR/ts-import.db-shm"
		run "trendsql import" sh -c '"$1" init --db "$2" && exec "$1" import readings --db "$2" --variable level --unit m "$3"' _ "$TRENDSQL" "$DIR/ts-import.db" "$CSV"
	fi
	run "sqlite3 shell avg() scan" "$SQLITE3" "$DB" "$SCAN"
	run "trendsql query avg() scan" "$TRENDSQL" query --db "$DB" --format csv "$SCAN"
	if [ $HAVE_COMBINED = yes ]; then
		run "trendsql trend+correlogram(48)+ljung_box(24)" "$TRENDSQL" query --db "$DB" --format csv "$COMBINED"
	fi
	if [ $HAVE_ONEPASS = yes ]; then
		run "trendsql one-pass correlogram(48, detrend=linear)" "$TRENDSQL" query --db "$DB" --format csv "$ONEPASS"
	fi
	if [ $HAVE_SUMMARIZE = yes ]; then
		run "trendsql summarize" "$TRENDSQL" summarize --db "$DB" --quiet --max-lag 48 --lb-lags 24
		short=$("$SQLITE3" "$DB" "SELECT count(*) FROM series_summaries WHERE run_id = (SELECT max(id) FROM summary_runs) AND insufficient_data")
		[ "$short" = 0 ] || { echo "$0: the summary run skipped $short series (record too short for the model)" >&2; exit 1; }
	fi
	if [ "$rep" -le "$SLOW_REPS" ]; then
		run "pandas + statsmodels script" "$PYTHON" "$HERE/pandas_summary.py" "$DB"
	fi
	run "numpy script" "$PYTHON" "$HERE/numpy_summary.py" "$DB"
	rep=$(( rep + 1 ))
done
rm -f "$DIR/shell.db" "$DIR/ts-import.db" "$DIR/ts-import.db-wal" "$DIR/ts-import.db-shm" "$DIR/.time" "$DIR/.out" "$DIR/.err"

"$PYTHON" - "$TIMES" "$ROWS" "$HAVE_IMPORT" "$HAVE_COMBINED" "$HAVE_ONEPASS" "$HAVE_SUMMARIZE" <<'PY'
import json, statistics, sys
path, rows = sys.argv[1], int(sys.argv[2])
have = dict(zip(["trendsql import", "combined", "one-pass", "trendsql summarize"], sys.argv[3:7]))
runs = {}
order = []
for line in open(path):
    name, rep, ns, kib = line.rstrip("\n").split("\t")
    if name not in runs:
        order.append(name)
        runs[name] = []
    runs[name].append((int(ns) / 1e9, int(kib)))
base = statistics.median(s for s, _ in runs["sqlite3 shell avg() scan"])
print("| measurement (one process each) | median s | × shell avg() scan | rows/s | peak RSS MiB | runs (s) |")
print("|---|---:|---:|---:|---:|---|")
out = []
for name in order:
    secs = [s for s, _ in runs[name]]
    med = statistics.median(secs)
    peak = max(k for _, k in runs[name]) / 1024
    print("| %s | %.3f | %.2f | %.3fM | %.0f | %s |" % (
        name, med, med / base, rows / med / 1e6, peak, " ".join("%.3f" % s for s in secs)))
    out.append({"name": name, "median_s": med, "ratio_to_shell_scan": med / base,
                "rows_per_s": rows / med, "peak_rss_mib": peak, "seconds": secs})
for k, v in have.items():
    if v != "yes":
        print("| %s | not available in this build | | | | |" % k)
imp = [o for o in out if o["name"] in ("sqlite3 shell .import", "trendsql import")]
if len(imp) == 2:
    print("\ntrendsql import / shell .import = %.2f" % (imp[1]["median_s"] / imp[0]["median_s"]))
json.dump({"rows": rows, "items": out}, open(path.replace(".tsv", ".json"), "w"), indent=2)
PY
