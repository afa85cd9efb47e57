package stats_test

// Unit checks of SummarizeSeries on inputs where the answer is known
// exactly (the figure-by-figure equality with the SQL functions on real
// stores is store/summaries/run_test.go), and of the season-block grouping that
// SeasonBlocks documents as a plain SQL GROUP BY.

import (
	"math"
	"strings"
	"testing"

	"trendsql/sqlfuncs/stats"
)

func summaryOpts() stats.SummaryOptions {
	return stats.SummaryOptions{MaxLag: 5, Alpha: 0.05, Confidence: 0.95, MinN: 10}
}

func series(n int, t0, step float64, f func(i int) float64) (t, y []float64) {
	for i := 0; i < n; i++ {
		t = append(t, t0+float64(i)*step)
		y = append(y, f(i))
	}
	return t, y
}

// TestSummaryConstantSeries: a constant series has sample statistics whose
// tests are undefined (0/0). The summary must store them as NULL, never as a
// flag: constant y gives slope 0 with se 0 and a null slope p (trend_fit's
// documented constant case), Mann–Kendall var_s = 0 so z and p are null,
// a zero Sen slope, an undefined Ljung–Box test (γ̂(0) = 0) and a Pettitt
// statistic of 0 (p = 2·exp(0) capped at 1).
func TestSummaryConstantSeries(t *testing.T) {
	tt, y := series(50, 1.6e9, 86400, func(int) float64 { return 3.25 })
	s := stats.SummarizeSeries(tt, y, summaryOpts())
	if s.InsufficientData || s.N != 50 {
		t.Fatalf("insufficient_data %v, n %d", s.InsufficientData, s.N)
	}
	if s.SlopePerYear == nil || *s.SlopePerYear != 0 || s.SlopeSE == nil || *s.SlopeSE != 0 {
		t.Errorf("slope %v ± %v, want exactly 0 ± 0", s.SlopePerYear, s.SlopeSE)
	}
	for name, p := range map[string]*float64{"slope_p": s.SlopeP, "hac_p": s.HACP, "r2": s.R2, "mk_p": s.MKP, "mk_z": s.MKZ, "lb_p": s.LBP} {
		if p != nil {
			t.Errorf("%s = %v for a constant series, want NULL", name, *p)
		}
	}
	if s.SenSlopePerYear == nil || *s.SenSlopePerYear != 0 {
		t.Errorf("Sen slope %v, want 0", s.SenSlopePerYear)
	}
	if s.ResidualDependence != nil {
		t.Errorf("residual_dependence = %v with an undefined Ljung–Box test, want NULL", *s.ResidualDependence)
	}
	if s.PettittP == nil || *s.PettittP != 1 || s.StepChangeSuspected == nil || *s.StepChangeSuspected {
		t.Errorf("Pettitt p %v, step %v; want p = 1, no step", s.PettittP, s.StepChangeSuspected)
	}
	if !strings.Contains(s.Problem, "Ljung–Box") {
		t.Errorf("notes %q should say why Ljung–Box is missing", s.Problem)
	}
	if s.Mean == nil || *s.Mean != 3.25 || s.PctPerDecade == nil || *s.PctPerDecade != 0 {
		t.Errorf("mean %v, pct_per_decade %v; want 3.25 and 0", s.Mean, s.PctPerDecade)
	}
}

// TestSummaryShortAndEmpty: the documented minimum record (--min-n, and two
// periods with a seasonal model) and an empty window.
func TestSummaryShortAndEmpty(t *testing.T) {
	o := summaryOpts()
	s := stats.SummarizeSeries(nil, nil, o)
	if !s.InsufficientData || s.N != 0 || s.Problem != "no readings in the selected window" {
		t.Errorf("empty: insufficient %v, n %d, notes %q", s.InsufficientData, s.N, s.Problem)
	}
	tt, y := series(9, 1.6e9, 86400, func(i int) float64 { return float64(i) })
	s = stats.SummarizeSeries(tt, y, o)
	if !s.InsufficientData || s.SlopePerYear != nil || s.MKP != nil || s.Problem != "9 readings, fewer than the minimum record of 10" {
		t.Errorf("9 readings: insufficient %v, slope %v, mk_p %v, notes %q", s.InsufficientData, s.SlopePerYear, s.MKP, s.Problem)
	}
	// Coverage is still reported for a short record.
	if s.StepS == nil || *s.StepS != 86400 || s.GridSlots == nil || *s.GridSlots != 9 || *s.MissingShare != 0 {
		t.Errorf("9 daily readings: step %v, slots %v, missing %v", s.StepS, s.GridSlots, s.MissingShare)
	}
	tt, y = series(10, 1.6e9, 86400, func(i int) float64 { return float64(i % 3) })
	if s = stats.SummarizeSeries(tt, y, o); s.InsufficientData || s.SlopePerYear == nil || s.LBLags == nil || *s.LBLags != 2 {
		t.Errorf("10 readings: insufficient %v, slope %v, lb_lags %v (want n/5 = 2)", s.InsufficientData, s.SlopePerYear, s.LBLags)
	}
	op := o
	op.PeriodS, op.Harmonics, op.Seasons = stats.YearStep, 2, 12
	tt, y = series(700, 1.6e9, 86400, func(i int) float64 { return float64(i % 5) }) // 1.92 years
	if s = stats.SummarizeSeries(tt, y, op); !s.InsufficientData || !strings.Contains(s.Problem, "at least 2") {
		t.Errorf("1.9 periods: insufficient %v, notes %q", s.InsufficientData, s.Problem)
	}
}

