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
