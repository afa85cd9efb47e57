// Package timefmt parses the time stamps and durations that trendsql accepts,
// both on import and as arguments of its SQL functions. It has no SQL imports.
//
// Accepted time stamps (ParseTime):
//
//	2021-03-28T01:30:00Z            ISO 8601 / RFC 3339, UTC designator
//	2021-03-28T03:30:00+02:00       ISO 8601 with a numeric offset
//	2021-03-28T03:30:00.000+02:00   fractional seconds, only if the fraction is zero
//	2021-03-28T03:30[:00]           ISO 8601 without offset: local time in loc
//	2021-03-28 03:30[:00]           the same with a space instead of T
//	2021-03-28                      a date: local midnight in loc
//	1616895000                      unix seconds (an optional leading sign)
//
// Every time must lie in the years 0001 to 9999 of ISO 8601 in UTC, from
// 0001-01-01T00:00:00Z (MinUnix) to 9999-12-31T23:59:59Z (MaxUnix), so that it
// can be written back in the ISO form; a time outside is ErrOutOfRange.
//
// Zone-less local times are resolved in the given *time.Location using the Go
// time zone database, so daylight-saving transitions are honoured. A local
// time that does not exist (skipped by a spring-forward transition) or that
// exists twice (repeated by a fall-back transition) is an error rather than a
// guess; the message names both candidate instants for the repeated case.
//
// Durations (ParseDuration) are a decimal number followed by one of the units
// s, min, h, d, w, y, where 1 d = 86 400 s, 1 w = 7 d and 1 y = 365.25 d
// (the Julian year, common practice in trend reporting). "1y" therefore
// equals 31 557 600 s.
package timefmt

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"
)

// SecondsPerYear is the length of the year used for every "per year" figure:
// the Julian year of 365.25 days.
const SecondsPerYear = 365.25 * 86400

// ErrNonexistentLocal and ErrAmbiguousLocal are wrapped by ParseTime for
// zone-less local times that fall in a daylight-saving gap or overlap.
var (
	ErrNonexistentLocal = errors.New("local time does not exist (daylight-saving gap)")
	ErrAmbiguousLocal   = errors.New("local time is ambiguous (daylight-saving overlap)")
	ErrSyntax           = errors.New("unrecognised time")
	ErrOutOfRange       = errors.New("time outside the years 0001 to 9999 (UTC)")
)

// MinUnix and MaxUnix bound the times ParseTime accepts:
// 0001-01-01T00:00:00Z and 9999-12-31T23:59:59Z.
const (
	MinUnix = -62135596800
	MaxUnix = 253402300799
)

// ParseTime returns the unix seconds (UTC) of s. loc resolves zone-less
// times; nil means UTC. The result lies in [MinUnix, MaxUnix].
func ParseTime(s string, loc *time.Location) (int64, error) {
	t, err := parseTime(s, loc)
	if err == nil && (t < MinUnix || t > MaxUnix) {
		return 0, fmt.Errorf("%q: %w", strings.TrimSpace(s), ErrOutOfRange)
	}
	return t, err
}

