package sqlfuncs

// JSON rendering shared by every function with a JSON result: keys in the
// documented insertion order, NaN (an undefined statistic) written as null,
// an infinity written as infMark (so that checkResult turns the whole result
// into an error: see finite.go), whole
// numbers below 1e15 written without exponent (so unix times read as
// 1700000000, not 1.7e+09), other numbers in Go's shortest form.

import (
	"math"
	"strconv"
	"strings"

	"trendsql/sqlfuncs/timefmt"
)

// jsonObj writes a JSON object with keys in insertion order. Numbers and
// keys are appended to one byte buffer (no string per number), since a
// correlogram result holds hundreds of them per group.
type jsonObj struct {
	b []byte
}

func (o *jsonObj) key(k string) {
	if len(o.b) == 0 {
		o.b = append(o.b, '{')
	} else {
		o.b = append(o.b, ',')
	}
	o.b = appendJSONKey(o.b, k)
	o.b = append(o.b, ':')
}

// appendJSONKey appends k as a JSON string: keys are plain ASCII names, so
// they are copied between quotes; anything else goes through strconv.
func appendJSONKey(b []byte, k string) []byte {
	for i := 0; i < len(k); i++ {
		if c := k[i]; c < 0x20 || c >= 0x7f || c == '"' || c == '\\' {
			return strconv.AppendQuote(b, k)
		}
	}
	b = append(b, '"')
	b = append(b, k...)
	return append(b, '"')
}

// jsonNum renders one number (null for NaN, infMark for an infinity).
func jsonNum(v float64) string { return string(appendJSONNum(nil, v)) }

// appendJSONNum appends the rendering of jsonNum to b.
func appendJSONNum(b []byte, v float64) []byte {
	if math.IsNaN(v) {
		return append(b, "null"...)
	}
	if math.IsInf(v, 0) {
		return append(b, infMark...)
	}
	if v == math.Trunc(v) && math.Abs(v) < 1e15 {
		return strconv.AppendInt(b, int64(v), 10)
	}
	return strconv.AppendFloat(b, v, 'g', -1, 64)
}

func (o *jsonObj) num(k string, v float64) { o.key(k); o.b = appendJSONNum(o.b, v) }
func (o *jsonObj) int(k string, v int64)   { o.key(k); o.b = strconv.AppendInt(o.b, v, 10) }
func (o *jsonObj) str(k, v string)         { o.key(k); o.b = strconv.AppendQuote(o.b, v) }
func (o *jsonObj) raw(k, v string)         { o.key(k); o.b = append(o.b, v...) }

func (o *jsonObj) nums(k string, v []float64) {
	o.array(k, len(v), func(b []byte, i int) []byte { return appendJSONNum(b, v[i]) })
}

func (o *jsonObj) strs(k string, v []string) {
	o.array(k, len(v), func(b []byte, i int) []byte { return strconv.AppendQuote(b, v[i]) })
}

// array writes the key and a JSON array of n items rendered by item.
func (o *jsonObj) array(k string, n int, item func(b []byte, i int) []byte) {
	o.key(k)
	o.b = append(o.b, '[')
	for i := 0; i < n; i++ {
		if i > 0 {
			o.b = append(o.b, ',')
		}
		o.b = item(o.b, i)
	}
	o.b = append(o.b, ']')
}

// String closes the object; an object with no keys is {}.
func (o *jsonObj) String() string {
	if len(o.b) == 0 {
		return "{}"
	}
	return string(append(o.b, '}'))
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
