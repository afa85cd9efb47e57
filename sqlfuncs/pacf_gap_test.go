package sqlfuncs_test

import (
	"math"
	"strings"
	"testing"

	"trendsql/sqlfuncs/stats"
)

// gappedDaily is 12 daily values, a 28-day gap and 20 daily values (one
// decimal, from a seeded normal generator, written out); its gap-aware
// sample ACF is not positive definite over lags 0..19.
func gappedDaily() (t, y []float64) {
	v := []float64{0.4, 0.2, -0.6, 1.3, 1.4, 0.6, 0.7, -2.1, -0.4, -0.8, 0.6, 1.2,
		1.5, -1, -0.2, -0.2, -0.3, -1.4, 2.8, -0.6, 0.6, -0.6, -0.3, 0.7, 0.1, 1.5, 1.6, 0.6, 1.7, -1.3, -0.8, 0.4}
	for i, x := range v {
		slot := i
		if i >= 12 {
			slot = i + 28
		}
		t = append(t, 1600000000+86400*float64(slot))
		y = append(y, x)
	}
	return t, y
}

// correlogram(): no pacf outside [−1, 1]; from lag 19 (where R 4.2.2's
// pacf(na.action = na.pass) gives −11.27, see stats/pacf_gap_test.go) the
// pacf is null and pacf_null_from / pacf_note say so.
func TestCorrelogramPACFGapSQL(t *testing.T) {
	db := openKendallStore(t)
	tt, y := gappedDaily()
	insertK(t, db, "gap", tt, nil, anys(y))
	m := jsonMap(t, queryVal(t, db, `SELECT correlogram(t, y, 30) FROM kobs WHERE g = 'gap'`))
	if num(t, m, "pacf_null_from") != 19 {
		t.Fatalf("pacf_null_from = %v, want 19", m["pacf_null_from"])
	}
	if note, _ := m["pacf_note"].(string); !strings.Contains(note, "not positive definite") {
		t.Errorf("pacf_note = %v", m["pacf_note"])
	}
	for _, l := range m["lags"].([]any) {
		row := l.(map[string]any)
		lag := row["lag"].(float64)
		p, isNum := row["pacf"].(float64)
		if lag >= 19 && row["pacf"] != nil {
			t.Errorf("lag %v: pacf %v, want null", lag, p)
		}
		if lag < 19 && !isNum {
			t.Errorf("lag %v: pacf null", lag)
		}
		if isNum && math.Abs(p) > 1 {
			t.Errorf("lag %v: pacf %v outside [−1, 1]", lag, p)
		}
	}
	// A gap-free series has no stop.
	insertK(t, db, "full", tt[:12], nil, anys(y[:12]))
	m = jsonMap(t, queryVal(t, db, `SELECT correlogram(t, y, 5) FROM kobs WHERE g = 'full'`))
	if m["pacf_null_from"] != nil || m["pacf_note"] != nil {
		t.Errorf("gap-free: pacf_null_from %v, pacf_note %v", m["pacf_null_from"], m["pacf_note"])
	}
}

// The stored residual correlogram of a summary follows the same rule, and
// the summary's notes name the lag and the reason.
func TestSummaryPACFGapNote(t *testing.T) {
	tt, y := gappedDaily()
	s := stats.SummarizeSeries(tt, y, stats.SummaryOptions{MaxLag: 45, Alpha: 0.05, Confidence: 0.95, MinN: 10})
	stop := 0
	for _, r := range s.Correlogram {
		if math.Abs(r.PACF) > 1 {
			t.Errorf("lag %d: stored pacf %v outside [−1, 1]", r.Lag, r.PACF)
		}
		if math.IsNaN(r.PACF) && stop == 0 {
			stop = r.Lag
		}
	}
	if stop == 0 {
		t.Fatal("the residual correlogram of the gapped series has no undefined PACF; the test needs one")
	}
	if !strings.Contains(s.Problem, "residual PACF is NULL from lag") {
		t.Errorf("notes %q do not explain the NULL PACF from lag %d", s.Problem, stop)
	}
}