func parseTime(s string, loc *time.Location) (int64, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return 0, fmt.Errorf("empty time: %w", ErrSyntax)
	}
	if loc == nil {
		loc = time.UTC
	}
	if isInteger(s) {
		v, err := strconv.ParseInt(s, 10, 64)
		if err != nil {
			return 0, fmt.Errorf("unix seconds %q out of range", s)
		}
		return v, nil
	}
	if len(s) < 10 || s[4] != '-' || s[7] != '-' {
		return 0, fmt.Errorf("%q: %w (want ISO 8601, YYYY-MM-DD[ HH:MM[:SS]] or unix seconds)", s, ErrSyntax)
	}
	year, e1 := atoiN(s[0:4])
	month, e2 := atoiN(s[5:7])
	day, e3 := atoiN(s[8:10])
	if e1 != nil || e2 != nil || e3 != nil {
		return 0, fmt.Errorf("%q: %w (bad date digits)", s, ErrSyntax)
	}
	hour, min, sec := 0, 0, 0
	rest := s[10:]
	hasClock := false
	if rest != "" {
		if rest[0] != 'T' && rest[0] != ' ' && rest[0] != 't' {
			return 0, fmt.Errorf("%q: %w (expected T or space after the date)", s, ErrSyntax)
		}
		rest = rest[1:]
		if len(rest) < 5 || rest[2] != ':' {
			return 0, fmt.Errorf("%q: %w (want HH:MM after the date)", s, ErrSyntax)
		}
		var e4, e5 error
		hour, e4 = atoiN(rest[0:2])
		min, e5 = atoiN(rest[3:5])
		if e4 != nil || e5 != nil {
			return 0, fmt.Errorf("%q: %w (bad clock digits)", s, ErrSyntax)
		}
		rest = rest[5:]
		hasClock = true
		if len(rest) >= 3 && rest[0] == ':' {
			var e6 error
			sec, e6 = atoiN(rest[1:3])
			if e6 != nil {
				return 0, fmt.Errorf("%q: %w (bad seconds digits)", s, ErrSyntax)
			}
			rest = rest[3:]
			if len(rest) > 0 && (rest[0] == '.' || rest[0] == ',') {
				j := 1
				for j < len(rest) && rest[j] >= '0' && rest[j] <= '9' {
					if rest[j] != '0' {
						return 0, fmt.Errorf("%q: sub-second times are not supported (times are whole unix seconds)", s)
					}
					j++
				}
				if j == 1 {
					return 0, fmt.Errorf("%q: %w (empty fraction)", s, ErrSyntax)
				}
				rest = rest[j:]
			}
		}
	}
	if month < 1 || month > 12 || day < 1 || day > daysIn(year, month) {
		return 0, fmt.Errorf("%q: no such date", s)
	}
	if hour > 24 || min > 59 || sec > 59 || (hour == 24 && (min != 0 || sec != 0)) {
		return 0, fmt.Errorf("%q: no such time of day", s)
	}
	if rest != "" {
		if !hasClock {
			return 0, fmt.Errorf("%q: %w (offset without a time of day)", s, ErrSyntax)
		}
		off, err := parseOffset(rest)
		if err != nil {
			return 0, fmt.Errorf("%q: %w", s, err)
		}
		return time.Date(year, time.Month(month), day, hour, min, sec, 0, time.UTC).Unix() - int64(off), nil
	}
	return resolveLocal(s, year, month, day, hour, min, sec, loc)
}

// resolveLocal finds the instants whose wall clock in loc reads the given
// fields; exactly one must exist.
func resolveLocal(s string, year, month, day, hour, min, sec int, loc *time.Location) (int64, error) {
	wall := time.Date(year, time.Month(month), day, hour, min, sec, 0, time.UTC).Unix()
	// Every offset in force within a day of the wall time is a candidate.
	var found []int64
	seenOff := map[int]bool{}
	for _, probe := range []int64{wall - 86400, wall - 43200, wall, wall + 43200, wall + 86400} {
		_, off := time.Unix(probe, 0).In(loc).Zone()
		if seenOff[off] {
			continue
		}
		seenOff[off] = true
		cand := wall - int64(off)
		if _, o2 := time.Unix(cand, 0).In(loc).Zone(); o2 == off {
			dup := false
			for _, f := range found {
				dup = dup || f == cand
			}
			if !dup {
				found = append(found, cand)
			}
		}
	}
	switch len(found) {
	case 1:
		return found[0], nil
	case 0:
		return 0, fmt.Errorf("%q in %s: %w", s, loc, ErrNonexistentLocal)
	default:
		a, b := found[0], found[1]
		if a > b {
			a, b = b, a
		}
		return 0, fmt.Errorf("%q in %s: %w: it is %s or %s; give an explicit offset", s, loc, ErrAmbiguousLocal,
			time.Unix(a, 0).In(loc).Format(time.RFC3339), time.Unix(b, 0).In(loc).Format(time.RFC3339))
	}
}

