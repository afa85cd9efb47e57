package stats

import (
	"encoding/json"
	"math"
	"math/rand"
	"os"
	"path/filepath"
	"strconv"
	"testing"
	"time"
)

// refCase is one series of testdata/reference/acf_r.json or
// acf_statsmodels.json (see the generator scripts beside them).
type refCase struct {
	Name   string     `json:"name"`
	Source string     `json:"source"`
	Dates  []string   `json:"dates"`
	Y      []*float64 `json:"y"`
	MaxLag int        `json:"max_lag"`
	ACVF   []*float64 `json:"acvf"`
	ACF    []*float64 `json:"acf"`
	PACF   []*float64 `json:"pacf"`
	Box    []struct {
		Type  string  `json:"type"`
		Lags  int     `json:"lags"`
		Fitdf int     `json:"fitdf"`
		Q     float64 `json:"q"`
		P     float64 `json:"p"`
	} `json:"box"`
	ConsBiased   []*float64 `json:"acvf_conservative_biased"`
	ConsAdjusted []*float64 `json:"acvf_conservative_adjusted"`
}

type refFile struct {
	Generator string    `json:"generator"`
	Cases     []refCase `json:"cases"`
}

func loadRef(t *testing.T, name string) refFile {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "reference", name))
	if err != nil {
		t.Fatal(err)
	}
	var f refFile
	if err := json.Unmarshal(b, &f); err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	if len(f.Cases) == 0 {
		t.Fatalf("%s: no cases", name)
	}
	return f
}

// series returns the present readings of a case as (t, y) in unix seconds.
func (c refCase) series(t *testing.T) (ts, ys []float64, missing int) {
	t.Helper()
	first, last := -1, -1
	for i, v := range c.Y {
		if v != nil {
			if first < 0 {
				first = i
			}
			last = i
		}
	}
	for i, v := range c.Y {
		if v == nil {
			if i > first && i < last {
				missing++
			}
			continue
		}
		d, err := time.Parse("2006-01-02", c.Dates[i])
		if err != nil {
			t.Fatal(err)
		}
		ts = append(ts, float64(d.Unix()))
		ys = append(ys, *v)
	}
	return ts, ys, missing
}

// close reports whether got matches want to rel relative tolerance, or to
// abs absolute tolerance (for values near zero); NaN matches a nil want.
func closeTo(got float64, want *float64, rel, abs float64) bool {
	if want == nil {
		return math.IsNaN(got)
	}
	w := *want
	d := math.Abs(got - w)
	return d <= rel*math.Max(math.Abs(got), math.Abs(w)) || d <= abs
}

func pval(p, want float64) bool {
	if want == 0 {
		return p < 1e-300
	}
	return math.Abs(p-want) <= 1e-7*want
}

func gridCase(t *testing.T, c refCase) []float64 {
	t.Helper()
	ts, ys, missing := c.series(t)
	g, x, err := Regularize(ts, ys, 0)
	if err != nil {
		t.Fatalf("%s: %v", c.Name, err)
	}
	if g.Missing != missing {
		t.Fatalf("%s: %d missing slots, want %d", c.Name, g.Missing, missing)
	}
	return x
}

