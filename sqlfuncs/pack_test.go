package sqlfuncs_test

import (
	"testing"

	"trendsql/sqlfuncs"
)

// The internal series reader returns the rows sorted by t with NULL values
// skipped, round-trips exactly through UnpackSeries (also for values near
// 1.7e9 and with many digits), rejects tied times like every series
// aggregate, and is not listed for users.
func TestPackSeries(t *testing.T) {
	s := openACFStore(t)
	if _, err := s.DB.Exec(`INSERT INTO lagobs VALUES
		(1, 1700000300, 0.1), (1, 1700000100, 1.7e9), (1, 1700000200, NULL), (1, 1700000000, -2.718281828459045),
		(2, 5, 1), (2, 5, 2)`); err != nil {
		t.Fatal(err)
	}
	var b []byte
	if err := s.DB.QueryRow(`SELECT ` + sqlfuncs.PackSeriesFunction + `(t, y) FROM lagobs WHERE g = 1`).Scan(&b); err != nil {
		t.Fatal(err)
	}
	tt, yy, err := sqlfuncs.UnpackSeries(b, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	wantT := []float64{1700000000, 1700000100, 1700000300}
	wantY := []float64{-2.718281828459045, 1.7e9, 0.1}
	if len(tt) != 3 || len(yy) != 3 {
		t.Fatalf("got %v %v", tt, yy)
	}
	for i := range wantT {
		if tt[i] != wantT[i] || yy[i] != wantY[i] {
			t.Errorf("row %d: (%v, %v), want (%v, %v)", i, tt[i], yy[i], wantT[i], wantY[i])
		}
	}
	if err := s.DB.QueryRow(`SELECT ` + sqlfuncs.PackSeriesFunction + `(t, y) FROM lagobs WHERE g = 2`).Scan(&b); err == nil {
		t.Error("tied times: no error")
	}
	var null []byte
	if err := s.DB.QueryRow(`SELECT ` + sqlfuncs.PackSeriesFunction + `(t, y) FROM lagobs WHERE g = 3`).Scan(&null); err != nil || null != nil {
		t.Errorf("no rows: %v, %v; want NULL", null, err)
	}
	if _, _, err := sqlfuncs.UnpackSeries(make([]byte, 17), nil, nil); err == nil {
		t.Error("UnpackSeries accepted 17 bytes")
	}
	for _, d := range sqlfuncs.List() {
		if d.Name == sqlfuncs.PackSeriesFunction {
			t.Error("the internal reader is listed for users")
		}
	}
}
