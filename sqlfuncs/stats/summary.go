package stats

// SummarizeSeries computes every figure `trendsql summarize` stores for one
// series, with the same numerical core and the same conventions as the SQL
// functions, so each stored figure equals what the corresponding function
// returns on the same rows:
//
//	trend_model, slope_*, hac_*, n_eff*, r2 = trend_fit(t, y, 'period=P,harmonics=K')
//	                                          (or 'degree=1' when PeriodS = 0)
//	mk_* (no period)      = mann_kendall(t, y, 'correct=hamed-rao'): the
//	                        corrected var_s, z and p are stored when the
//	                        correction_factor is ≥ 1, else the uncorrected
//	                        var_s, z and p (the factor is stored either way).
//	                        A factor below 1 comes from negative rank
//	                        autocorrelations, often chance ones at long lags,
//	                        and can shrink p by many orders of magnitude;
//	                        the summary uses the correction only
//	                        to guard against positive serial dependence and
//	                        never lets it make the test more liberal than the
//	                        test for independent values.
//	mk_* (with period)    = seasonal_kendall(tb, yb, P, seasons) over the
//	                        season blocks (see SeasonBlocks): mk_s is s;
//	                        mk_var_s, mk_z, mk_p are var_s_dependent,
//	                        z_dependent, p_dependent (the Hirsch & Slack 1984
//	                        between-season covariance correction; blocks hold
//	                        one value per season and cycle, so it applies),
//	                        or var_s, z, p where it is undefined
//	sen_* (no period)     = sen_slope(t, y, confidence, 'variance=hamed-rao')
//	                        when the stored mk_* are the corrected ones, else
//	                        sen_slope(t, y, confidence): the interval is
//	                        computed from the variance of the test stored
//	                        beside it, so "mk_p ≤ α" and "the interval
//	                        excludes 0" agree up to the discreteness stated
//	                        at SenSlope; sen_interval_basis names it
//	                        ('hamed-rao' or 'mann-kendall') and sen_var_s
//	                        holds it
//	sen_* (with period)   = the seasonal Sen slope of that seasonal_kendall,
//	                        its interval at o.Confidence from the variance of
//	                        the stored test: lower_dependent/upper_dependent
//	                        (sen_interval_basis 'hirsch-slack') or
//	                        lower/upper ('seasonal-kendall'); seasonal_kendall
//	                        reports 95 % intervals, so the two agree at the
//	                        default 0.95
//	lb_*, series_correlograms
//	                      = ljung_box / correlogram of the residuals
//	                        y − trend_value(model, t) on the inferred time grid
//	                        (both from one autocovariance pass up to
//	                        max(max_lag, lb_lags); with max_lag ≥ 96 that
//	                        pass uses the FFT, which agrees with the direct
//	                        sums of a short ljung_box call to about 1e-9)
//	pettitt_* (no period) = pettitt(t, y)
//	pettitt_* (period)    = pettitt over the season-block anomalies
//	                        (see seasonAnomalies)
//
// Irregular times. When the readings do not sit on a regular grid (e.g.
// manual readings at irregular dates), the residual correlogram and
// Ljung–Box test are computed on the residuals in reading order (lags count
// readings, not time; acf_basis = 'reading-order'), which equals the SQL
// functions called with t replaced by the reading's rank.
//
// Defaults. The Ljung–Box lag is min(10, n/5) (at least 1) unless given:
// common practice for non-seasonal residuals (recalled from memory: the
// h = 10 and h ≤ T/5 rule of thumb of Hyndman & Athanasopoulos, "Forecasting:
// Principles and Practice"). Degrees of freedom = lags: fitdf counts
// estimated ARMA coefficients (Ljung & Box 1978), and the deterministic
// trend regression has none. The minimum record (o.MinN; 10 by default in
// `trendsql summarize`) follows the common rule that the normal
// approximation of the Mann–Kendall S is adequate from about n = 10
// (recalled from memory: Gilbert 1987, "Statistical Methods for
// Environmental Pollution Monitoring", §16.4); with a seasonal period the
// record must also span at least two periods.
//
// Flags: residual_dependence = lb_p < alpha; step_change_suspected =
// pettitt_p < alpha (a gradual trend also makes the Pettitt p small: read it
// together with the trend figures); trend_detected is set by the run from
// the Benjamini–Hochberg adjusted mk_p (AdjustBH, applied by store/summaries).

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"trendsql/sqlfuncs/timefmt"
)

