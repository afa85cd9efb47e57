package stats

// Checks of the censored Mann–Kendall, seasonal Kendall and
// Akritas–Theil–Sen code against brute-force references written from the
// definitions: every pair is enumerated and ordered by the case table of the
// convention (Helsel 2012, Statistics for Censored Environmental Data, 2nd
// ed.: a pair whose order is ambiguous is a tie), the variance of S is the
// mean of S² over all n! assignments of the values to the times (its
// definition under the exchangeable null), and the Akritas–Theil–Sen slope
// is found by evaluating S(β) of the residuals between all candidate step
// values (Akritas, Murphy & LaValley 1995, JASA 90:170–177).
//
// No published worked example with its data and printed censored results
// was available while writing these tests, so none is entered here; the
// outside references are the brute force and the scipy/R equivalence checks
// (censored_ref_test.go).

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// censBruteOrder is the ordering rule written case by case: +1 when b is
// certainly above a, −1 certainly below, 0 equal or ambiguous.
func censBruteOrder(ya float64, ca Censoring, yb float64, cb Censoring) int {
	switch ca {
	case Uncensored:
		switch cb {
		case Uncensored: // two numbers
			switch {
			case yb > ya:
				return 1
			case yb < ya:
				return -1
			}
			return 0
		case BelowLimit: // b < yb: below a when yb ≤ ya
			if yb <= ya {
				return -1
			}
			return 0
		default: // b > yb: above a when yb ≥ ya
			if yb >= ya {
				return 1
			}
			return 0
		}
	case BelowLimit: // a < ya
		switch cb {
		case Uncensored, AboveLimit: // b = yb or b > yb: above a when yb ≥ ya
			if yb >= ya {
				return 1
			}
			return 0
		default: // both below limits: never certain
			return 0
		}
	default: // a > ya
		switch cb {
		case Uncensored, BelowLimit: // b = yb or b < yb: below a when yb ≤ ya
			if yb <= ya {
				return -1
			}
			return 0
		default:
			return 0
		}
	}
}

type censBruteResult struct {
	s, concor, discor int64
	tau               float64
	varFormula        float64
}

func censBruteMK(y []float64, c []Censoring) censBruteResult {
	n := len(y)
	var r censBruteResult
	score := make([]int64, n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if i == j {
				continue
			}
			b := int64(censBruteOrder(y[i], c[i], y[j], c[j]))
			score[i] += b
			if j > i {
				r.s += b
				if b > 0 {
					r.concor++
				} else if b < 0 {
					r.discor++
				}
			}
		}
	}
	var b3 float64
	for _, s := range score {
		b3 += float64(s * s)
	}
	untied := float64(r.concor + r.discor)
	r.varFormula = untied/3 + b3/3
	n0 := float64(n) * float64(n-1) / 2
	r.tau = float64(r.s) / math.Sqrt(n0*untied)
	return r
}

// censPermVariance is E[S²] and E[S] over all n! orders of the values.
func censPermVariance(y []float64, c []Censoring) (mean, meanSq float64) {
	n := len(y)
	perm := make([]int, n)
	for i := range perm {
		perm[i] = i
	}
	var count, sum, sumSq float64
	var rec func(k int)
	rec = func(k int) {
		if k == n {
			var s int64
			for i := 0; i < n; i++ {
				for j := i + 1; j < n; j++ {
					s += int64(censBruteOrder(y[perm[i]], c[perm[i]], y[perm[j]], c[perm[j]]))
				}
			}
			count++
			sum += float64(s)
			sumSq += float64(s) * float64(s)
			return
		}
		for i := k; i < n; i++ {
			perm[k], perm[i] = perm[i], perm[k]
			rec(k + 1)
			perm[k], perm[i] = perm[i], perm[k]
		}
	}
	rec(0)
	return sum / count, sumSq / count
}

// censRandom draws n values on a coarse grid (ties) with censoring from
// the given reporting limits: a value below the limit drawn for it is
// reported as "<limit"; some values become ">6" (above a measuring range).
func censRandom(rng *rand.Rand, n int, limits []float64, right bool) ([]float64, []Censoring) {
	y := make([]float64, n)
	c := make([]Censoring, n)
	for i := range y {
		v := math.Round(rng.Float64()*16) / 2 // 0, 0.5, …, 8
		lim := limits[rng.IntN(len(limits))]
		switch {
		case v < lim:
			y[i], c[i] = lim, BelowLimit
		case right && v > 6:
			y[i], c[i] = 6, AboveLimit
		default:
			y[i] = v
		}
	}
	return y, c
}

