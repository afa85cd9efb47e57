package stats

// SummaryOptions selects the models of a per-series summary.
type SummaryOptions struct {
	PeriodS    float64 // seasonal period in seconds; 0 = no seasonal model
	Harmonics  int     // sine/cosine pairs when PeriodS > 0
	Seasons    int     // seasons per period for the seasonal Kendall test
	MaxLag     int     // residual correlogram lags 1..MaxLag
	LBLags     int     // Ljung–Box lag on the residuals; 0 = default rule
	Alpha      float64 // significance level for the flags (e.g. 0.05)
	Confidence float64 // Sen slope interval confidence (e.g. 0.95)
	MinN       int     // minimum readings for a summary (insufficient_data below)
	// CensoredFits asks for the least-squares and correlogram figures of
	// series with censored readings too (computed on the stored numbers,
	// i.e. censored values at their limits); they are skipped otherwise.
	CensoredFits bool
}

// CorrelogramRow is one lag of a stored residual correlogram.
type CorrelogramRow struct {
	Lag        int
	ACVF, ACF  float64
	PACF       float64
	Band       float64
	LBQ, LBP   float64
	HasPACF    bool
	HasLjungBx bool
}

// SeriesSummary is every figure `trendsql summarize` stores for one series.
// Pointer fields are nil when the figure is undefined for the series (too
// short, constant, ...); they are stored as SQL NULL.
type SeriesSummary struct {
	Problem string

	N              int
	TFirst, TLast  int64
	Years          float64
	StepS          *float64
	GridSlots      *int
	MissingShare   *float64
	NQualified     int
	QualifierCount map[string]int
	Mean           *float64

	TrendModel   *TrendModel // the fitted trend model; nil when the fit failed
	SlopePerYear *float64
	SlopeSE      *float64
	SlopeP       *float64
	HACSlopeSE   *float64
	HACLags      *int
	HACP         *float64
	NEff         *float64
	NEffP        *float64
	R2           *float64
	PctPerDecade *float64

	MKMethod           string
	MKS, MKVarS        *float64
	MKZ, MKP, MKTau    *float64
	MKCorrectionFactor *float64
	SenSlopePerYear    *float64
	SenLower, SenUpper *float64
	SenConfidence      float64
	// SenIntervalBasis names the variance the Sen interval was computed
	// from — the one of the stored test: "mann-kendall", "hamed-rao",
	// "seasonal-kendall" or "hirsch-slack" — and SenVarS is its value;
	// empty and nil without an interval.
	SenIntervalBasis string
	SenVarS          *float64

	ResidACF1   *float64
	ACFBasis    string // "time-grid" or "reading-order"
	LBLags      *int
	LBDF        *int
	LBQ, LBP    *float64
	Correlogram []CorrelogramRow

	PettittK       *int
	PettittTChange *int64
	PettittU       *float64
	PettittP       *float64

	InsufficientData    bool
	ResidualDependence  *bool
	StepChangeSuspected *bool

	// Censoring (SummarizeCensoredSeries); nil for a series without
	// censored readings.
	CensoredShare   *float64
	CensoringLimits *int
	HighestLimit    *float64
	// NoTrendFlag: more than half the values are censored; the run sets
	// no trend_detected flag from the test.
	NoTrendFlag bool
}
