package sqlfuncs_test

// The worked examples of the US EPA Unified Guidance (2009), run through
// SQL on a scratch store. Data: US Environmental Protection Agency (2009),
// Statistical Analysis of Groundwater Monitoring Data at RCRA Facilities —
// Unified Guidance, EPA 530/R-09-007 (with the 2010 errata), as transcribed
// in ../shared/reference/epa-unified-guidance-2009.md. Expected values come
// from the guidance's formulas (Mann–Kendall S with the tie correction of
// Var(S), Z with the continuity correction, two-sided normal p, median of
// the pairwise slopes), not from its printed page: the printed results were
// not available. Each check names the example.

import (
	"math"
	"math/big"
	"slices"
	"testing"
)

const secondsPerYear = 31557600.0

// exactPairSlopes returns every pairwise slope (y_b − y_a)/(x_b − x_a),
// a < b, as exact rationals of the decimals, sorted: the guidance's
// Theil–Sen definition written out by brute force.
func exactPairSlopes(x, y []float64) []*big.Rat {
	var out []*big.Rat
	dec := func(v float64) *big.Rat { r, _ := new(big.Rat).SetString(big.NewFloat(v).Text('g', -1)); return r }
	for a := range x {
		for b := a + 1; b < len(x); b++ {
			num := new(big.Rat).Sub(dec(y[b]), dec(y[a]))
			den := new(big.Rat).Sub(dec(x[b]), dec(x[a]))
			out = append(out, num.Quo(num, den))
		}
	}
	slices.SortFunc(out, func(p, q *big.Rat) int { return p.Cmp(q) })
	return out
}

func ratF(r *big.Rat) float64 { f, _ := r.Float64(); return f }

func epaClose(got, want, rel float64) bool {
	return got == want || math.Abs(got-want) <= rel*math.Abs(want)
}

// checkMKSen runs mann_kendall and sen_slope on one example. x is used as
// the time in seconds, so a slope per unit of x is slope_per_year divided by
// 31 557 600.
func checkMKSen(t *testing.T, name string, x, y []float64, s int64, varS, z, p, tauA, tauB, slope, slopeRel float64) {
	t.Helper()
	db := openKendallStore(t)
	insertK(t, db, name, x, nil, anys(y))
	mk := jsonMap(t, queryVal(t, db, `SELECT mann_kendall(t, y) FROM kobs WHERE g = ?`, name))
	// S and Var(S) are exact; Z = (S − 1)/√Var(S) and p = erfc(Z/√2) are
	// recomputed from them (1e-12), and compared with the check values at
	// the 7 significant digits they are given with.
	if int64(num(t, mk, "s")) != s || num(t, mk, "var_s") != varS {
		t.Errorf("%s: S = %v, Var(S) = %v; guidance formulas give %d, %v", name, mk["s"], mk["var_s"], s, varS)
	}
	zf := float64(s-1) / math.Sqrt(varS)
	if !epaClose(num(t, mk, "z"), zf, 1e-12) || !epaClose(num(t, mk, "z"), z, 1e-6) {
		t.Errorf("%s: z = %v; (S − 1)/√Var(S) = %v, check value %v", name, mk["z"], zf, z)
	}
	if !epaClose(num(t, mk, "p"), math.Erfc(zf/math.Sqrt2), 1e-12) || !epaClose(num(t, mk, "p"), p, 1e-6) {
		t.Errorf("%s: p = %v, check value %v", name, mk["p"], p)
	}
	// tau: mann_kendall reports Kendall's tau-b. The check value is S/n0
	// (tau-a), which equals tau-b only without ties in y.
	n0 := float64(len(y)*(len(y)-1)) / 2
	if !epaClose(float64(s)/n0, tauA, 1e-6) || !epaClose(num(t, mk, "tau"), tauB, 1e-12) {
		t.Errorf("%s: tau-b = %v (scipy %v); S/n0 = %v, check value %v", name, mk["tau"], tauB, float64(s)/n0, tauA)
	}

	sen := jsonMap(t, queryVal(t, db, `SELECT sen_slope(t, y) FROM kobs WHERE g = ?`, name))
	slopes := exactPairSlopes(x, y)
	N := len(slopes)
	median := new(big.Rat).Set(slopes[N/2])
	if N%2 == 0 {
		median.Add(slopes[N/2-1], slopes[N/2]).Quo(median, big.NewRat(2, 1))
	}
	perX := num(t, sen, "slope_per_year") / secondsPerYear
	if !epaClose(perX, ratF(median), 1e-12) || !epaClose(perX, slope, slopeRel) {
		t.Errorf("%s: Theil–Sen slope %v per unit of x; median of the %d pairwise slopes %v, check value %v", name, perX, N, ratF(median), slope)
	}
	// Interval convention. The guidance's own interval for the Theil–Sen
	// slope was not available here, so it is not compared. sen_slope's 95 %
	// interval is the rank interval of Sen (1968) as documented at
	// sen_slope: C = 1.959964·√Var(S), lower = the round((N − C)/2)-th and
	// upper = the (round((N + C)/2) + 1)-th smallest slope (ranks rounded
	// half to even, clamped to 1..N); checked here against the brute-force
	// sorted slopes.
	c := 1.959963984540054 * math.Sqrt(varS)
	lo := min(max(int(math.RoundToEven((float64(N)-c)/2)), 1), N)
	hi := min(max(int(math.RoundToEven((float64(N)+c)/2))+1, 1), N)
	if int(num(t, sen, "lower_rank")) != lo || int(num(t, sen, "upper_rank")) != hi ||
		!epaClose(num(t, sen, "lower")/secondsPerYear, ratF(slopes[lo-1]), 1e-12) ||
		!epaClose(num(t, sen, "upper")/secondsPerYear, ratF(slopes[hi-1]), 1e-12) {
		t.Errorf("%s: interval ranks %v..%v (%v..%v per year); documented rule gives ranks %d..%d, slopes %v..%v per unit of x",
			name, sen["lower_rank"], sen["upper_rank"], sen["lower"], sen["upper"], lo, hi, ratF(slopes[lo-1]), ratF(slopes[hi-1]))
	}
}

