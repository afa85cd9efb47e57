package sqlfuncs

// JSON rendering shared by every function with a JSON result: keys in the
// documented insertion order, NaN and infinities written as null, whole
// numbers below 1e15 written without exponent (so unix times read as
// 1700000000, not 1.7e+09), other numbers in Go's shortest form.

import (
	"math"
	"strconv"
	"strings"

	"trendsql/sqlfuncs/timefmt"
)

// jsonObj writes a JSON object with keys in insertion order.
type jsonObj struct {
	b strings.Builder
}

func (o *jsonObj) key(k string) {
	if o.b.Len() == 0 {
		o.b.WriteByte('{')
	} else {
		o.b.WriteByte(',')
	}
	o.b.WriteString(strconv.Quote(k))
	o.b.WriteByte(':')
}

// jsonNum renders one number (null for NaN and infinities).
func jsonNum(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "null"
	}
	if v == math.Trunc(v) && math.Abs(v) < 1e15 {
		return strconv.FormatInt(int64(v), 10)
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

func (o *jsonObj) num(k string, v float64) { o.key(k); o.b.WriteString(jsonNum(v)) }
func (o *jsonObj) int(k string, v int64)   { o.key(k); o.b.WriteString(strconv.FormatInt(v, 10)) }
func (o *jsonObj) str(k, v string)         { o.key(k); o.b.WriteString(strconv.Quote(v)) }
func (o *jsonObj) raw(k, v string)         { o.key(k); o.b.WriteString(v) }

func (o *jsonObj) nums(k string, v []float64) {
	o.key(k)
	o.b.WriteByte('[')
	for i, x := range v {
		if i > 0 {
			o.b.WriteByte(',')
		}
		o.b.WriteString(jsonNum(x))
	}
	o.b.WriteByte(']')
}

func (o *jsonObj) strs(k string, v []string) {
	o.key(k)
	o.b.WriteByte('[')
	for i, x := range v {
		if i > 0 {
			o.b.WriteByte(',')
		}
		o.b.WriteString(strconv.Quote(x))
	}
	o.b.WriteByte(']')
}

// String closes the object; an object with no keys is {}.
func (o *jsonObj) String() string {
	if o.b.Len() == 0 {
		return "{}"
	}
	return o.b.String() + "}"
}

// isoTime renders unix seconds as ISO 8601 UTC, keeping a fractional part
// (to the microsecond) when t is not whole: 2021-03-28T01:30:00.25Z.
func isoTime(t float64) string {
	if t == math.Trunc(t) {
		return timefmt.FormatUTC(int64(t))
	}
	sec := math.Floor(t)
	s := timefmt.FormatUTC(int64(sec))
	frac := strconv.FormatFloat(t-sec, 'f', 6, 64) // "0.xxxxxx"
	frac = strings.TrimRight(frac, "0")
	return strings.TrimSuffix(s, "Z") + frac[1:] + "Z"
}
