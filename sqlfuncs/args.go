package sqlfuncs

// Argument conversion shared by every function.
//
// Time arguments: INTEGER or REAL unix seconds (UTC), or TEXT in any form
// timefmt.ParseTime accepts (zone-less text is read as UTC). NULL, NaN,
// infinite or unparsable times are errors naming the function and value.
//
// Value arguments: INTEGER or REAL; TEXT only if it is a decimal number in
// full. NULL marks a missing observation and is skipped by aggregates.
// SQLite itself turns a NaN produced by an expression (e.g. 0.0/0.0) into
// NULL before any function sees it, so such a value is skipped as missing.
// A NaN or infinite REAL that does reach a function (e.g. 9e999) is an error.

import (
	"database/sql/driver"
	"errors"
	"fmt"
	"math"
	"runtime/debug"
	"strconv"
	"strings"
	"time"

	"trendsql/sqlfuncs/timefmt"
)

// recoverInto turns a panic inside a SQL callback into an error naming the
// function, so that no panic ever escapes into the driver.
func recoverInto(fn string, err *error) {
	if r := recover(); r != nil {
		*err = fmt.Errorf("%s: internal error: %v (please report; stack: %s)", fn, r, firstFrames(debug.Stack()))
	}
}

func firstFrames(stack []byte) string {
	lines := strings.Split(string(stack), "\n")
	if len(lines) > 12 {
		lines = lines[:12]
	}
	return strings.Join(lines, " | ")
}

// describe renders a SQL value for an error message.
func describe(v driver.Value) string {
	switch x := v.(type) {
	case nil:
		return "NULL"
	case string:
		if len(x) > 40 {
			x = x[:40] + "..."
		}
		return strconv.Quote(x)
	case []byte:
		return fmt.Sprintf("a BLOB of %d bytes", len(x))
	default:
		return fmt.Sprint(x)
	}
}

// argTime converts a time argument to unix seconds.
func argTime(fn, arg string, v driver.Value) (float64, error) {
	switch x := v.(type) {
	case int64:
		return float64(x), nil
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return 0, fmt.Errorf("%s: argument %s is %v; a time must be finite", fn, arg, x)
		}
		return x, nil
	case string:
		t, err := timefmt.ParseTime(x, time.UTC)
		if err != nil {
			return 0, fmt.Errorf("%s: argument %s: %v", fn, arg, err)
		}
		return float64(t), nil
	case time.Time:
		return float64(x.Unix()) + float64(x.Nanosecond())/1e9, nil
	case nil:
		return 0, fmt.Errorf("%s: argument %s is NULL; every row needs a time", fn, arg)
	default:
		return 0, fmt.Errorf("%s: argument %s: %s is not a time", fn, arg, describe(v))
	}
}

// argValue converts a value argument. ok is false for NULL (missing).
func argValue(fn, arg string, v driver.Value) (val float64, ok bool, err error) {
	switch x := v.(type) {
	case nil:
		return 0, false, nil
	case int64:
		return float64(x), true, nil
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return 0, false, fmt.Errorf("%s: argument %s is %v; values must be finite (use NULL for missing)", fn, arg, x)
		}
		return x, true, nil
	case string:
		f, perr := strconv.ParseFloat(strings.TrimSpace(x), 64)
		if perr != nil {
			if _, _, cens := parseCensoredText(x); cens {
				return 0, false, &censoredValueError{fn: fn, arg: arg, text: strings.TrimSpace(x)}
			}
			return 0, false, fmt.Errorf("%s: argument %s: %s is not a number", fn, arg, describe(v))
		}
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return 0, false, fmt.Errorf("%s: argument %s is %s; values must be finite (use NULL for missing)", fn, arg, describe(v))
		}
		return f, true, nil
	default:
		return 0, false, fmt.Errorf("%s: argument %s: %s is not a number", fn, arg, describe(v))
	}
}

// argInt converts an integer option argument (e.g. a lag) and checks bounds.
func argInt(fn, arg string, v driver.Value, min, max int64) (int64, error) {
	var n int64
	switch x := v.(type) {
	case int64:
		n = x
	case float64:
		if x != math.Trunc(x) || math.IsInf(x, 0) || math.IsNaN(x) {
			return 0, fmt.Errorf("%s: argument %s must be a whole number, got %v", fn, arg, x)
		}
		// Compared as a float: int64(x) of a value beyond the int64
		// range is undefined (it gives math.MinInt64 on amd64).
		if x < float64(min) || x > float64(max) {
			return 0, fmt.Errorf("%s: argument %s = %v is out of range [%d, %d]", fn, arg, x, min, max)
		}
		n = int64(x)
	case string:
		p, err := strconv.ParseInt(strings.TrimSpace(x), 10, 64)
		if errors.Is(err, strconv.ErrRange) {
			return 0, fmt.Errorf("%s: argument %s = %s is out of range [%d, %d]", fn, arg, describe(v), min, max)
		}
		if err != nil {
			return 0, fmt.Errorf("%s: argument %s must be a whole number, got %s", fn, arg, describe(v))
		}
		n = p
	default:
		return 0, fmt.Errorf("%s: argument %s must be a whole number, got %s", fn, arg, describe(v))
	}
	if n < min || n > max {
		return 0, fmt.Errorf("%s: argument %s = %d is out of range [%d, %d]", fn, arg, n, min, max)
	}
	return n, nil
}

// argText converts a text option argument; NULL gives "".
func argText(fn, arg string, v driver.Value) (string, error) {
	switch x := v.(type) {
	case nil:
		return "", nil
	case string:
		return x, nil
	case []byte:
		return string(x), nil
	default:
		return "", fmt.Errorf("%s: argument %s must be text, got %s", fn, arg, describe(v))
	}
}

// parseSpec splits "key=value, key=value" into a map, rejecting keys not in
// allowed and repeated keys.
func parseSpec(fn, spec string, allowed ...string) (map[string]string, error) {
	out := map[string]string{}
	spec = strings.TrimSpace(spec)
	if spec == "" {
		return out, nil
	}
	for _, part := range strings.Split(spec, ",") {
		part = strings.TrimSpace(part)
		if part == "" {
			continue
		}
		k, v, ok := strings.Cut(part, "=")
		k, v = strings.TrimSpace(strings.ToLower(k)), strings.TrimSpace(v)
		if !ok || k == "" || v == "" {
			return nil, fmt.Errorf("%s: option %q: want key=value", fn, part)
		}
		known := false
		for _, a := range allowed {
			known = known || a == k
		}
		if !known {
			return nil, fmt.Errorf("%s: unknown option %q (known: %s)", fn, k, strings.Join(allowed, ", "))
		}
		if _, dup := out[k]; dup {
			return nil, fmt.Errorf("%s: option %q given twice", fn, k)
		}
		out[k] = v
	}
	return out, nil
}
