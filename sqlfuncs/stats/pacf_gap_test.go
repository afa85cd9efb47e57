package stats

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// gappedPACFSeries has 12 values, 28 missing slots and 20 values (one
// decimal, generated once from a seeded normal generator and written out).
func gappedPACFSeries() []float64 {
	x := []float64{0.4, 0.2, -0.6, 1.3, 1.4, 0.6, 0.7, -2.1, -0.4, -0.8, 0.6, 1.2}
	for i := 0; i < 28; i++ {
		x = append(x, math.NaN())
	}
	return append(x, 1.5, -1, -0.2, -0.2, -0.3, -1.4, 2.8, -0.6, 0.6, -0.6, -0.3, 0.7, 0.1, 1.5, 1.6, 0.6, 1.7, -1.3, -0.8, 0.4)
}

// R 4.2.2: pacf(x, lag.max = 45, na.action = na.pass, plot = FALSE) on
// gappedPACFSeries, lags 1..19 (R goes on to lag 19 = −11.2739287449595,
// outside [−1, 1], and NA at lag 20, where no pair of values exists).
var gappedPACFR = []float64{-0.0806621757790737, 0.0652431851063759, -0.20330025181268,
	-0.406255131466821, -0.18166816082647, 0.0395243530956771, -0.0589015792825383,
	0.0143569844758496, -0.2697156335417, 0.00841327862786035, -0.183670559433604,
	-0.321739182641121, -0.148139011297653, -0.0972788608565256, -0.432044726406153,
	-0.363325034035068, -0.34152604367576, -0.930485866206884, -11.2739287449595}

// positiveDefinite reports whether [ρ(|i−j|)]_{i,j=0..k} has a Cholesky
// factorisation (gonum).
func positiveDefinite(rho []float64, k int) bool {
	m := mat.NewSymDense(k+1, nil)
	for i := 0; i <= k; i++ {
		for j := i; j <= k; j++ {
			m.SetSym(i, j, rho[j-i])
		}
	}
	var c mat.Cholesky
	return c.Factorize(m)
}

// A long gap makes the gap-aware sample ACF indefinite from lag 19: the
// PACF agrees with R's up to lag 18, is NaN from lag 19 on (where R reports
// −11.27), the stop names lag 19, and every lag with a PACF has a
// positive definite autocorrelation matrix (checked by gonum's Cholesky,
// independently of the recursion) while lag 19 has not.
func TestPACFGappedNeverOutsideUnit(t *testing.T) {
	x := gappedPACFSeries()
	c := ComputeCorrelogram(x, 45, 0)
	if c.PACFStop.Lag != 19 || c.PACFStop.Reason == "" {
		t.Fatalf("stop %+v, want lag 19 with a reason", c.PACFStop)
	}
	rho := ACF(SampleACVF(x, 45).ACVF)
	for _, l := range c.Lags {
		h := l.Lag
		switch {
		case h < 19:
			if math.Abs(l.PACF-gappedPACFR[h-1]) > 1e-9*math.Abs(gappedPACFR[h-1])+1e-15 {
				t.Errorf("lag %d: pacf %v, R %v", h, l.PACF, gappedPACFR[h-1])
			}
			if !positiveDefinite(rho, h) {
				t.Errorf("lag %d has a PACF but its matrix is not positive definite", h)
			}
		default:
			if !math.IsNaN(l.PACF) {
				t.Errorf("lag %d: pacf %v, want NaN from lag 19", h, l.PACF)
			}
		}
		if math.Abs(l.PACF) > 1 {
			t.Errorf("lag %d: pacf %v outside [−1, 1]", h, l.PACF)
		}
	}
	if positiveDefinite(rho, 19) {
		t.Error("the matrix over lags 0..19 is positive definite; the stop should not be there")
	}
	// A lag without any pair stops the recursion with its own reason.
	_, stop := PartialACF(append(rho[:19:19], math.NaN()))
	if stop.Lag != 19 || stop.Reason == "" {
		t.Errorf("undefined ρ̂: stop %+v", stop)
	}
}

// Without missing values the sample ACF is positive definite: every PACF
// of a gap-free series is defined and inside (−1, 1).
func TestPACFNoGapsAlwaysDefined(t *testing.T) {
	x := gappedPACFSeries()
	var y []float64
	for _, v := range x {
		if !math.IsNaN(v) {
			y = append(y, v)
		}
	}
	c := ComputeCorrelogram(y, len(y)-1, 0)
	if c.PACFStop.Lag != 0 {
		t.Fatalf("gap-free series: stop %+v", c.PACFStop)
	}
	for _, l := range c.Lags {
		if !(math.Abs(l.PACF) < 1) {
			t.Errorf("lag %d: pacf %v", l.Lag, l.PACF)
		}
	}
}