// checkFull compares every figure of a complete reference case.
func checkFull(t *testing.T, lib string, c refCase) {
	x := gridCase(t, c)
	cg := ComputeCorrelogram(x, c.MaxLag, 0)
	if len(cg.Lags) != c.MaxLag {
		t.Fatalf("%s: %d lags", c.Name, len(cg.Lags))
	}
	scale := cg.ACVF0
	if !closeTo(cg.ACVF0, c.ACVF[0], 1e-9, 0) {
		t.Errorf("%s %s: acvf(0) = %v, want %v", lib, c.Name, cg.ACVF0, *c.ACVF[0])
	}
	for _, l := range cg.Lags {
		h := l.Lag
		if !closeTo(l.ACVF, c.ACVF[h], 1e-9, 1e-12*scale) {
			t.Errorf("%s %s: acvf(%d) = %v, want %v", lib, c.Name, h, l.ACVF, *c.ACVF[h])
		}
		if !closeTo(l.ACF, c.ACF[h], 1e-9, 1e-12) {
			t.Errorf("%s %s: acf(%d) = %v, want %v", lib, c.Name, h, l.ACF, *c.ACF[h])
		}
		if !closeTo(l.PACF, c.PACF[h], 1e-9, 1e-12) {
			t.Errorf("%s %s: pacf(%d) = %v, want %v", lib, c.Name, h, l.PACF, *c.PACF[h])
		}
	}
	a := SampleACVF(x, c.MaxLag)
	rho := ACF(a.ACVF)
	for _, b := range c.Box {
		var r Portmanteau
		var ok bool
		if b.Type == "Ljung-Box" {
			r, ok = LjungBox(rho, a.N, b.Lags, b.Fitdf)
			if b.Fitdf == 0 && ok {
				// The correlogram's cumulative Q at that lag is the same test.
				if q := cg.Lags[b.Lags-1].LBQ; math.Abs(q-r.Q) > 1e-12*r.Q {
					t.Errorf("%s %s: correlogram Q(%d) = %v, LjungBox = %v", lib, c.Name, b.Lags, q, r.Q)
				}
			}
		} else {
			r, ok = BoxPierce(rho, a.N, b.Lags, b.Fitdf)
		}
		if !ok {
			t.Errorf("%s %s: %s(%d) undefined", lib, c.Name, b.Type, b.Lags)
			continue
		}
		if r.DF != b.Lags-b.Fitdf || math.Abs(r.Q-b.Q) > 1e-9*b.Q || !pval(r.P, b.P) {
			t.Errorf("%s %s: %s(lags=%d, fitdf=%d) = Q %v p %v df %d; want Q %v p %v", lib, c.Name, b.Type, b.Lags, b.Fitdf, r.Q, r.P, r.DF, b.Q, b.P)
		}
	}
}

// TestAgainstR compares with R 4.2.2 stats::acf (covariance and
// correlation, na.action = na.pass), stats::pacf and stats::Box.test on
// datasets shipped with R (generator: testdata/reference/acf_ref.R). The
// presidents case has 6 missing quarters and so checks the missing-value
// divisor m(h) + h.
func TestAgainstR(t *testing.T) {
	f := loadRef(t, "acf_r.json")
	for _, c := range f.Cases {
		checkFull(t, "R", c)
	}
}

// TestAgainstStatsmodels compares with statsmodels 0.13.5 acovf(adjusted=
// False, fft=False), acf(fft=False), pacf(method="ldb") and acorr_ljungbox(
// boxpierce=True, model_df=k) (generator: testdata/reference/acf_ref.py);
// for the weekly CO2 series with 59 missing weeks it checks the lag sums
// S(h) and pair counts m(h) against acovf(missing="conservative") with
// adjusted=False (S(h)/n) and adjusted=True (S(h)/m(h)).
func TestAgainstStatsmodels(t *testing.T) {
	f := loadRef(t, "acf_statsmodels.json")
	for _, c := range f.Cases {
		if c.ConsBiased == nil {
			checkFull(t, "statsmodels", c)
			continue
		}
		x := gridCase(t, c)
		for _, a := range []Autocov{SampleACVFDirect(x, c.MaxLag), SampleACVFFFT(x, c.MaxLag)} {
			n := float64(a.N)
			for h := 0; h <= c.MaxLag; h++ {
				s := a.ACVF[h] * float64(a.Pairs[h]+h)
				if !closeTo(s/n, c.ConsBiased[h], 1e-9, 1e-11*a.ACVF[0]) || !closeTo(s/float64(a.Pairs[h]), c.ConsAdjusted[h], 1e-9, 1e-11*a.ACVF[0]) {
					t.Errorf("statsmodels %s: lag %d: S/n = %v want %v, S/m = %v want %v", c.Name, h, s/n, *c.ConsBiased[h], s/float64(a.Pairs[h]), *c.ConsAdjusted[h])
				}
			}
		}
	}
}

func randomGapped(rng *rand.Rand, n int, gapFrac float64) []float64 {
	x := make([]float64, n)
	v := 0.0
	for i := range x {
		v = 0.6*v + rng.NormFloat64()
		x[i] = 1e4 + v
		if i > 0 && i < n-1 && rng.Float64() < gapFrac {
			x[i] = math.NaN()
		}
	}
	return x
}

