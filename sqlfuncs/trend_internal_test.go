package sqlfuncs

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"trendsql/sqlfuncs/stats"
)

// TestTrendJSONRoundTrip: a model rendered by trend_fit and read back by
// trend_value evaluates bit-for-bit like the in-memory model (numbers are
// written with the shortest representation that round-trips), and the
// rendered text is valid JSON with no NaN/Inf.
func TestTrendJSONRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	for trial := 0; trial < 50; trial++ {
		n := 20 + rng.IntN(200)
		var tt, yy []float64
		ts := 1.7e9 + rng.Float64()*1e8
		for i := 0; i < n; i++ {
			ts += 3600 * (1 + rng.Float64()*50)
			tt = append(tt, ts)
			yy = append(yy, rng.NormFloat64()*math.Pow(10, float64(rng.IntN(12)-6)))
		}
		spec := stats.TrendSpec{Degree: rng.IntN(7), HACLags: -1}
		if rng.IntN(2) == 0 {
			spec.Period = 86400 * (1 + rng.Float64()*30)
			spec.Harmonics = 1 + rng.IntN(3)
		}
		m, err := stats.FitTrend(tt, yy, spec)
		if err != nil || m == nil {
			continue // a random design may be rank-deficient; other tests cover that
		}
		text := trendJSON(m)
		if !json.Valid([]byte(text)) || strings.Contains(text, "NaN") || strings.Contains(text, "Inf") {
			t.Fatalf("invalid JSON: %s", text)
		}
		pm, err := parseTrendModel(text)
		if err != nil {
			t.Fatalf("parse own output: %v\n%s", err, text)
		}
		for _, q := range []float64{tt[0], tt[n/2], tt[n-1] + 1e6, 0, -1e9} {
			if a, b := m.Value(q), pm.value(q); a != b && !(math.IsNaN(a) && math.IsNaN(b)) {
				t.Errorf("value(%v): model %v, parsed JSON %v", q, a, b)
			}
		}
	}
}

// FuzzTrendModel: parseTrendModel never panics, and whatever it accepts
// evaluates without panicking.
func FuzzTrendModel(f *testing.F) {
	f.Add(`{"t_center":1.7e9,"degree":1,"period_s":null,"harmonics":0,"coef":[1,2]}`)
	f.Add(`{"t_center":0,"degree":0,"period_s":86400,"harmonics":2,"coef":[1,2,3,4,5]}`)
	f.Add(`{"degree":99}`)
	f.Add(`[]`)
	f.Fuzz(func(t *testing.T, s string) {
		m, err := parseTrendModel(s)
		if err != nil {
			return
		}
		if len(m.Coef) != 1+m.Degree+2*m.Harmonics {
			t.Fatalf("accepted %d coefficients for degree %d, harmonics %d", len(m.Coef), m.Degree, m.Harmonics)
		}
		_ = m.value(1.7e9)
	})
}

// FuzzTrendSpec: the spec parser never panics and only accepts specs within
// the documented bounds.
func FuzzTrendSpec(f *testing.F) {
	for _, s := range []string{"", "degree=2", "period=1y, harmonics=3", "hac_lags=7", "degree=1,degree=2", "period=0s", "harmonics=2"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		sp, err := parseTrendSpec("trend_fit", s)
		if err != nil {
			if !strings.HasPrefix(err.Error(), "trend_fit: ") {
				t.Fatalf("error does not name the function: %v", err)
			}
			return
		}
		if err := sp.Validate(); err != nil {
			t.Fatalf("accepted invalid spec %q: %v", s, err)
		}
	})
}