func censRelEq(a, b, tol float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return math.Abs(a-b) <= tol*math.Max(1, math.Max(math.Abs(a), math.Abs(b)))
}

func TestCensoredOrderMatchesCaseTable(t *testing.T) {
	vals := []float64{1, 2, 5, 5, 7}
	marks := []Censoring{BelowLimit, Uncensored, AboveLimit}
	for _, ya := range vals {
		for _, yb := range vals {
			for _, ca := range marks {
				for _, cb := range marks {
					if got, want := CensoredOrder(ya, ca, yb, cb), censBruteOrder(ya, ca, yb, cb); got != want {
						t.Errorf("order(%v %d, %v %d) = %d, case table %d", ya, ca, yb, cb, got, want)
					}
				}
			}
		}
	}
	// The examples of the convention in censored_kendall.go.
	for _, tc := range []struct {
		ya   float64
		ca   Censoring
		yb   float64
		cb   Censoring
		want int
	}{
		{5, BelowLimit, 5, Uncensored, 1}, {5, BelowLimit, 7, Uncensored, 1},
		{5, BelowLimit, 3, Uncensored, 0}, {5, BelowLimit, 1, BelowLimit, 0},
		{5, BelowLimit, 5, BelowLimit, 0}, {1, BelowLimit, 3, Uncensored, 1},
		{5, Uncensored, 5, AboveLimit, 1}, {5, BelowLimit, 5, AboveLimit, 1},
		{3, Uncensored, 3, Uncensored, 0},
	} {
		if got := CensoredOrder(tc.ya, tc.ca, tc.yb, tc.cb); got != tc.want {
			t.Errorf("order(%v %d, %v %d) = %d, want %d", tc.ya, tc.ca, tc.yb, tc.cb, got, tc.want)
		}
	}
}

func censCheckMK(t *testing.T, label string, y []float64, c []Censoring) {
	t.Helper()
	got, err := CensoredMannKendall(y, c)
	if err != nil {
		t.Fatalf("%s: %v", label, err)
	}
	b := censBruteMK(y, c)
	if got.S != b.s || got.Concor != b.concor || got.Discor != b.discor {
		t.Errorf("%s: S %d C %d D %d, brute %d %d %d (y %v c %v)", label, got.S, got.Concor, got.Discor, b.s, b.concor, b.discor, y, c)
	}
	if !censRelEq(got.VarS, b.varFormula, 1e-12) || !censRelEq(got.Tau, b.tau, 1e-12) {
		t.Errorf("%s: var %v tau %v, brute %v %v", label, got.VarS, got.Tau, b.varFormula, b.tau)
	}
	if got.Concor+got.Discor+got.Ambiguous+got.TiedEqual != got.Pairs || got.Ambiguous < 0 {
		t.Errorf("%s: pair counts %+v do not add up", label, got)
	}
}

// TestCensoredMKVarianceIsPermutationVariance: Var(S) against E[S²] over all
// n! orders (E[S] = 0) for n ≤ 7, one and several limits, right-censoring.
func TestCensoredMKVarianceIsPermutationVariance(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 1))
	cases := 0
	for n := 2; n <= 7; n++ {
		for k := 0; k < 12; k++ {
			limits := [][]float64{{2}, {1, 3}, {0.5, 2, 4.5}}[k%3]
			y, c := censRandom(rng, n, limits, k%4 == 3)
			got, err := CensoredMannKendall(y, c)
			if err != nil {
				t.Fatal(err)
			}
			mean, meanSq := censPermVariance(y, c)
			if math.Abs(mean) > 1e-9 || !censRelEq(got.VarS, meanSq, 1e-12) {
				t.Errorf("n=%d y %v c %v: var %v, permutation E[S]=%v E[S²]=%v", n, y, c, got.VarS, mean, meanSq)
			}
			cases++
		}
	}
	// Hand-made: several limits where the ordering is not transitive.
	y := []float64{1, 5, 3, 2, 5, 4}
	c := []Censoring{BelowLimit, BelowLimit, Uncensored, Uncensored, Uncensored, AboveLimit}
	got, _ := CensoredMannKendall(y, c)
	if _, meanSq := censPermVariance(y, c); !censRelEq(got.VarS, meanSq, 1e-12) {
		t.Errorf("hand case: var %v, permutation %v", got.VarS, meanSq)
	}
	t.Logf("%d random cases", cases)
}

func TestCensoredMKAgainstBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 2))
	for k := 0; k < 300; k++ {
		n := 2 + rng.IntN(60)
		limits := [][]float64{{2}, {1, 3}, {0.5, 2, 4.5, 6}}[k%3]
		y, c := censRandom(rng, n, limits, k%5 == 4)
		censCheckMK(t, "random", y, c)
	}
	// Edge cases.
	all := []float64{1, 5, 2, 5, 3}
	allC := []Censoring{BelowLimit, BelowLimit, BelowLimit, BelowLimit, BelowLimit}
	r, _ := CensoredMannKendall(all, allC)
	if r.S != 0 || r.VarS != 0 || !math.IsNaN(r.Z) || !math.IsNaN(r.P) || !math.IsNaN(r.Tau) || r.Ambiguous != 10 || r.Censored != 5 {
		t.Errorf("all censored: %+v", r)
	}
	censCheckMK(t, "all censored", all, allC)
	// One uncensored value among several limits.
	one := []float64{1, 5, 3, 2, 0.5}
	oneC := []Censoring{BelowLimit, BelowLimit, Uncensored, BelowLimit, BelowLimit}
	censCheckMK(t, "one uncensored", one, oneC)
	r, _ = CensoredMannKendall(one, oneC)
	// 3 is above "<1", "<2", "<0.5" and ambiguous with "<5": earlier "<1"
	// below it (+1), later "<2" and "<0.5" below it (−1 each).
	if r.S != -1 || r.Concor != 1 || r.Discor != 2 {
		t.Errorf("one uncensored: %+v", r)
	}
	// Ties between censored and uncensored values: a value equal to a
	// limit is above "<limit"; equal uncensored numbers tie.
	eq := []float64{2, 2, 2, 3, 2}
	eqC := []Censoring{BelowLimit, Uncensored, Uncensored, BelowLimit, BelowLimit}
	censCheckMK(t, "ties at the limit", eq, eqC)
	r, _ = CensoredMannKendall(eq, eqC)
	// pairs: (<2,2)+ (<2,2)+ (<2,<3)0 (<2,<2)0 (2,2)tie (2,<3)0 (2,<2)− (2,<3)0
	// (2,<2)− (<3,<2)0 → S = 2 − 2 = 0, one equal-number tie.
	if r.S != 0 || r.Concor != 2 || r.Discor != 2 || r.TiedEqual != 1 || r.Ambiguous != 5 {
		t.Errorf("ties at the limit: %+v", r)
	}
	if _, err := CensoredMannKendall([]float64{1}, []Censoring{0}); err == nil {
		t.Error("n = 1 accepted")
	}
	if _, err := CensoredMannKendall([]float64{1, math.NaN()}, []Censoring{0, 0}); err == nil {
		t.Error("NaN accepted")
	}
	if _, err := CensoredMannKendall([]float64{1, 2}, []Censoring{0, 3}); err == nil {
		t.Error("mark 3 accepted")
	}
}

// TestCensoredMKSingleLimitIsOrdinaryTest: one reporting limit with every
// value below it censored orders the data exactly as the ordinary test does
// after replacing the censored values by one common value below the limit
// (each "<L" ties every other "<L" and lies below every value ≥ L).
func TestCensoredMKSingleLimitIsOrdinaryTest(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 3))
	for k := 0; k < 200; k++ {
		n := 2 + rng.IntN(200)
		y, c := censRandom(rng, n, []float64{3}, false)
		sub := append([]float64(nil), y...)
		for i := range sub {
			if c[i] == BelowLimit {
				sub[i] = -1
			}
		}
		got, err := CensoredMannKendall(y, c)
		if err != nil {
			t.Fatal(err)
		}
		want, err := MannKendall(sub)
		if err != nil {
			t.Fatal(err)
		}
		if got.S != want.S || !censRelEq(got.VarS, want.VarS, 1e-12) || !censRelEq(got.Tau, want.Tau, 1e-12) || !censRelEq(got.Z, want.Z, 1e-12) {
			t.Errorf("n=%d: censored S %d var %v tau %v z %v; substituted %d %v %v %v", n, got.S, got.VarS, got.Tau, got.Z, want.S, want.VarS, want.Tau, want.Z)
		}
	}
}

func TestCensoredSeasonalAgainstBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 4))
	for k := 0; k < 60; k++ {
		m := 1 + rng.IntN(6)
		n := 1 + rng.IntN(80)
		y, c := censRandom(rng, n, [][]float64{{2}, {1, 2.5, 4}}[k%2], k%3 == 0)
		season := make([]int, n)
		for i := range season {
			season[i] = rng.IntN(m)
		}
		got, err := CensoredSeasonalKendall(y, c, season, m)
		if err != nil {
			t.Fatal(err)
		}
		var s int64
		var v float64
		used := 0
		for g := 0; g < m; g++ {
			var gy []float64
			var gc []Censoring
			for i := range y {
				if season[i] == g {
					gy = append(gy, y[i])
					gc = append(gc, c[i])
				}
			}
			if len(gy) < 2 {
				continue
			}
			used++
			b := censBruteMK(gy, gc)
			s += b.s
			v += b.varFormula
			if got.PerSeason[g].S != b.s || !censRelEq(got.PerSeason[g].VarS, b.varFormula, 1e-12) {
				t.Errorf("season %d: %+v, brute S %d var %v", g, got.PerSeason[g], b.s, b.varFormula)
			}
		}
		if got.S != s || !censRelEq(got.VarS, v, 1e-12) || got.SeasonsUsed != used {
			t.Errorf("seasonal: S %d var %v used %d; brute %d %v %d", got.S, got.VarS, got.SeasonsUsed, s, v, used)
		}
		if v > 0 && !censRelEq(got.Z, MKZ(s, v), 1e-12) {
			t.Errorf("seasonal z %v", got.Z)
		}
	}
}

// censBruteResidualS is S(β) from the definition: residuals y_i − β·t_i keep the
// censoring of y_i and are ordered by the case table.
func censBruteResidualS(t, y []float64, c []Censoring, beta float64) int {
	s := 0
	for i := range y {
		for j := i + 1; j < len(y); j++ {
			s += censBruteOrder(y[i]-beta*t[i], c[i], y[j]-beta*t[j], c[j])
		}
	}
	return s
}

// censBruteATS evaluates S(β) strictly between consecutive candidate step values
// (all pairwise (y_j − y_i)/(t_j − t_i)) and beyond the last one; sup{S > 0}
// is the first candidate after which S ≤ 0, inf{S < 0} the first after which
// S < 0.
func censBruteATS(t, y []float64, c []Censoring) (lower, upper float64) {
	var cand []float64
	for i := range y {
		for j := i + 1; j < len(y); j++ {
			cand = append(cand, (y[j]-y[i])/(t[j]-t[i]))
		}
	}
	censSortFloats(cand)
	lower, upper = math.NaN(), math.NaN()
	if len(cand) == 0 {
		return
	}
	positive := censBruteResidualS(t, y, c, cand[0]-1) > 0
	for k, v := range cand {
		if k+1 < len(cand) && cand[k+1] == v {
			continue
		}
		next := v + 1
		if k+1 < len(cand) {
			next = v + (cand[k+1]-v)/2
		}
		s := censBruteResidualS(t, y, c, next)
		if positive && math.IsNaN(lower) && s <= 0 {
			lower = v
		}
		if s < 0 {
			upper = v
			return
		}
	}
	return lower, upper
}

func censSortFloats(a []float64) {
	for i := 1; i < len(a); i++ {
		for j := i; j > 0 && a[j-1] > a[j]; j-- {
			a[j-1], a[j] = a[j], a[j-1]
		}
	}
}

func TestAkritasTheilSenAgainstBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 5))
	for k := 0; k < 150; k++ {
		n := 2 + rng.IntN(25)
		y, c := censRandom(rng, n, [][]float64{{2}, {1, 3}, {0.5, 2, 4.5}}[k%3], k%4 == 3)
		tt := make([]float64, n)
		for i := range tt {
			tt[i] = float64(i) + float64(rng.IntN(3))/4 // distinct, uneven steps
			if k%2 == 1 && c[i] == Uncensored {
				y[i] += 0.3 * tt[i] // a trend; even cases keep the grid values (ties)
			}
		}
		got, err := AkritasTheilSen(tt, y, c)
		if err != nil {
			t.Fatal(err)
		}
		lo, hi := censBruteATS(tt, y, c)
		if !censRelEq(got.Lower, lo, 1e-12) || !censRelEq(got.Upper, hi, 1e-12) {
			t.Errorf("k=%d n=%d: lower %v upper %v; brute %v %v (t %v y %v c %v)", k, n, got.Lower, got.Upper, lo, hi, tt, y, c)
		}
		want := math.NaN()
		if !math.IsNaN(lo) && !math.IsNaN(hi) {
			want = (lo + hi) / 2
		}
		if !censRelEq(got.Slope, want, 1e-12) {
			t.Errorf("k=%d: slope %v, brute %v", k, got.Slope, want)
		}
	}
	// All censored: every pair ambiguous, no slope.
	r, err := AkritasTheilSen([]float64{0, 1, 2}, []float64{1, 2, 1}, []Censoring{-1, -1, -1})
	if err != nil || !math.IsNaN(r.Slope) || r.Steps != 0 {
		t.Errorf("all censored: %+v %v", r, err)
	}
	if _, err := AkritasTheilSen([]float64{0, 0}, []float64{1, 2}, []Censoring{0, 0}); err == nil {
		t.Error("equal times accepted")
	}
}

// TestAkritasTheilSenWithoutCensoringIsSen: without censoring the estimate
// is the median of the pairwise slopes (SenMedian, itself checked against
// scipy.stats.theilslopes in kendall_test.go).
func TestAkritasTheilSenWithoutCensoringIsSen(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 6))
	for k := 0; k < 100; k++ {
		n := 2 + rng.IntN(150)
		tt := make([]float64, n)
		y := make([]float64, n)
		c := make([]Censoring, n)
		for i := range tt {
			tt[i] = 1.5e9 + float64(i)*86400 + float64(rng.IntN(3600))
			y[i] = rng.NormFloat64() + 1e-8*float64(i)*86400
			if k%2 == 0 {
				y[i] = math.Round(y[i] * 2) // ties
			}
		}
		got, err := AkritasTheilSen(tt, y, c)
		if err != nil {
			t.Fatal(err)
		}
		want, err := SenMedian(tt, y)
		if err != nil {
			t.Fatal(err)
		}
		if !censRelEq(got.Slope, want, 1e-9) {
			t.Errorf("n=%d: ATS %v, Sen %v", n, got.Slope, want)
		}
	}
}

func TestRecensorAndProfile(t *testing.T) {
	y := []float64{1, 5, 3, 7, 2, 0.5}
	c := []Censoring{BelowLimit, BelowLimit, Uncensored, Uncensored, BelowLimit, AboveLimit}
	ry, rc, lim := RecensorAtHighestLimit(y, c)
	wantY := []float64{5, 5, 5, 7, 5, 0.5}
	wantC := []Censoring{BelowLimit, BelowLimit, BelowLimit, Uncensored, BelowLimit, AboveLimit}
	if lim != 5 {
		t.Errorf("limit %v", lim)
	}
	for i := range y {
		if ry[i] != wantY[i] || rc[i] != wantC[i] {
			t.Errorf("value %d: %v %d, want %v %d", i, ry[i], rc[i], wantY[i], wantC[i])
		}
	}
	if y[2] != 3 || c[2] != Uncensored {
		t.Error("input modified")
	}
	p := ProfileCensoring(y, c)
	if p.Below != 3 || p.Above != 1 || p.Limits != 3 || p.HighestLimit != 5 || p.Share != 4.0/6 {
		t.Errorf("profile %+v", p)
	}
	// After re-censoring there is a single limit.
	if p := ProfileCensoring(ry, rc); p.Limits != 1 || p.Below != 4 {
		t.Errorf("re-censored profile %+v", p)
	}
}

