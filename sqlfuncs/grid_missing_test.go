package sqlfuncs_test

import (
	"testing"
)

// A row whose value is NULL marks a slot of the time grid: 1, NULL, 2,
// NULL, 3 at daily spacing is a daily grid with two missing slots (common
// practice: an explicit missing reading is a slot without a value), not a
// two-day grid without gaps.
func TestGridStepCountsNullRowsSQL(t *testing.T) {
	db := openKendallStore(t)
	const t0, day = 1600000000.0, 86400.0
	tt := []float64{t0, t0 + day, t0 + 2*day, t0 + 3*day, t0 + 4*day}
	insertK(t, db, "nulls", tt, nil, []any{1.0, nil, 2.0, nil, 3.0})
	m := jsonMap(t, queryVal(t, db, `SELECT correlogram(t, y, 2) FROM kobs WHERE g = 'nulls'`))
	if m["step"] != "1d" || num(t, m, "n_slots") != 5 || num(t, m, "missing_slots") != 2 || num(t, m, "n") != 3 {
		t.Fatalf("step %v, n_slots %v, missing %v, n %v; want 1d, 5, 2, 3", m["step"], m["n_slots"], m["missing_slots"], m["n"])
	}
	// Lag 1 has no pair of present values on the daily grid.
	if v := queryVal(t, db, `SELECT sample_acf(t, y, 1) FROM kobs WHERE g = 'nulls'`); v != nil {
		t.Errorf("sample_acf lag 1 = %v, want NULL (no pair one day apart)", v)
	}
	// The same rows in a window frame: the NULL rows enter and leave with
	// the frame (the last frame holds 2, NULL, 3).
	rows, err := db.Query(`SELECT t, correlogram(t, y, 1) OVER (ORDER BY t ROWS BETWEEN 2 PRECEDING AND CURRENT ROW) FROM kobs WHERE g = 'nulls' ORDER BY t`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var last any
	for rows.Next() {
		var ts float64
		if err := rows.Scan(&ts, &last); err != nil {
			t.Fatal(err)
		}
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
	m = jsonMap(t, last)
	if m["step"] != "1d" || num(t, m, "n_slots") != 3 || num(t, m, "missing_slots") != 1 {
		t.Fatalf("last frame: step %v, n_slots %v, missing %v; want 1d, 3, 1", m["step"], m["n_slots"], m["missing_slots"])
	}
	// cross_correlogram: a row with a NULL x or y marks its slot too.
	insertK(t, db, "pairs", tt, []any{1.0, nil, 2.0, nil, 3.0}, []any{2.0, 1.0, 5.0, nil, 6.0})
	m = jsonMap(t, queryVal(t, db, `SELECT cross_correlogram(t, x, y, 1) FROM kobs WHERE g = 'pairs'`))
	if m["step"] != "1d" {
		t.Errorf("cross_correlogram step %v, want 1d", m["step"])
	}
}
