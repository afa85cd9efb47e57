package sqlfuncs

// Pettitt change-point test.
//
//	pettitt(t, y)   aggregate/window → TEXT (JSON) or NULL
//
// Arguments. t: INTEGER/REAL unix seconds (UTC) or TEXT time (args.go). y:
// INTEGER, REAL or numeric TEXT.
//
// NULL, short input, order. Rows with NULL y are skipped; a NULL t is an
// error. Rows may come in any order; the series is sorted by t and two rows
// with the same t are an error naming the time. Fewer than 2 rows → NULL.
// Also a window function with any frame.
//
// Statistic, p-value approximation and source: stats.Pettitt
// (sqlfuncs/stats/pettitt.go). K = max_k |U_k| over the splits 1 ≤ k < n,
// first attained at k; p is approximate.
//
// The change lies between the k-th and (k+1)-th values in time order:
// t_change is the time of the k-th value (the last one before the change)
// and t_after the time of the next. u = U_k is signed: u > 0 means the
// values before the change tend to be larger (a downward shift).
//
// JSON keys: n, k, t_change, t_after (ISO 8601 UTC), u, abs_u (= K), p,
// median_before, median_after (medians of y_1..y_k and y_{k+1}..y_n).
//
// Example (demo store; numbers depend on the demo data):
//
//	SELECT series_id, pettitt(t, value)->>'t_change' AS at, pettitt(t, value)->>'p' AS p
//	FROM readings GROUP BY series_id;
//
// For y = 1, 2, 3, 5, 4 at daily steps from unix 1600000000 (tested in
// kendall_test.go): ranks 1, 2, 3, 5, 4, U = −4, −6, −6, −2, K = 6 first at
// k = 2, p = 2·exp(−6·36/150):
//
//	{"n":5,"k":2,"t_change":"2020-09-14T12:26:40Z","t_after":"2020-09-15T12:26:40Z",
//	 "u":-6,"abs_u":6,"p":0.47385551736424353,"median_before":1.5,"median_after":4}

import (
	"database/sql/driver"
	"fmt"
	"math"

	"trendsql/sqlfuncs/stats"
)

func pettittValue(r Rows, opts []driver.Value) (driver.Value, error) {
	const fn = "pettitt"
	if r.Len() < 2 {
		return nil, nil
	}
	res, err := stats.Pettitt(r.Y)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", fn, err)
	}
	var b jsonObj
	b.int("n", int64(res.N))
	b.int("k", int64(res.K))
	b.str("t_change", isoTime(r.T[res.K-1]))
	b.str("t_after", isoTime(r.T[res.K]))
	b.num("u", res.U)
	b.num("abs_u", math.Abs(res.U))
	b.num("p", res.P)
	b.num("median_before", stats.Median(r.Y[:res.K]))
	b.num("median_after", stats.Median(r.Y[res.K:]))
	return b.String(), nil
}

func init() {
	defineSeries(seriesSpec{
		doc: Doc{Name: "pettitt", Signature: "pettitt(t, y)", Kind: Aggregate,
			Summary: "JSON {n, k, t_change, u, p, ...}: Pettitt (1979) rank test for a single change point, approximate p = 2exp(−6K²/(n³+n²))"},
		argNames: []string{"t", "y"}, values: 1, minOptions: 0, maxOptions: 0,
		compute: pettittValue,
	})
}