// SummarizeSeries analyses one series sorted by t with distinct t.
func SummarizeSeries(t, y []float64, o SummaryOptions) (s SeriesSummary) {
	n := len(t)
	s.N = n
	s.SenConfidence = o.Confidence
	if n == 0 {
		s.InsufficientData = true
		s.Problem = "no readings in the selected window"
		return s
	}
	s.TFirst, s.TLast = int64(t[0]), int64(t[n-1])
	s.Years = (t[n-1] - t[0]) / timefmt.SecondsPerYear
	mean := 0.0
	for i, v := range y {
		mean += (v - mean) / float64(i+1)
	}
	s.Mean = &mean
	var problems []string
	note := func(format string, a ...any) { problems = append(problems, fmt.Sprintf(format, a...)) }
	defer func() {
		if len(problems) > 0 {
			s.Problem = joinProblems(problems)
		}
	}()

	// Coverage on the inferred grid.
	grid, _, gridErr := Regularize(t, y, 0)
	if gridErr == nil && n >= 2 {
		step := grid.Step
		slots := grid.NSlots
		share := float64(grid.Missing) / float64(grid.NSlots)
		s.StepS, s.GridSlots, s.MissingShare = &step, &slots, &share
	} else if n >= 2 {
		if step, ok := InferStep(t); ok {
			s.StepS = &step
		}
	}

	minN := o.MinN
	if minN < 3 {
		minN = 3
	}
	if n < minN {
		s.InsufficientData = true
		note("%d readings, fewer than the minimum record of %d", n, minN)
		return s
	}
	if o.PeriodS > 0 && t[n-1]-t[0] < 2*o.PeriodS {
		s.InsufficientData = true
		note("record spans %.2f periods; a seasonal summary needs at least 2", (t[n-1]-t[0])/o.PeriodS)
		return s
	}

	// Least-squares trend with the seasonal model.
	spec := TrendSpec{Degree: 1, HACLags: -1}
	if o.PeriodS > 0 {
		spec.Period, spec.Harmonics = o.PeriodS, o.Harmonics
	}
	model, err := FitTrend(t, y, spec)
	if err != nil || model == nil {
		note("trend fit: %v", err)
	} else {
		s.TrendModel = model
		s.SlopePerYear = finitePtr(model.SlopePerYear)
		s.SlopeSE = finitePtr(model.SlopeSE)
		s.SlopeP = finitePtr(model.SlopeP)
		s.HACSlopeSE = finitePtr(model.HACSlopeSE)
		lags := model.HACLags
		s.HACLags = &lags
		s.HACP = finitePtr(model.HACP)
		s.NEff = finitePtr(model.NEff)
		s.NEffP = finitePtr(model.NEffP)
		s.R2 = finitePtr(model.R2)
		s.ResidACF1 = finitePtr(model.ResidACF1)
		if mean != 0 && !math.IsNaN(model.SlopePerYear) {
			s.PctPerDecade = finitePtr(10 * model.SlopePerYear / math.Abs(mean) * 100)
		}
		residualDiagnostics(&s, t, y, model, grid, gridErr, o, note)
	}

	// Season blocks, shared by the seasonal rank test and Pettitt.
	var bt, by []float64
	var season []int
	if o.PeriodS > 0 {
		bt, by, season = SeasonBlocks(t, y, o.PeriodS, o.Seasons)
	}

	// Rank-based trend test and Sen slope.
	if o.PeriodS > 0 {
		sk, err := SeasonalKendall(bt, by, season, o.Seasons, o.Confidence)
		if err != nil {
			note("seasonal Kendall: %v", err)
		} else {
			sv := float64(sk.S)
			s.MKS = &sv
			cycle := make([]int, len(bt))
			for i, ti := range bt {
				cycle[i] = int(math.Floor(ti / o.PeriodS))
			}
			dep, derr := SeasonalDependent(by, season, cycle, o.Seasons, sk.S)
			if derr == nil && !math.IsNaN(dep.P) {
				s.MKMethod = "seasonal-kendall/block-means/hirsch-slack"
				s.MKVarS, s.MKZ, s.MKP = finitePtr(dep.VarS), finitePtr(dep.Z), finitePtr(dep.P)
			} else {
				s.MKMethod = "seasonal-kendall/block-means"
				s.MKVarS, s.MKZ, s.MKP = finitePtr(sk.VarS), finitePtr(sk.Z), finitePtr(sk.P)
				if derr != nil {
					note("between-season covariance not applied: %v", derr)
				}
			}
			if sk.Pairs > 0 {
				// The interval pairs with the stored test's variance.
				sen, basis, varTest := sk.Sen, "seasonal-kendall", sk.VarS
				if s.MKMethod == "seasonal-kendall/block-means/hirsch-slack" {
					basis, varTest = "hirsch-slack", dep.VarS
					if sen, err = sk.SenWithVar(o.Confidence, dep.VarS); err != nil {
						note("seasonal Sen interval: %v", err)
					}
				}
				s.SenSlopePerYear = finitePtr(sen.Slope * timefmt.SecondsPerYear)
				s.SenLower = finitePtr(sen.Lower * timefmt.SecondsPerYear)
				s.SenUpper = finitePtr(sen.Upper * timefmt.SecondsPerYear)
				if s.SenLower != nil {
					s.SenIntervalBasis, s.SenVarS = basis, finitePtr(varTest)
				}
			}
		}
	} else {
		// The Sen median serves the Hamed–Rao detrending; the interval is
		// then selected with the variance of the test that is stored.
		mk, mkErr := MannKendall(y)
		var med SenResult
		sess, senErr := newSenSession(t, y)
		if senErr == nil {
			defer sess.close()
			med = sess.median()
		}
		varTest, basis := math.NaN(), ""
		if mkErr != nil {
			note("Mann–Kendall: %v", mkErr)
		} else {
			s.MKMethod = "mann-kendall/hamed-rao"
			sv := float64(mk.S)
			s.MKS, s.MKTau = &sv, finitePtr(mk.Tau)
			varTest, basis = mk.VarS, "mann-kendall"
			// If the median failed, so would the correction's own.
			hr, err := HamedRaoResult{}, senErr
			if senErr == nil {
				hr, err = HamedRaoWith(t, y, mk, HamedRaoOptions{}, &med)
			}
			if err != nil {
				note("Hamed–Rao correction: %v", err)
			} else {
				s.MKCorrectionFactor = finitePtr(hr.Factor)
				if hr.Undefined != "" {
					note("Hamed–Rao correction undefined (%s); test and Sen interval use the uncorrected variance", hr.Undefined)
				}
				if hr.Factor >= 1 {
					s.MKVarS, s.MKZ, s.MKP = finitePtr(hr.VarS), finitePtr(hr.Z), finitePtr(hr.P)
					varTest, basis = hr.VarS, "hamed-rao"
				} else {
					// Never more liberal than the uncorrected test.
					s.MKVarS, s.MKZ, s.MKP = finitePtr(mk.VarS), finitePtr(mk.Z), finitePtr(mk.P)
				}
			}
		}
		if senErr != nil {
			note("Sen slope: %v", senErr)
		} else {
			s.SenSlopePerYear = finitePtr(med.Slope * timefmt.SecondsPerYear)
			if varTest >= 0 {
				sen, err := sess.withInterval(o.Confidence, varTest)
				if err != nil {
					note("Sen interval: %v", err)
				} else {
					s.SenLower = finitePtr(sen.Lower * timefmt.SecondsPerYear)
					s.SenUpper = finitePtr(sen.Upper * timefmt.SecondsPerYear)
					s.SenIntervalBasis, s.SenVarS = basis, finitePtr(varTest)
				}
			}
		}
	}

	// Single change point.
	py, pettittTimes := y, t
	if o.PeriodS > 0 {
		py, pettittTimes = seasonAnomalies(by, season, o.Seasons), bt
	}
	if pt, err := Pettitt(py); err != nil {
		note("Pettitt: %v", err)
	} else {
		k := pt.K
		tc := int64(t[pt.K-1])
		if o.PeriodS > 0 {
			tc = int64(pettittTimes[pt.K-1])
		}
		s.PettittK, s.PettittTChange = &k, &tc
		s.PettittU, s.PettittP = finitePtr(pt.U), finitePtr(pt.P)
		if !math.IsNaN(pt.P) {
			b := pt.P < o.Alpha
			s.StepChangeSuspected = &b
		}
	}
	return s
}

