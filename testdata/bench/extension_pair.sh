#!/bin/sh
# trend_slope through the loadable extension against the sqlite3 shell's own
# avg() scan, alternating in one shell (see BENCHMARKS.md).
#
# usage: testdata/bench/extension_pair.sh DB LIB [REPS] [PAIRS]
#
# DB is a store kept by `trendsql bench --keep` (DIR/bench.db); LIB the
# library built with
#   go build -tags trendsqlext -buildmode=c-shared -o trendsql.so ./cmd/trendsqlext
# Each repetition (default 5) starts one sqlite3 shell that loads LIB and runs
# PAIRS (default 2) pairs of statements, the avg() scan then trend_slope,
# with `.timer on` (output discarded). Every pair's CPU ratio (user + system
# time of the process, all threads) is printed with the load average at the
# start of its repetition, then the median and range of the ratios.
#
# Environment: SQLITE3 (default /usr/bin/sqlite3).
set -eu

if [ $# -lt 2 ]; then
	echo "usage: $0 DB LIB [REPS] [PAIRS]" >&2
	exit 2
fi
DB=$1
LIB=${2%.so}
REPS=${3:-5}
PAIRS=${4:-2}
SQLITE3=${SQLITE3:-/usr/bin/sqlite3}
[ -f "$DB" ] || { echo "$0: $DB missing" >&2; exit 1; }
[ -f "$LIB.so" ] || { echo "$0: $LIB.so missing" >&2; exit 1; }

rep=1
while [ "$rep" -le "$REPS" ]; do
	load=$(cut -d ' ' -f 1 /proc/loadavg)
	{
		echo ".load $LIB"
		echo ".timer on"
		echo ".output /dev/null"
		i=1
		while [ "$i" -le "$PAIRS" ]; do
			echo "SELECT series_id, avg(value), count(*) FROM readings GROUP BY series_id;"
			echo "SELECT series_id, trend_slope(t, value) FROM readings GROUP BY series_id;"
			i=$((i + 1))
		done
	} | "$SQLITE3" "$DB" | awk -v load="$load" '
		# "Run Time: real R user U sys S", one line per statement.
		{ cpu = $6 + $8; if (NR % 2) { scan = cpu } else { printf "scan %.3f trend_slope %.3f ratio %.3f load %s\n", scan, cpu, cpu / scan, load } }'
	rep=$((rep + 1))
done | awk '{ print; r[NR] = $6 } END {
	n = NR; for (i = 1; i <= n; i++) for (j = i + 1; j <= n; j++) if (r[j] < r[i]) { x = r[i]; r[i] = r[j]; r[j] = x }
	m = n % 2 ? r[(n + 1) / 2] : (r[n / 2] + r[n / 2 + 1]) / 2
	printf "pairs %d: median ratio %.3f, range %.3f-%.3f\n", n, m, r[1], r[n] }'
