package sqlfuncs

// Non-finite results. One rule holds for every scalar, aggregate and window
// function: a result is NULL, text, an integer or a finite REAL, never an
// infinity or NaN. A value the function defines as undefined (too few rows,
// a zero variance, ...) is NULL, as documented at each function; inside a
// JSON result such a value is null. A result that would be infinite — the
// answer, or a number inside a JSON result, lies beyond ±1.8e308, the range
// of floating-point numbers, e.g. a slope per year of values near 1e308
// read one second apart — is an SQL error wrapping ErrNotFinite that names
// the function and, for JSON, the field:
//
//	trend_slope: result is not a finite number: it (or a value it is computed from) lies beyond ±1.8e308, the range of floating-point numbers
//
// The statistics scale values before squaring where that keeps a finite
// answer finite (package stats); the regression aggregates (regr_*,
// covar_*, corr) keep running sums of squares and so fail with this error
// once squares of the data's deviations overflow (deviations beyond about
// 1.3e154).

import (
	"database/sql/driver"
	"errors"
	"fmt"
	"math"
	"strings"
)

// ErrNotFinite is wrapped by the error of a function whose result would be
// an infinity or NaN.
var ErrNotFinite = errors.New("lies beyond ±1.8e308, the range of floating-point numbers")

// infMark stands for an infinite number in a JSON result while it is being
// built. It cannot occur otherwise (texts are written quoted, with control
// characters escaped), and checkResult turns a result holding it into an
// error, so it never reaches SQL.
const infMark = "\x00inf"

// checkResult passes a function's result on unless it is not finite (see
// the rule above); err is the function's own error, returned as is.
func checkResult(fn string, v driver.Value, err error) (driver.Value, error) {
	if err != nil {
		return v, err
	}
	switch x := v.(type) {
	case float64:
		if math.IsInf(x, 0) || math.IsNaN(x) {
			return nil, fmt.Errorf("%s: result is not a finite number: it (or a value it is computed from) %w", fn, ErrNotFinite)
		}
	case string:
		if i := strings.IndexByte(x, 0); i >= 0 {
			return nil, fmt.Errorf("%s: %s of the JSON result is not a finite number: it (or a value it is computed from) %w", fn, jsonFieldBefore(x, i), ErrNotFinite)
		}
	}
	return v, nil
}

// jsonFieldBefore names the field of a JSON text whose value holds byte i:
// "slope_per_year", or "the value" when no key precedes it.
func jsonFieldBefore(s string, i int) string {
	j := strings.LastIndex(s[:i], `":`)
	if j < 0 {
		return "a value"
	}
	k := strings.LastIndexByte(s[:j], '"')
	if k < 0 {
		return "a value"
	}
	return fmt.Sprintf("field %q", s[k+1:j])
}