// residualDiagnostics fills the residual correlogram and Ljung–Box test.
func residualDiagnostics(s *SeriesSummary, t, y []float64, model *TrendModel, grid Grid, gridErr error, o SummaryOptions, note func(string, ...any)) {
	n := len(t)
	resid := make([]float64, n)
	for i := range t {
		resid[i] = y[i] - model.Value(t[i])
	}
	var x []float64
	if gridErr == nil {
		s.ACFBasis = "time-grid"
		x = grid.Fill(resid)
	} else {
		s.ACFBasis = "reading-order"
		x = resid
		// The grid error's suggestions name the SQL functions' step=
		// option, which summarize does not have: only the diagnosis.
		why := gridErr.Error()
		var ge *GridError
		if errors.As(gridErr, &ge) {
			why = ge.Diagnosis()
		}
		note("times do not fit a regular grid (%s); residual ACF uses lags in readings", why)
	}
	lb := o.LBLags
	if lb <= 0 {
		lb = n / 5
		if lb > 10 {
			lb = 10
		}
		if lb < 1 {
			lb = 1
		}
	}
	s.LBLags = &lb
	// One pass of sample autocovariances serves both the stored correlogram
	// (lags 1..MaxLag) and the Ljung–Box test at lag lb: the cumulative Q of
	// the correlogram at lag lb is Ljung–Box over lags 1..lb with df = lb.
	c := ComputeCorrelogram(x, max(o.MaxLag, lb), 0)
	if lb <= len(c.Lags) && !math.IsNaN(c.Lags[lb-1].LBQ) {
		l := c.Lags[lb-1]
		df := lb
		s.LBDF, s.LBQ, s.LBP = &df, finitePtr(l.LBQ), finitePtr(l.LBP)
		if !math.IsNaN(l.LBP) {
			b := l.LBP < o.Alpha
			s.ResidualDependence = &b
		}
	} else {
		note("Ljung–Box at lag %d is undefined for these residuals", lb)
	}
	if st := c.PACFStop; st.Lag > 0 && st.Lag <= o.MaxLag {
		note("residual PACF is NULL from lag %d: %s", st.Lag, st.Reason)
	}
	for _, l := range c.Lags {
		if l.Lag > o.MaxLag {
			break
		}
		s.Correlogram = append(s.Correlogram, CorrelogramRow{
			Lag: l.Lag, ACVF: l.ACVF, ACF: l.ACF, PACF: l.PACF, Band: l.Band,
			LBQ: l.LBQ, LBP: l.LBP, HasPACF: true, HasLjungBx: true,
		})
	}
}

