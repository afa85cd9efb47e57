#!/bin/sh
# The loadable extension in the sqlite3 shell against that shell's own
# avg() scan, beside the same statements in the binary (see BENCHMARKS.md).
#
# usage: testdata/bench/extension.sh DIR LIB [REPS]
#
# DIR is a directory kept by `trendsql bench --keep --dir DIR` (its store
# bench.db, at the schema version of TRENDSQL: a store made by an older
# build is migrated with `trendsql init --db DIR/bench.db`); LIB the
# library built with
#   go build -tags trendsqlext -buildmode=c-shared -o trendsql.so ./cmd/trendsqlext
# Each repetition (default 5) starts one sqlite3 shell that loads LIB and
# runs every statement with `.timer on` (output discarded), so the times are
# the statements' own, without process start or loading; then one `trendsql
# query` process per statement (wall time around the process, CPU time from
# GNU time). Medians are printed as a Markdown table with every time as a
# ratio to the avg() scan of the same host. "CPU" is user + system time of
# the process (all threads); on a busy machine it is steadier than wall time.
#
# Environment: TRENDSQL (default ./trendsql), SQLITE3 (default
# /usr/bin/sqlite3), PYTHON (default /usr/bin/python3).
set -eu

if [ $# -lt 2 ]; then
	echo "usage: $0 DIR LIB [REPS]" >&2
	exit 2
fi
DIR=$1
LIB=${2%.so}
REPS=${3:-5}
TRENDSQL=${TRENDSQL:-./trendsql}
SQLITE3=${SQLITE3:-/usr/bin/sqlite3}
PYTHON=${PYTHON:-/usr/bin/python3}
DB=$DIR/bench.db
[ -f "$DB" ] || { echo "$0: $DB missing (run: trendsql bench --keep --dir $DIR)" >&2; exit 1; }
[ -f "$LIB.so" ] || { echo "$0: $LIB.so missing" >&2; exit 1; }
[ -x /usr/bin/time ] || { echo "$0: needs GNU time at /usr/bin/time" >&2; exit 1; }
ROWS=$("$SQLITE3" "$DB" "SELECT count(*) FROM readings")

# name<TAB>statement, the scan first.
STATEMENTS=$DIR/extension-statements.tsv
cat > "$STATEMENTS" <<'SQL'
scan avg()	SELECT series_id, avg(value), count(*) FROM readings GROUP BY series_id
trend_slope	SELECT series_id, trend_slope(t, value) FROM readings GROUP BY series_id
one-pass trend+corr+LB	SELECT series_id, c ->> 'detrend_slope_per_year' AS slope_per_year, c ->> '$.lags[23].q_lb' AS lb_q, c ->> '$.lags[23].p_lb' AS lb_p, c AS correlogram FROM (SELECT series_id, correlogram(t, value, 48, 'detrend=linear') AS c FROM readings GROUP BY series_id)
regr_slope	SELECT series_id, regr_slope(value, t) FROM readings GROUP BY series_id
trend_fit season	SELECT series_id, trend_fit(t, value, 'period=1y,harmonics=2') FROM readings GROUP BY series_id
mann_kendall	SELECT series_id, mann_kendall(t, value) FROM readings GROUP BY series_id
SQL

TIMES=$DIR/extension-times.tsv
: > "$TIMES"
rep=1
while [ "$rep" -le "$REPS" ]; do
	echo "repetition $rep/$REPS" >&2
	{
		echo ".load $LIB"
		echo ".timer on"
		echo ".output /dev/null"
		cut -f 2 "$STATEMENTS" | sed 's/$/;/'
	} > "$DIR/.shell.sql"
	"$SQLITE3" "$DB" < "$DIR/.shell.sql" > "$DIR/.timer"
	# "Run Time: real R user U sys S", one line per statement in order.
	cut -f 1 "$STATEMENTS" | paste - "$DIR/.timer" | awk -F '\t' -v rep="$rep" '{
		split($2, f, " "); printf "sqlite3 shell + extension\t%s\t%s\t%s\t%s\n", $1, rep, f[4], f[6] + f[8] }' >> "$TIMES"
	while IFS='	' read -r name sql; do
		t0=$(date +%s%N)
		/usr/bin/time -f "%U %S" -o "$DIR/.time" "$TRENDSQL" query --db "$DB" --format csv "$sql" > /dev/null
		t1=$(date +%s%N)
		printf 'trendsql query\t%s\t%s\t%s\t%s\n' "$name" "$rep" "$(echo "$t0 $t1" | awk '{ print ($2 - $1) / 1e9 }')" \
			"$(tail -n 1 "$DIR/.time" | awk '{ print $1 + $2 }')" >> "$TIMES"
	done < "$STATEMENTS"
	rep=$((rep + 1))
done
rm -f "$DIR/.shell.sql" "$DIR/.timer" "$DIR/.time"

"$PYTHON" - "$TIMES" "$ROWS" <<'PY'
import statistics, sys
path, rows = sys.argv[1], int(sys.argv[2])
runs, order = {}, []
for line in open(path):
    host, name, rep, real, cpu = line.rstrip("\n").split("\t")
    key = (host, name)
    if key not in runs:
        order.append(key)
        runs[key] = []
    runs[key].append((float(real), float(cpu)))
print("%d rows" % rows)
print()
print("| host | statement | median s | × scan | median CPU s | × scan (CPU) | runs (s) |")
print("|---|---|---:|---:|---:|---:|---|")
for host, name in order:
    r = runs[(host, name)]
    real = statistics.median(x for x, _ in r)
    cpu = statistics.median(c for _, c in r)
    base = runs[(host, "scan avg()")]
    breal = statistics.median(x for x, _ in base)
    bcpu = statistics.median(c for _, c in base)
    print("| %s | %s | %.3f | %.2f | %.3f | %.2f | %s |" % (
        host, name, real, real / breal, cpu, cpu / bcpu, " ".join("%.3f" % x for x, _ in r)))
PY