func parseOffset(s string) (int, error) {
	if s == "Z" || s == "z" {
		return 0, nil
	}
	if s[0] != '+' && s[0] != '-' {
		return 0, fmt.Errorf("%w (bad offset %q)", ErrSyntax, s)
	}
	sign := 1
	if s[0] == '-' {
		sign = -1
	}
	body := s[1:]
	var hh, mm int
	var err1, err2 error
	switch {
	case len(body) == 5 && body[2] == ':':
		hh, err1 = atoiN(body[0:2])
		mm, err2 = atoiN(body[3:5])
	case len(body) == 4:
		hh, err1 = atoiN(body[0:2])
		mm, err2 = atoiN(body[2:4])
	case len(body) == 2:
		hh, err1 = atoiN(body)
	default:
		return 0, fmt.Errorf("%w (bad offset %q)", ErrSyntax, s)
	}
	if err1 != nil || err2 != nil || hh > 23 || mm > 59 {
		return 0, fmt.Errorf("%w (bad offset %q)", ErrSyntax, s)
	}
	return sign * (hh*3600 + mm*60), nil
}

func isInteger(s string) bool {
	i := 0
	if s[0] == '-' || s[0] == '+' {
		i = 1
	}
	if i == len(s) {
		return false
	}
	for ; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return true
}

func atoiN(s string) (int, error) {
	n := 0
	for i := 0; i < len(s); i++ {
		c := s[i]
		if c < '0' || c > '9' {
			return 0, ErrSyntax
		}
		n = n*10 + int(c-'0')
	}
	return n, nil
}

func daysIn(year, month int) int {
	return time.Date(year, time.Month(month)+1, 0, 0, 0, 0, 0, time.UTC).Day()
}

// FormatUTC renders unix seconds as ISO 8601 UTC, e.g. 2021-03-28T01:30:00Z.
func FormatUTC(t int64) string { return time.Unix(t, 0).UTC().Format("2006-01-02T15:04:05Z") }

// ParseDuration returns the length in seconds of a duration such as "1h",
// "15min", "1.5d", "2w" or "1y" (1y = 365.25 d). The number must be positive
// and finite.
func ParseDuration(s string) (float64, error) {
	s = strings.TrimSpace(s)
	i := 0
	for i < len(s) && (s[i] == '.' || s[i] == '+' || (s[i] >= '0' && s[i] <= '9') || s[i] == 'e' && i > 0 && i+1 < len(s) && (s[i+1] >= '0' && s[i+1] <= '9' || s[i+1] == '-')) {
		i++
	}
	num, unit := s[:i], strings.TrimSpace(s[i:])
	v, err := strconv.ParseFloat(num, 64)
	if err != nil || num == "" {
		return 0, fmt.Errorf("duration %q: want a number followed by s, min, h, d, w or y", s)
	}
	var mult float64
	switch unit {
	case "s":
		mult = 1
	case "min":
		mult = 60
	case "h":
		mult = 3600
	case "d":
		mult = 86400
	case "w":
		mult = 7 * 86400
	case "y":
		mult = SecondsPerYear
	default:
		return 0, fmt.Errorf("duration %q: unit %q is not one of s, min, h, d, w, y", s, unit)
	}
	d := v * mult
	if !(d > 0) || math.IsInf(d, 0) {
		return 0, fmt.Errorf("duration %q: must be positive and finite", s)
	}
	return d, nil
}

// FormatDuration renders seconds in the largest unit that divides them
// exactly (s, min, h, d, w), or in seconds.
func FormatDuration(sec float64) string {
	for _, u := range []struct {
		name string
		v    float64
	}{{"w", 7 * 86400}, {"d", 86400}, {"h", 3600}, {"min", 60}} {
		if sec >= u.v && math.Mod(sec, u.v) == 0 {
			return strconv.FormatFloat(sec/u.v, 'f', -1, 64) + u.name
		}
	}
	return strconv.FormatFloat(sec, 'f', -1, 64) + "s"
}