// SeasonBlocks reduces a series to one value per season and cycle: for
// cycle c = floor(t/P) and season g = SeasonOf(t, P, m) it returns the
// mean time and mean value of the readings in (c, g), in time order, with
// the season of each block. The seasonal Kendall test assumes one value per
// season and year (Hirsch, Slack & Smith 1982); applying it to every hourly
// or daily reading would treat strongly autocorrelated neighbours as
// independent and overstate significance, so summaries test block means.
// The same figures come from SQL with
//
//	SELECT seasonal_kendall(tb, yb, P, m) FROM (
//	  SELECT avg(t) AS tb, avg(value) AS yb FROM readings
//	  WHERE series_id = ? GROUP BY t / P_s, ((t % P_s) * m) / P_s)
//
// where P_s is P in whole seconds (31557600 for 1y) and t is an integer.
func SeasonBlocks(t, y []float64, period float64, seasons int) (bt, by []float64, season []int) {
	type key struct {
		c int64
		g int
	}
	idx := map[key]int{}
	var st, sy []float64
	var cnt []int
	for i, ti := range t {
		k := key{int64(math.Floor(ti / period)), SeasonOf(ti, period, seasons)}
		j, ok := idx[k]
		if !ok {
			j = len(st)
			idx[k] = j
			st, sy, cnt = append(st, 0), append(sy, 0), append(cnt, 0)
			season = append(season, k.g)
		}
		cnt[j]++
		st[j] += (ti - st[j]) / float64(cnt[j])
		sy[j] += (y[i] - sy[j]) / float64(cnt[j])
	}
	// Blocks were created in time order of their first reading; since blocks
	// are contiguous time intervals, their mean times are increasing too.
	return st, sy, season
}

// seasonAnomalies returns the season blocks' mean values (by, with their
// seasons, from SeasonBlocks) minus the mean of all blocks of the same
// season: the series the
// Pettitt test sees when a seasonal period is given. Like the seasonal
// Kendall test on block means, this keeps the seasonal cycle and hourly
// autocorrelation from posing as a change point. pettitt_t_change is then
// the mean time of the last block before the change.
func seasonAnomalies(by []float64, season []int, seasons int) (anom []float64) {
	sum := make([]float64, seasons)
	cnt := make([]int, seasons)
	for i, g := range season {
		sum[g] += by[i]
		cnt[g]++
	}
	anom = make([]float64, len(by))
	for i, g := range season {
		anom[i] = by[i] - sum[g]/float64(cnt[g])
	}
	return anom
}

// finitePtr returns a pointer to v, or nil when v is NaN or infinite (a
// NULL in the stored summary).
func finitePtr(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

func joinProblems(p []string) string {
	sort.Strings(p)
	out := p[0]
	for _, x := range p[1:] {
		out += "; " + x
	}
	return out
}
