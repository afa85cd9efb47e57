package summaries

import (
	"context"
	"database/sql"
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"trendsql/sqlfuncs/stats"
	"trendsql/store/storetest"
)

// A stored residual correlogram never holds a PACF outside [−1, 1]: for a
// series with a long gap (12 daily readings, 28 empty days, 20 daily
// readings; one decimal, from a seeded normal generator, written out) the
// gap-aware sample ACF of the residuals stops being positive definite, and
// from that lag series_correlograms.pacf is NULL while notes name the lag and
// the reason. Independently of the Durbin–Levinson recursion, every lag with
// a stored PACF has a positive definite matrix [acf(|i−j|)] over lags 0..h
// (gonum's Cholesky on the stored acf column) and the first NULL lag has not.
func TestStoredPACFGapIsNullWithNote(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	v := []float64{0.4, 0.2, -0.6, 1.3, 1.4, 0.6, 0.7, -2.1, -0.4, -0.8, 0.6, 1.2,
		1.5, -1, -0.2, -0.2, -0.3, -1.4, 2.8, -0.6, 0.6, -0.6, -0.3, 0.7, 0.1, 1.5, 1.6, 0.6, 1.7, -1.3, -0.8, 0.4}
	var tt []int64
	for i := range v {
		slot := int64(i)
		if i >= 12 {
			slot += 28
		}
		tt = append(tt, 1600000000+86400*slot)
	}
	id := storetest.InsertSeries(t, s.DB, "GAP-1", "level", tt, v)
	model := stats.SummaryOptions{MaxLag: 45, Alpha: 0.05, Confidence: 0.95, MinN: 10}
	res, err := Run(ctx, s, Options{Model: model, ToolVersion: "test", Analyze: stats.SummarizeSeries})
	if err != nil {
		t.Fatal(err)
	}
	var notes sql.NullString
	if err := s.DB.QueryRow(`SELECT notes FROM series_summaries WHERE run_id = ? AND series_id = ?`, res.RunID, id).Scan(&notes); err != nil {
		t.Fatal(err)
	}
	rows, err := s.DB.Query(`SELECT lag, acf, pacf FROM series_correlograms WHERE run_id = ? AND series_id = ? ORDER BY lag`, res.RunID, id)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	rho := []float64{1}
	stop := 0
	for rows.Next() {
		var lag int
		var acf, pacf sql.NullFloat64
		if err := rows.Scan(&lag, &acf, &pacf); err != nil {
			t.Fatal(err)
		}
		if lag != len(rho) {
			t.Fatalf("lag %d follows lag %d", lag, len(rho)-1)
		}
		rho = append(rho, math.NaN())
		if acf.Valid {
			rho[lag] = acf.Float64
		}
		switch {
		case pacf.Valid && stop > 0:
			t.Errorf("lag %d: pacf %v after the NULL from lag %d", lag, pacf.Float64, stop)
		case pacf.Valid:
			if math.Abs(pacf.Float64) > 1 {
				t.Errorf("lag %d: stored pacf %v outside [−1, 1]", lag, pacf.Float64)
			}
			if !symPositiveDefinite(rho, lag) {
				t.Errorf("lag %d: a stored pacf, but [acf(|i−j|)] over lags 0..%d is not positive definite", lag, lag)
			}
		case stop == 0:
			stop = lag
			if acf.Valid && symPositiveDefinite(rho, lag) {
				t.Errorf("lag %d: pacf NULL, but [acf(|i−j|)] over lags 0..%d is positive definite", lag, lag)
			}
		}
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
	if len(rho) != 46 {
		t.Fatalf("%d stored lags, want 45", len(rho)-1)
	}
	if stop == 0 {
		t.Fatal("no NULL pacf stored; the gapped series should stop the recursion")
	}
	if want := fmt.Sprintf("residual PACF is NULL from lag %d: ", stop); !strings.Contains(notes.String, want) ||
		!strings.Contains(notes.String, "not positive definite") {
		t.Errorf("notes %q do not say %q with the reason", notes.String, want)
	}
}

// symPositiveDefinite reports whether [rho(|i−j|)]_{i,j=0..k} has a
// Cholesky factorisation.
func symPositiveDefinite(rho []float64, k int) bool {
	m := mat.NewSymDense(k+1, nil)
	for i := 0; i <= k; i++ {
		for j := i; j <= k; j++ {
			m.SetSym(i, j, rho[j-i])
		}
	}
	var c mat.Cholesky
	return c.Factorize(m)
}