// Data: EPA 2009 Unified Guidance Example 17-6 (sulfate, Mann–Kendall with
// ties and Theil–Sen, pp. 17-33 to 17-34); expected values from the
// guidance's formulas; printed results not available. x is the guidance's
// year.month-style number used as a plain number.
func TestEPAExample17_6(t *testing.T) {
	x := []float64{89.6, 89.8, 90.1, 90.3, 90.6, 90.8, 91.1, 91.3, 91.6, 91.8, 92.1, 92.6, 93.1, 93.6,
		94.1, 94.6, 95.1, 95.6, 95.8, 96.1, 96.3, 96.6, 96.8}
	y := []float64{480, 450, 490, 520, 485, 510, 510, 530, 510, 560, 560, 540, 590, 550,
		600, 700, 570, 610, 650, 620, 830, 720, 590}
	// n = 23; S = 194; ties of sizes 3, 2, 2: Var(S) = (23·22·51 − 3·2·11 − 2·(2·1·9))/18 = 1428;
	// Z = 5.107322, p = 3.267574e-07, slope = 26.6666667 per unit of x.
	// The reference lists 0.7667984 as "Kendall tau-b", but that is
	// S/n0 = 194/253 (tau-a); with the three tie groups tau-b is
	// 194/√(253·248) = 0.7744896688138094 (scipy 1.10.1
	// scipy.stats.kendalltau(x, y).statistic).
	checkMKSen(t, "epa17-6", x, y, 194, 1428, 5.107322, 3.267574e-07, 0.7667984, 0.7744896688138094, 26.6666667, 2e-9)
}

// Data: EPA 2009 Unified Guidance Example 17-7 (sodium, Theil–Sen with a
// small sample, pp. 17-36 to 17-38); expected values from the guidance's
// formulas (normal approximation of S even at n = 10); printed results not
// available.
func TestEPAExample17_7(t *testing.T) {
	x := []float64{89.6, 90.1, 90.8, 91.1, 92.1, 93.1, 94.1, 95.6, 96.1, 96.3}
	y := []float64{56, 53, 51, 55, 52, 60, 62, 59, 61, 63}
	// n = 10, S = 25, Var(S) = 10·9·25/18 = 125 (no ties), Z = 2.146625,
	// p = 0.03182313, tau = 0.5555556 (no ties: tau-a = tau-b = 25/45;
	// scipy 1.10.1 kendalltau gives 0.5555555555555555), slope = 1.3333333
	// per unit of x.
	checkMKSen(t, "epa17-7", x, y, 25, 125, 2.146625, 0.03182313, 0.5555556, 0.5555555555555555, 1.3333333, 3e-8)
}