// TestAkritasTheilSenSpanOverflow: a value range or time span wider than
// the largest float64 makes some steps NaN (∞/∞); the slope must be
// refused with an error naming the range, on the sorted and the streaming
// path, instead of walking steps that compare unequal to themselves.
func TestAkritasTheilSenSpanOverflow(t *testing.T) {
	saved := atsSortedSteps
	defer func() { atsSortedSteps = saved }()
	for _, limit := range []int64{saved, 0} {
		atsSortedSteps = limit
		for _, tc := range []struct {
			name string
			t, y []float64
			want string
		}{
			{"values", []float64{0, 1, 2}, []float64{1e308, 0, -1e308}, "values from"},
			{"times", []float64{-1e308, 0, 1e308}, []float64{1, 2, 3}, "times from"},
			{"both", []float64{-1e308, 1e308}, []float64{-1e308, 1e308}, "times from"},
		} {
			c := make([]Censoring, len(tc.t))
			_, err := AkritasTheilSenInterval(tc.t, tc.y, c, 0.95)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("%s (sorted limit %d): error %v, want one containing %q", tc.name, limit, err, tc.want)
			}
		}
		// Near the limit but finite: accepted, and the slope is the exact
		// median step (2e307/1 for values ±1e307 at times 0, 1).
		r, err := AkritasTheilSen([]float64{0, 1}, []float64{-1e307, 1e307}, []Censoring{0, 0})
		if err != nil || r.Slope != 2e307 {
			t.Errorf("finite range near the limit (sorted limit %d): %+v %v", limit, r, err)
		}
	}
}

// TestAkritasTheilSenInfiniteSteps: finite times and values whose steps
// overflow to ±∞ (a huge change over a tiny time gap) are ordinary steps at
// the ends of the order; the streaming path (forced, with small pivot and
// collection sizes so that brackets are sampled and shrunk, including to
// −∞ itself) must give the sorted walk's ends exactly, and terminate.
func TestAkritasTheilSenInfiniteSteps(t *testing.T) {
	savedSorted, savedPiv, savedFirst, savedCollect := atsSortedSteps, atsPivotCount, atsFirstPivots, atsCollectMax
	defer func() {
		atsSortedSteps, atsPivotCount, atsFirstPivots, atsCollectMax = savedSorted, savedPiv, savedFirst, savedCollect
	}()
	rng := rand.New(rand.NewPCG(71, 73))
	for k := 0; k < 60; k++ {
		n := 6 + rng.IntN(30)
		tt := make([]float64, n)
		y := make([]float64, n)
		c := make([]Censoring, n)
		for i := range tt {
			if i > 0 {
				tt[i] = tt[i-1] + 1
				if rng.IntN(3) == 0 {
					tt[i] = math.Nextafter(tt[i-1], math.Inf(1)) // a tiny gap
				}
			}
			y[i] = float64(rng.IntN(7) - 3)
			if rng.IntN(3) == 0 {
				y[i] *= 1e300
			}
			c[i] = Censoring(rng.IntN(4) / 3 * (1 - 2*rng.IntN(2))) // mostly uncensored
		}
		atsSortedSteps, atsPivotCount, atsFirstPivots, atsCollectMax = savedSorted, savedPiv, savedFirst, savedCollect
		want, err := AkritasTheilSenInterval(tt, y, c, 0.9)
		if err != nil {
			t.Fatal(err)
		}
		atsSortedSteps, atsPivotCount, atsFirstPivots, atsCollectMax = 0, 4, 4, 3
		got, err := AkritasTheilSenInterval(tt, y, c, 0.9)
		if err != nil {
			t.Fatal(err)
		}
		same := func(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }
		if !same(got.Lower, want.Lower) || !same(got.Upper, want.Upper) || !same(got.CILower, want.CILower) || !same(got.CIUpper, want.CIUpper) {
			t.Fatalf("case %d: streaming %+v, sorted %+v (t %v y %v c %v)", k, got, want, tt, y, c)
		}
	}
}