// TestSummaryAliasedSeasonalModel: seasonal terms that the sampling cannot
// determine (a one-day period on daily readings) leave the least-squares
// figures and the residual diagnostics empty with a note, not a made-up fit.
func TestSummaryAliasedSeasonalModel(t *testing.T) {
	o := summaryOpts()
	o.PeriodS, o.Harmonics, o.Seasons = 86400, 2, 12
	tt, y := series(100, 1.6e9, 86400, func(i int) float64 { return float64(i % 7) })
	s := stats.SummarizeSeries(tt, y, o)
	if s.TrendModel != nil || s.SlopePerYear != nil || s.LBP != nil || len(s.Correlogram) != 0 {
		t.Errorf("aliased model: model %v, slope %v, lb_p %v, %d correlogram rows; want none", s.TrendModel, s.SlopePerYear, s.LBP, len(s.Correlogram))
	}
	if !strings.Contains(s.Problem, "rank-deficient") {
		t.Errorf("notes %q should name the rank-deficient design", s.Problem)
	}
}

// TestSeasonBlocksMatchSQLGrouping: SeasonBlocks assigns every reading to
// cycle floor(t/P) and season stats.SeasonOf(t, P, m); its doc gives the SQL
// equivalent GROUP BY t / P_s, ((t % P_s) * m) / P_s on integer unix
// seconds. The two must agree for every time, including times exactly on a
// season boundary (k·P/m, integers for P = 1y = 31 557 600 s and m = 12).
func TestSeasonBlocksMatchSQLGrouping(t *testing.T) {
	const P = 31557600
	for _, m := range []int64{4, 12, 52} {
		check := func(ti int64) {
			wantSeason := int((ti % P) * m / P)
			if got := stats.SeasonOf(float64(ti), P, int(m)); got != wantSeason {
				t.Fatalf("m=%d t=%d: SeasonOf %d, SQL grouping %d", m, ti, got, wantSeason)
			}
		}
		for c := int64(40); c < 60; c++ {
			for k := int64(0); k < m; k++ {
				b := c*P + k*P/m // boundaries (integer division as in SQL for m = 52)
				check(b - 1)
				check(b)
				check(b + 1)
			}
		}
		for ti := int64(1262304000); ti < 1262304000+16*P; ti += 3600 {
			check(ti)
		}
	}
	// The blocks: mean time and mean value per (cycle, season), in time order.
	tt, y := series(3*365, 1.6e9, 86400, func(i int) float64 { return float64(i) })
	bt, by, season := stats.SeasonBlocks(tt, y, P, 12)
	if len(bt) < 36 || len(bt) > 38 {
		t.Fatalf("%d blocks for 3 years of daily readings, want 36–38", len(bt))
	}
	for i := range bt {
		if i > 0 && !(bt[i] > bt[i-1]) {
			t.Fatalf("block times not increasing at %d", i)
		}
		// y = day index, so each block's mean value is its mean time in
		// days from the first reading.
		if math.Abs(by[i]-(bt[i]-1.6e9)/86400) > 1e-9 {
			t.Errorf("block %d: mean value %v, mean time gives %v", i, by[i], (bt[i]-1.6e9)/86400)
		}
		if season[i] != stats.SeasonOf(bt[i], P, 12) {
			t.Errorf("block %d: season %d, its mean time is in season %d", i, season[i], stats.SeasonOf(bt[i], P, 12))
		}
	}
}

// A series with strong negative serial dependence gets a Hamed–Rao factor
// below 1; the summary then keeps the uncorrected Mann–Kendall variance and
// p (the correction guards only against positive dependence).
func TestSummaryHamedRaoNeverMoreLiberal(t *testing.T) {
	n := 60
	tt := make([]float64, n)
	y := make([]float64, n)
	for i := range tt {
		tt[i] = 1.7e9 + float64(i)*86400
		y[i] = 0.002 * float64(i)
		if i%2 == 1 {
			y[i] += 1
		}
	}
	mk, err := stats.MannKendall(y)
	if err != nil {
		t.Fatal(err)
	}
	hr, err := stats.HamedRao(tt, y, mk, 0)
	if err != nil {
		t.Fatal(err)
	}
	if !(hr.Factor < 1) {
		t.Fatalf("test series should give a factor below 1, got %v", hr.Factor)
	}
	s := stats.SummarizeSeries(tt, y, stats.SummaryOptions{MaxLag: 5, Alpha: 0.05, Confidence: 0.95, MinN: 10})
	if s.MKP == nil || *s.MKP != mk.P || *s.MKVarS != mk.VarS {
		t.Errorf("stored mk_p %v, mk_var_s %v; want the uncorrected %v, %v", s.MKP, s.MKVarS, mk.P, mk.VarS)
	}
	if s.MKCorrectionFactor == nil || *s.MKCorrectionFactor != hr.Factor {
		t.Errorf("stored factor %v, want %v", s.MKCorrectionFactor, hr.Factor)
	}
}
