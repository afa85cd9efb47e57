package sqlfuncs

import (
	"strings"
	"testing"
)

// An integer option beyond the int64 range is reported with the value the
// caller gave, not with the result of converting it.
func TestArgIntOutOfRangeShowsGivenValue(t *testing.T) {
	db := fuzzConn(t)
	cases := []struct{ q, want string }{
		{`SELECT sample_acf(t, y, 1e308) FROM (SELECT 1 AS t, 2.0 AS y)`, "lag = 1e+308 is out of range"},
		{`SELECT sample_acf(t, y, -1e19) FROM (SELECT 1 AS t, 2.0 AS y)`, "lag = -1e+19 is out of range"},
		{`SELECT cross_corr(t, y, y, '99999999999999999999') FROM (SELECT 1 AS t, 2.0 AS y)`, `lag = "99999999999999999999" is out of range`},
		{`SELECT ljung_box(t, y, 9e18) FROM (SELECT 1 AS t, 2.0 AS y)`, "lags = 9e+18 is out of range"},
	}
	for _, c := range cases {
		var v any
		err := db.QueryRow(c.q).Scan(&v)
		if err == nil || !strings.Contains(err.Error(), c.want) || strings.Contains(err.Error(), "-9223372036854775808") {
			t.Errorf("%s: %v, %v; want an error containing %q", c.q, v, err, c.want)
		}
	}
}

// The functions that return one JSON object per lag bound max_lag at
// 100,000 (maxLagListArg); the bound itself is accepted.
func TestLagListBound(t *testing.T) {
	db := fuzzConn(t)
	for _, fn := range []string{"correlogram(t, y, %d)", "cross_correlogram(t, y, y, %d)"} {
		var v any
		q := "SELECT " + strings.Replace(fn, "%d", "100001", 1) + " FROM (SELECT 1 AS t, 2.0 AS y UNION ALL SELECT 2, 3.0)"
		err := db.QueryRow(q).Scan(&v)
		if err == nil || !strings.Contains(err.Error(), "max_lag = 100001 is out of range [0, 100000]") {
			t.Errorf("%s: %v; want the range error", q, err)
		}
		q = "SELECT " + strings.Replace(fn, "%d", "100000", 1) + " FROM (SELECT 1 AS t, 2.0 AS y UNION ALL SELECT 2, 3.0)"
		var s string
		if err := db.QueryRow(q).Scan(&s); err != nil || !strings.Contains(s, `"lag":100000`) {
			t.Errorf("%s: %v (result %d bytes); want every lag listed", q, err, len(s))
		}
	}
}
