package csvimport

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// parseValue parses a reading value. It returns a reject reason when the
// text is not a finite decimal number, or is a non-zero number too small
// for float64 (it would be stored as 0).
func parseValue(raw string, decimalComma bool) (float64, string) {
	s := strings.TrimSpace(raw)
	if s == "" {
		return 0, "empty value"
	}
	switch strings.ToLower(s) {
	case "na", "n/a":
		return 0, fmt.Sprintf("value %q is a missing-value marker", s)
	case "nan", "+nan", "-nan":
		return 0, fmt.Sprintf("value %q is not a number (NaN)", s)
	case "inf", "+inf", "-inf", "infinity", "+infinity", "-infinity":
		return 0, fmt.Sprintf("value %q is infinite", s)
	}
	num := s
	if decimalComma {
		if strings.IndexByte(s, '.') >= 0 {
			return 0, fmt.Sprintf("value %q has a point, but decimal comma is set (thousands separators are not accepted)", s)
		}
		num = strings.Replace(s, ",", ".", 1)
	}
	if !isDecimal(num) {
		if !decimalComma && strings.Count(s, ",") == 1 && isDecimal(strings.Replace(s, ",", ".", 1)) {
			return 0, fmt.Sprintf("value %q is not a number (a decimal comma? use the decimal comma option)", s)
		}
		return 0, fmt.Sprintf("value %q is not a number", s)
	}
	v, err := strconv.ParseFloat(num, 64)
	if err != nil || math.IsInf(v, 0) {
		return 0, fmt.Sprintf("value %q is out of range (would be infinite)", s)
	}
	if v == 0 && strings.ContainsAny(strings.SplitN(strings.ToLower(num), "e", 2)[0], "123456789") {
		return 0, fmt.Sprintf("value %q is out of range (too small: it would be stored as 0)", s)
	}
	return v, ""
}

// isDecimal accepts [+-]digits[.digits][(e|E)[+-]digits] with at least one
// mantissa digit, and nothing else.
func isDecimal(s string) bool {
	i, n := 0, len(s)
	if i < n && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < n && s[i] >= '0' && s[i] <= '9' {
		i++
		digits++
	}
	if i < n && s[i] == '.' {
		i++
		for i < n && s[i] >= '0' && s[i] <= '9' {
			i++
			digits++
		}
	}
	if digits == 0 {
		return false
	}
	if i < n && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < n && (s[i] == '+' || s[i] == '-') {
			i++
		}
		ed := 0
		for i < n && s[i] >= '0' && s[i] <= '9' {
			i++
			ed++
		}
		if ed == 0 {
			return false
		}
	}
	return i == n
}

// idProblem returns a reject reason when an id or name that identifies a
// station, or a variable name, could print like another: text that is not
// valid UTF-8, or holds a control character (NUL, tab, line ends, …) or an
// invisible format character (zero-width space, byte order mark, direction
// marks: Unicode category Cf). what names the field ("station id").
func idProblem(what, s string) string {
	if !utf8.ValidString(s) {
		return fmt.Sprintf("%s %q is not valid UTF-8", what, s)
	}
	for i, r := range s {
		if unicode.IsControl(r) || unicode.Is(unicode.Cf, r) {
			return fmt.Sprintf("%s %q holds the invisible character U+%04X at byte %d", what, s, r, i)
		}
	}
	return ""
}
