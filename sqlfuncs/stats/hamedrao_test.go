package stats

import (
	"encoding/json"
	"math"
	"os"
	"testing"
)

// hamedRaoExactCase is one case of testdata/reference/hamed_rao_exact.json
// (hamed_rao_exact.py: Sen slope, detrended values and ranks in exact
// decimal arithmetic with Python's fractions.Fraction).
type hamedRaoExactCase struct {
	Name          string    `json:"name"`
	T             []float64 `json:"t"`
	Y             []float64 `json:"y"`
	Bound         string    `json:"bound"`
	S             int64     `json:"s"`
	VarS          float64   `json:"var_s"`
	SenSlope      float64   `json:"sen_slope"`
	Factor        *float64  `json:"factor"`
	LagsUsed      int       `json:"lags_used"`
	VarSCorrected *float64  `json:"var_s_corrected"`
	ZCorrected    *float64  `json:"z_corrected"`
	PCorrected    *float64  `json:"p_corrected"`
}

func loadHamedRaoExact(t *testing.T) []hamedRaoExactCase {
	t.Helper()
	b, err := os.ReadFile(mkRefPath("hamed_rao_exact.json"))
	if err != nil {
		t.Fatal(err)
	}
	var f struct {
		Cases []hamedRaoExactCase `json:"cases"`
	}
	if err := json.Unmarshal(b, &f); err != nil {
		t.Fatal(err)
	}
	if len(f.Cases) < 15 {
		t.Fatalf("hamed_rao_exact.json has %d cases", len(f.Cases))
	}
	return f.Cases
}

func optNaN(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}

// The exact-rational reference decides every tie of the Sen-detrended
// values; the factor, kept lags and corrected figures must agree (factor
// and variance to 1e-9 relative; p to 1e-7 relative, as elsewhere). Ranks
// decided in floating point get decimal_7, decimal_7b, all_equal_9 and
// linear_int_9 wrong, so these cases guard the exact ordering.
func TestHamedRaoExactRationalReference(t *testing.T) {
	for _, c := range loadHamedRaoExact(t) {
		mk, err := MannKendall(c.Y)
		if err != nil {
			t.Fatal(err)
		}
		if mk.S != c.S || !mkClose(mk.VarS, c.VarS, 1e-12) {
			t.Errorf("%s: S %d var %v, reference %d %v", c.Name, mk.S, mk.VarS, c.S, c.VarS)
		}
		o := HamedRaoOptions{}
		if c.Bound == "anderson" {
			o.Bound = BoundAnderson
		}
		hr, err := HamedRaoWith(c.T, c.Y, mk, o, nil)
		if err != nil {
			t.Fatalf("%s: %v", c.Name, err)
		}
		if hr.LagsUsed != c.LagsUsed || !mkClose(hr.Factor, optNaN(c.Factor), 1e-9) ||
			!mkClose(hr.VarS, optNaN(c.VarSCorrected), 1e-9) || !mkClose(hr.Z, optNaN(c.ZCorrected), 1e-9) ||
			!mkClose(hr.P, optNaN(c.PCorrected), 1e-7) {
			t.Errorf("%s (%s): lags %d factor %v var %v z %v p %v; exact reference %d %v %v %v %v", c.Name, c.Bound,
				hr.LagsUsed, hr.Factor, hr.VarS, hr.Z, hr.P, c.LagsUsed, optNaN(c.Factor), optNaN(c.VarSCorrected),
				optNaN(c.ZCorrected), optNaN(c.PCorrected))
		}
		if c.Factor == nil && hr.Undefined == "" {
			t.Errorf("%s: undefined factor without a reason", c.Name)
		}
		if !mkClose(hr.SenPerTime, c.SenSlope, 1e-12) {
			t.Errorf("%s: detrending slope %v, reference %v", c.Name, hr.SenPerTime, c.SenSlope)
		}
		// The Sen result of the caller gives the same figures.
		sen, err := SenSlopeWithVar(c.T, c.Y, 0.95, mk.VarS)
		if err != nil {
			t.Fatal(err)
		}
		hr2, _ := HamedRaoWith(c.T, c.Y, mk, o, &sen)
		if hr2.Factor != hr.Factor && !(math.IsNaN(hr2.Factor) && math.IsNaN(hr.Factor)) {
			t.Errorf("%s: factor %v with the caller's Sen result, %v without", c.Name, hr2.Factor, hr.Factor)
		}
	}
}

// Shifting every time by a whole number of seconds changes no decimal tie,
// so the ranks (and the factor) stay the same.
func TestHamedRaoExactTiesInvariant(t *testing.T) {
	for _, c := range loadHamedRaoExact(t) {
		if c.Factor == nil {
			continue
		}
		mk, _ := MannKendall(c.Y)
		base, _ := HamedRaoWith(c.T, c.Y, mk, HamedRaoOptions{}, nil)
		tt := make([]float64, len(c.T))
		yy := make([]float64, len(c.Y))
		for i := range c.T {
			tt[i] = c.T[i] + 86400*365
			yy[i] = c.Y[i]
		}
		mk2, _ := MannKendall(yy)
		got, _ := HamedRaoWith(tt, yy, mk2, HamedRaoOptions{}, nil)
		if got.LagsUsed != base.LagsUsed || !mkClose(got.Factor, base.Factor, 1e-12) {
			t.Errorf("%s: shifted/scaled factor %v (%d lags), original %v (%d)", c.Name, got.Factor, got.LagsUsed, base.Factor, base.LagsUsed)
		}
	}
}

func TestRankACFBounds(t *testing.T) {
	// n = 20, lag 1: normal bound 1.959964/√20 = 0.438269;
	// Anderson: (−1 ± 1.959964·√18)/19 = −0.490236 .. 0.384973.
	if rankACFSignificant(0.42, 20, 1, BoundNormal) || !rankACFSignificant(0.44, 20, 1, BoundNormal) {
		t.Error("normal bound at 0.438269")
	}
	if !rankACFSignificant(0.39, 20, 1, BoundAnderson) || rankACFSignificant(-0.48, 20, 1, BoundAnderson) ||
		!rankACFSignificant(-0.50, 20, 1, BoundAnderson) {
		t.Error("Anderson bound at −0.490236 .. 0.384973")
	}
}
