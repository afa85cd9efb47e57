package stats

// SummarizeCensoredSeries is SummarizeSeries for a series with censored
// readings (values below a reporting limit or above a measuring limit).
// It stores what is defined for censored values and leaves the rest empty:
//
//	censored_share, censoring_limits, highest_limit
//	                      = ProfileCensoring (share of censored readings,
//	                        distinct reporting limits, the highest one)
//	mk_* (no period)      = censored_mann_kendall(t, y, mark): method
//	                        'censored-mann-kendall'; no serial-correlation
//	                        correction exists here for censored values
//	                        (mk_correction_factor stays empty)
//	mk_* (with period)    = censored_seasonal_kendall(t, y, mark, P, seasons)
//	                        on the readings (no season blocks: block means of
//	                        censored values are undefined); method
//	                        'censored-seasonal-kendall', independent seasons
//	sen_slope_per_year    = censored_sen_slope(t, y, mark), the
//	                        Akritas–Theil–Sen slope over all pairs (also with
//	                        a period); no interval (sen_lower, sen_upper empty)
//	mean, least-squares trend, residual correlogram, Ljung–Box
//	                      = skipped (a least-squares fit or an autocovariance
//	                        of limits is not an estimate of anything); with
//	                        SummaryOptions.CensoredFits they are computed as
//	                        in SummarizeSeries on the stored numbers
//	                        (censored values at their limits), and the notes
//	                        say so
//	pettitt_*             = skipped (the test here is not censoring-aware)
//
// When more than half the values are censored the notes say so and
// NoTrendFlag is set: the test is stored, but the run flags no trend from
// it. Trend tests on mostly censored records are not trusted as evidence of
// a trend (common practice; Helsel 2012 discusses the loss of power and the
// dependence on the limits).
//
// Coverage (n, times, years, step, grid, missing share) and the minimum
// record rules are those of SummarizeSeries.

import (
	"fmt"
	"math"

	"trendsql/sqlfuncs/timefmt"
)

// SummarizeCensoredSeries analyses one series sorted by t with distinct t
// and censoring marks c.
func SummarizeCensoredSeries(t, y []float64, c []Censoring, o SummaryOptions) (s SeriesSummary) {
	n := len(t)
	if o.CensoredFits {
		s = SummarizeSeries(t, y, o)
		// The rank figures below replace the uncensored ones.
		s.MKMethod, s.MKS, s.MKVarS, s.MKZ, s.MKP, s.MKTau, s.MKCorrectionFactor = "", nil, nil, nil, nil, nil, nil
		s.SenSlopePerYear, s.SenLower, s.SenUpper, s.SenIntervalBasis, s.SenVarS = nil, nil, nil, "", nil
		s.PettittK, s.PettittTChange, s.PettittU, s.PettittP, s.StepChangeSuspected = nil, nil, nil, nil, nil
	} else {
		s = censoredCoverage(t, y, o)
	}
	s.SenConfidence = o.Confidence
	var problems []string
	if s.Problem != "" {
		problems = append(problems, s.Problem)
	}
	note := func(format string, a ...any) { problems = append(problems, fmt.Sprintf(format, a...)) }
	defer func() { s.Problem = joinProblems(problems) }()

	p := ProfileCensoring(y, c)
	if n > 0 {
		s.CensoredShare = finitePtr(p.Share)
		lim := p.Limits
		s.CensoringLimits = &lim
		if p.Limits > 0 {
			s.HighestLimit = finitePtr(p.HighestLimit)
		}
	}
	limits := "limits"
	if p.Limits == 1 {
		limits = "limit"
	}
	note("%d of %d readings censored (%d distinct reporting %s): censored rank methods", p.Below+p.Above, n, p.Limits, limits)
	if o.CensoredFits {
		note("least-squares and correlogram figures use the stored numbers (censored values at their limits)")
	} else {
		note("least-squares trend, correlogram and Pettitt skipped for censored values")
	}
	if s.InsufficientData || n < 2 {
		return s
	}
	if 2*(p.Below+p.Above) > n {
		s.NoTrendFlag = true
		note("more than half the readings are censored: no trend is flagged from the test (common practice)")
	}
	if o.PeriodS > 0 {
		season := make([]int, n)
		for i, ti := range t {
			season[i] = SeasonOf(ti, o.PeriodS, o.Seasons)
		}
		sk, err := CensoredSeasonalKendall(y, c, season, o.Seasons)
		if err != nil {
			note("censored seasonal Kendall: %v", err)
		} else {
			s.MKMethod = "censored-seasonal-kendall"
			sv := float64(sk.S)
			s.MKS, s.MKVarS, s.MKZ, s.MKP = &sv, finitePtr(sk.VarS), finitePtr(sk.Z), finitePtr(sk.P)
		}
	} else {
		mk, err := CensoredMannKendall(y, c)
		if err != nil {
			note("censored Mann–Kendall: %v", err)
		} else {
			s.MKMethod = "censored-mann-kendall"
			sv := float64(mk.S)
			s.MKS, s.MKVarS, s.MKZ, s.MKP, s.MKTau = &sv, finitePtr(mk.VarS), finitePtr(mk.Z), finitePtr(mk.P), finitePtr(mk.Tau)
		}
	}
	if n > MaxCensoredSenValues {
		note("Akritas–Theil–Sen slope skipped: %d readings, at most %d", n, MaxCensoredSenValues)
	} else if ats, err := AkritasTheilSen(t, y, c); err != nil {
		note("Akritas–Theil–Sen slope: %v", err)
	} else if !math.IsNaN(ats.Slope) {
		s.SenSlopePerYear = finitePtr(ats.Slope * timefmt.SecondsPerYear)
	}
	return s
}

// censoredCoverage is the coverage part of SummarizeSeries with its minimum
// record rules, without the mean.
func censoredCoverage(t, y []float64, o SummaryOptions) (s SeriesSummary) {
	n := len(t)
	s.N = n
	if n == 0 {
		s.InsufficientData = true
		s.Problem = "no readings in the selected window"
		return s
	}
	s.TFirst, s.TLast = int64(t[0]), int64(t[n-1])
	s.Years = (t[n-1] - t[0]) / timefmt.SecondsPerYear
	if n >= 2 {
		if grid, _, err := Regularize(t, y, 0); err == nil {
			step, slots := grid.Step, grid.NSlots
			share := float64(grid.Missing) / float64(grid.NSlots)
			s.StepS, s.GridSlots, s.MissingShare = &step, &slots, &share
		} else if step, ok := InferStep(t); ok {
			s.StepS = &step
		}
	}
	minN := max(o.MinN, 3)
	switch {
	case n < minN:
		s.InsufficientData = true
		s.Problem = fmt.Sprintf("%d readings, fewer than the minimum record of %d", n, minN)
	case o.PeriodS > 0 && t[n-1]-t[0] < 2*o.PeriodS:
		s.InsufficientData = true
		s.Problem = fmt.Sprintf("record spans %.2f periods; a seasonal summary needs at least 2", (t[n-1]-t[0])/o.PeriodS)
	}
	return s
}
