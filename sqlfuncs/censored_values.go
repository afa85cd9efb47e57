package sqlfuncs

// Censored values reaching functions that do not handle censoring.
//
// readings_view shows a censored reading as reported: TEXT '<' or '>'
// followed by the limit ('<5', '<0.05', '>2000'). The functions that take a
// plain value (trend_fit, sample_acf, correlogram, ljung_box, mann_kendall,
// sen_slope, regr_*, ...) do not handle censoring and never read such a
// value as a number. A series aggregate counts them and, when its value is
// asked for, fails with the count and the censoring-aware alternatives;
// every other function fails on the row. To use a substitute, ask for it
// explicitly, e.g.
//
//	trend_fit(t, CASE WHEN censored = '<' THEN value_number / 2 ELSE value_number END)
//
// (value_number is the stored number: the limit for a censored reading).
// On the readings table itself value is that number; the store refuses user
// statements that hand it to these functions without reading the mark
// (store/censorguard.go), using IgnoresCensoring below.

import (
	"fmt"
	"strconv"
	"strings"

	"trendsql/sqlfuncs/stats"
)

// parseCensoredText reads '<5', '< 5', '>2000': a mark, optional spaces and
// a finite decimal number.
func parseCensoredText(s string) (float64, stats.Censoring, bool) {
	s = strings.TrimSpace(s)
	if s == "" {
		return 0, 0, false
	}
	var c stats.Censoring
	switch s[0] {
	case '<':
		c = stats.BelowLimit
	case '>':
		c = stats.AboveLimit
	default:
		return 0, 0, false
	}
	v, err := strconv.ParseFloat(strings.TrimSpace(s[1:]), 64)
	if err != nil || v != v || v > 1.7976931348623157e308 || v < -1.7976931348623157e308 {
		return 0, 0, false
	}
	return v, c, true
}

// ignoresCensoring names the functions that take a plain value and do not
// handle censoring: they read a number as a measured value.
var ignoresCensoring = map[string]bool{
	"trend_fit": true, "trend_slope": true, "trend_residual": true,
	"sample_acvf": true, "sample_acf": true, "correlogram": true,
	"ljung_box": true, "ljung_box_p": true, "box_pierce": true, "box_pierce_p": true,
	"cross_corr": true, "cross_correlogram": true,
	"mann_kendall": true, "seasonal_kendall": true, "sen_slope": true, "sen_slope_per_year": true,
	"pettitt":    true,
	"regr_slope": true, "regr_intercept": true, "regr_r2": true, "regr_avgx": true, "regr_avgy": true,
	"regr_sxx": true, "regr_syy": true, "regr_sxy": true, "covar_pop": true, "covar_samp": true, "corr": true,
}

// IgnoresCensoring reports whether the SQL function name (any case) is one
// of trendsql's functions that take a plain value and do not handle
// censoring (every value function except the censored_* family).
func IgnoresCensoring(name string) bool { return ignoresCensoring[strings.ToLower(name)] }

const censoredAlternatives = "censored_mann_kendall, censored_seasonal_kendall or censored_sen_slope"

// censoredValueError is argValue's error for a reported censored value.
type censoredValueError struct {
	fn, arg, text string
}

func (e *censoredValueError) Error() string {
	return fmt.Sprintf("%s: argument %s: %q is a censored value and %s does not handle censoring; use %s, or choose a substitute explicitly (e.g. CASE WHEN censored = '<' THEN value_number / 2 ELSE value_number END)",
		e.fn, e.arg, e.text, e.fn, censoredAlternatives)
}

// censoredRowsError is a series aggregate's error when some of its rows
// were censored values.
func censoredRowsError(fn string, censored, total int, example string) error {
	return fmt.Errorf("%s: %d of %d values are censored (e.g. %q); %s does not handle censoring: use %s, or choose a substitute explicitly (e.g. CASE WHEN censored = '<' THEN value_number / 2 ELSE value_number END)",
		fn, censored, total, example, fn, censoredAlternatives)
}