// TestDirectEqualsFFT: both ACVF paths agree to 1e-9 of γ̂(0) and give the
// same pair counts, with and without gaps.
func TestDirectEqualsFFT(t *testing.T) {
	rng := rand.New(rand.NewSource(3))
	for _, n := range []int{1, 2, 3, 17, 100, 1000, 5000} {
		for _, gap := range []float64{0, 0.2} {
			x := randomGapped(rng, n, gap)
			L := 300
			d, f := SampleACVFDirect(x, L), SampleACVFFFT(x, L)
			if d.N != f.N || d.Mean != f.Mean {
				t.Fatalf("n=%d: N/mean differ", n)
			}
			for h := 0; h <= L; h++ {
				if d.Pairs[h] != f.Pairs[h] {
					t.Fatalf("n=%d gap=%v lag %d: pairs %d vs %d", n, gap, h, d.Pairs[h], f.Pairs[h])
				}
				if math.IsNaN(d.ACVF[h]) != math.IsNaN(f.ACVF[h]) || math.Abs(d.ACVF[h]-f.ACVF[h]) > 1e-9*d.ACVF[0] {
					t.Fatalf("n=%d gap=%v lag %d: direct %v fft %v", n, gap, h, d.ACVF[h], f.ACVF[h])
				}
			}
		}
	}
}

// TestMissingDivisor checks γ̂(h) = S(h)/(m(h)+h) by hand on a short series
// (values from R 4.2.2: acf(c(1,3,NA,2,5,4,NA,NA,6,2), type="covariance",
// na.action=na.pass, lag.max=5)$acf).
func TestMissingDivisor(t *testing.T) {
	nan := math.NaN()
	x := []float64{1, 3, nan, 2, 5, 4, nan, nan, 6, 2}
	want := []float64{2.775510204081633070, -0.763265306122448806, -0.137755102040816368, 0.731292517006802867, -0.048469387755101914, -0.915816326530612179}
	a := SampleACVFDirect(x, 5)
	for h, w := range want {
		if math.Abs(a.ACVF[h]-w) > 1e-12 {
			t.Errorf("lag %d: %v want %v", h, a.ACVF[h], w)
		}
	}
	if a.N != 7 || a.Pairs[1] != 4 || a.Pairs[2] != 2 {
		t.Errorf("N %d pairs %v", a.N, a.Pairs)
	}
}

func TestEdgeCases(t *testing.T) {
	// Constant series: γ̂(0) = 0, ACF and PACF undefined.
	a := SampleACVF([]float64{5, 5, 5, 5}, 2)
	if a.ACVF[0] != 0 || a.ACVF[1] != 0 {
		t.Fatalf("constant acvf %v", a.ACVF)
	}
	for _, r := range ACF(a.ACVF) {
		if !math.IsNaN(r) {
			t.Fatalf("constant acf %v", ACF(a.ACVF))
		}
	}
	cg := ComputeCorrelogram([]float64{5, 5, 5, 5}, 2, 0)
	if !math.IsNaN(cg.Lags[0].PACF) || !math.IsNaN(cg.Lags[0].LBQ) {
		t.Fatalf("constant correlogram %+v", cg.Lags[0])
	}
	// n = 1: lag 0 defined (0), lags ≥ 1 undefined; empty: everything NaN.
	a = SampleACVF([]float64{7}, 3)
	if a.ACVF[0] != 0 || !math.IsNaN(a.ACVF[1]) || a.N != 1 || a.Mean != 7 {
		t.Fatalf("n=1 %+v", a)
	}
	a = SampleACVF(nil, 2)
	if a.N != 0 || !math.IsNaN(a.Mean) || !math.IsNaN(a.ACVF[0]) {
		t.Fatalf("empty %+v", a)
	}
	if cg := ComputeCorrelogram(nil, 3, 0); len(cg.Lags) != 0 {
		t.Fatalf("empty correlogram %+v", cg)
	}
	// n = 2: γ̂(1) = (y1−ȳ)(y2−ȳ)/2 = −1/4·(y2−y1)²/2; ρ̂(1) = −1/2.
	a = SampleACVF([]float64{1, 3}, 1)
	if a.ACVF[0] != 1 || a.ACVF[1] != -0.5 || ACF(a.ACVF)[1] != -0.5 {
		t.Fatalf("n=2 %+v", a)
	}
	// Ljung–Box needs lags < n; a lag without pairs is undefined.
	if _, ok := LjungBox(ACF(a.ACVF), 2, 2, 0); ok {
		t.Fatal("lags ≥ n accepted")
	}
	nan := math.NaN()
	gap := []float64{1, nan, 2, nan, 5}
	if _, ok := SeriesPortmanteau(gap, 1, 0, false); ok {
		t.Fatal("lag without pairs gave a statistic")
	}
	// fitdf ≥ lags: Q defined, p undefined.
	r, ok := SeriesPortmanteau([]float64{1, 3, 2, 5, 4, 6}, 2, 2, false)
	if !ok || r.DF != 0 || !math.IsNaN(r.P) || !(r.Q > 0) {
		t.Fatalf("fitdf = lags: %+v %v", r, ok)
	}
}