// Data: EPA 2009 Unified Guidance Example 14-10 on the data of Example 14-8
// (seasonal Kendall, pp. 14-32 and 14-38); expected values from the
// guidance's formulas with the 12 months as seasons treated as independent;
// printed results not available.
func TestEPAExample14_10(t *testing.T) {
	years := [][]float64{
		{1.99, 2.10, 2.12, 2.12, 2.11, 2.15, 2.19, 2.18, 2.16, 2.08, 2.05, 2.08}, // 1983
		{2.01, 2.10, 2.17, 2.13, 2.13, 2.18, 2.25, 2.24, 2.22, 2.13, 2.08, 2.16}, // 1984
		{2.15, 2.17, 2.27, 2.23, 2.24, 2.26, 2.31, 2.32, 2.28, 2.22, 2.19, 2.22}, // 1985
	}
	// Month m of year Y at the middle of the m-th twelfth of the 365.25-day
	// year counted from the epoch, so that seasonal_kendall(t, y, '1y', 12)
	// puts it in season m and same-month readings are exactly whole years
	// apart (slopes per year are then per year of the guidance's table).
	var tt, y []float64
	for i, row := range years {
		for m, v := range row {
			tt = append(tt, float64(1983+i-1970)*secondsPerYear+(float64(m)+0.5)*secondsPerYear/12)
			y = append(y, v)
		}
	}
	db := openKendallStore(t)
	insertK(t, db, "epa14-10", tt, nil, anys(y))
	sk := jsonMap(t, queryVal(t, db, `SELECT seasonal_kendall(t, y, '1y', 12) FROM kobs WHERE g = 'epa14-10'`))
	// S' = 35 (eleven months S = 3, February S = 2 because of a tie);
	// Var(S') = 11·(3·2·11/18) + (3·2·11 − 2·1·9)/18 = 43; Z = 34/√43 =
	// 5.1849514; p = 2.160712e-07; seasonal Sen slope 0.06 per year.
	if int(num(t, sk, "s")) != 35 || !epaClose(num(t, sk, "var_s"), 43, 1e-12) {
		t.Errorf("S' = %v, Var(S') = %v; guidance formulas give 35, 43", sk["s"], sk["var_s"])
	}
	zf := 34 / math.Sqrt(43)
	if !epaClose(num(t, sk, "z"), zf, 1e-12) || !epaClose(num(t, sk, "z"), 5.1849514, 1e-7) {
		t.Errorf("z = %v; 34/√43 = %v, check value 5.1849514", sk["z"], zf)
	}
	if !epaClose(num(t, sk, "p"), 2.160712e-07, 1e-6) {
		t.Errorf("p = %v, check value 2.160712e-07", sk["p"])
	}
	if !epaClose(num(t, sk, "slope_per_year"), 0.06, 1e-9) {
		t.Errorf("seasonal Sen slope %v per year, check value 0.06", sk["slope_per_year"])
	}
	// Interval convention: seasonal_kendall's 95 % interval applies the
	// sen_slope rank rule to the 36 within-month pairs with Var(S') = 43
	// (this project's documented choice); the guidance's interval, if any,
	// was not available and is not compared.
	// The within-month slopes are written out here by brute force, in exact
	// decimal arithmetic (same-month readings are whole years apart), and
	// the rule gives C = 1.959964·√43, ranks round((36 − C)/2) = 12 and
	// round((36 + C)/2) + 1 = 25 of the 36 sorted slopes.
	var slopes []*big.Rat
	for m := 0; m < 12; m++ {
		for a := range years {
			for b := a + 1; b < len(years); b++ {
				s := exactPairSlopes([]float64{float64(a), float64(b)}, []float64{years[a][m], years[b][m]})
				slopes = append(slopes, s[0])
			}
		}
	}
	slices.SortFunc(slopes, func(p, q *big.Rat) int { return p.Cmp(q) })
	N := len(slopes)
	c := 1.959963984540054 * math.Sqrt(43)
	lo := min(max(int(math.RoundToEven((float64(N)-c)/2)), 1), N)
	hi := min(max(int(math.RoundToEven((float64(N)+c)/2))+1, 1), N)
	if N != 36 || lo != 12 || hi != 25 {
		t.Fatalf("%d within-month slopes, ranks %d..%d; want 36, 12..25", N, lo, hi)
	}
	if !epaClose(num(t, sk, "lower"), ratF(slopes[lo-1]), 1e-9) || !epaClose(num(t, sk, "upper"), ratF(slopes[hi-1]), 1e-9) {
		t.Errorf("interval %v..%v per year; the rule on the sorted within-month slopes gives %v..%v",
			sk["lower"], sk["upper"], ratF(slopes[lo-1]), ratF(slopes[hi-1]))
	}
}