// TestPACFAR1: for ρ(h) = φ^h (an AR(1) autocorrelation function) the
// Durbin–Levinson recursion gives α(1) = φ and α(h) = 0 for h > 1
// (Brockwell & Davis 2002, example 3.2.6).
func TestPACFAR1(t *testing.T) {
	phi := 0.7
	rho := make([]float64, 8)
	for h := range rho {
		rho[h] = math.Pow(phi, float64(h))
	}
	p := PACF(rho)
	if !math.IsNaN(p[0]) || math.Abs(p[1]-phi) > 1e-15 {
		t.Fatalf("pacf %v", p)
	}
	for h := 2; h < len(p); h++ {
		if math.Abs(p[h]) > 1e-14 {
			t.Fatalf("pacf(%d) = %v", h, p[h])
		}
	}
}

// BenchmarkACVFLag48 compares the direct lag sums with the FFT at
// max_lag = 48 (the direct path is the one SampleACVF picks there).
func BenchmarkACVFLag48(b *testing.B) { benchACVF(b, 48) }

// BenchmarkACVFLag500 is the same at max_lag = 500 (SampleACVF picks the
// FFT there for N ≥ 1024).
func BenchmarkACVFLag500(b *testing.B) { benchACVF(b, 500) }

func benchACVF(b *testing.B, lag int) {
	for _, n := range []int{1000, 10000, 100000} {
		x := randomGapped(rand.New(rand.NewSource(1)), n, 0.05)
		for _, path := range []struct {
			name string
			f    func([]float64, int) Autocov
		}{{"direct", SampleACVFDirect}, {"fft", SampleACVFFFT}} {
			b.Run(path.name+"/n="+strconv.Itoa(n), func(b *testing.B) {
				b.ReportAllocs()
				for i := 0; i < b.N; i++ {
					path.f(x, lag)
				}
			})
		}
	}
}

// TestPACFIndefinite: a correlation sequence that is not positive definite
// (possible with missing slots) stops the recursion at the first lag where
// |φ_kk| ≥ 1: ρ = (1, 0.9, 0.2) gives φ_11 = 0.9 and φ_22 = (0.2 − 0.81)/(1 −
// 0.81) = −3.2105…, which is not a correlation, so α̂(2) and α̂(3) are NaN
// and the stop names lag 2.
func TestPACFIndefinite(t *testing.T) {
	p, stop := PartialACF([]float64{1, 0.9, 0.2, 0.1})
	if math.Abs(p[1]-0.9) > 1e-15 || !math.IsNaN(p[2]) || !math.IsNaN(p[3]) || stop.Lag != 2 || stop.Reason == "" {
		t.Fatalf("pacf %v stop %+v", p, stop)
	}
}

// TestLagPairsMatchDefinition: the pair counts from the missing slots
// (lagPairs, lagPairsAt, both branches of lagPairs) equal the definition
// m(h) = #{i : slots i and i + h both present}, counted pair by pair
// (common practice), for sparse and dense gaps, runs of missing slots, a
// missing first or last slot and an empty series.
func TestLagPairsMatchDefinition(t *testing.T) {
	rng := rand.New(rand.NewSource(5))
	for _, N := range []int{1, 2, 3, 7, 60, 500} {
		for _, frac := range []float64{0, 0.02, 0.2, 0.6, 1} {
			present := make([]bool, N)
			var miss []int
			for i := 0; i < N; {
				run := 1
				if rng.Float64() < frac {
					run = 1 + rng.Intn(6)
					for k := i; k < min(i+run, N); k++ {
						miss = append(miss, k)
					}
				} else {
					present[i] = true
				}
				i += run
			}
			for _, L := range []int{0, 1, 5, N - 1} {
				if L < 0 || L >= N {
					continue
				}
				got := lagPairs(N, L, miss)
				for h := 0; h <= L; h++ {
					want := 0
					for i := 0; i+h < N; i++ {
						if present[i] && present[i+h] {
							want++
						}
					}
					if got[h] != want || lagPairsAt(N, h, miss) != want {
						t.Fatalf("N=%d frac=%v L=%d h=%d: lagPairs %d, lagPairsAt %d, want %d (missing %v)", N, frac, L, h, got[h], lagPairsAt(N, h, miss), want, miss)
					}
				}
			}
		}
	}
}
