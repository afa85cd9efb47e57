package timefmt

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
	"time"
)

// ErrBadZone is wrapped by ParseZone's error for a value that is neither a
// zone name nor a fixed offset.
var ErrBadZone = errors.New("not a time zone name or a fixed offset")

// ParseZone reads the zone of zone-less local times: an IANA zone name
// (UTC, Europe/Berlin, America/New_York) or a fixed offset from UTC, for
// clocks that keep standard time all year:
//
//	+01:00  -05:00  +0530  +1        signed hours[:minutes]
//	UTC+1   UTC-05:00   GMT+2        the same after UTC or GMT
//
// An offset is the local time minus UTC: UTC+1 and +01:00 both mean one hour
// ahead of UTC (not the inverted sign of POSIX TZ strings). Offsets reach
// ±18:00; the location is named "UTC+01:00" style. "Local" is refused (the
// machine's zone is not a property of the data).
func ParseZone(s string) (*time.Location, error) {
	v := strings.TrimSpace(s)
	if v == "" || strings.EqualFold(v, "local") {
		return nil, fmt.Errorf("time zone %q: %w; give a zone name (UTC, Europe/Berlin) or a fixed offset (+01:00, -05:00, UTC+1)", s, ErrBadZone)
	}
	rest := v
	for _, p := range []string{"UTC", "GMT"} {
		if len(rest) > len(p) && strings.EqualFold(rest[:len(p)], p) && (rest[len(p)] == '+' || rest[len(p)] == '-') {
			rest = rest[len(p):]
			break
		}
	}
	if rest[0] == '+' || rest[0] == '-' {
		if off, ok := parseZoneOffset(rest); ok {
			sign, a := '+', off
			if off < 0 {
				sign, a = '-', -off
			}
			return time.FixedZone(fmt.Sprintf("UTC%c%02d:%02d", sign, a/3600, a%3600/60), off), nil
		}
		return nil, fmt.Errorf("time zone %q: %w; a fixed offset is +HH:MM, -HH:MM, +HH or UTC+H up to 18 hours (e.g. +01:00, -05:00, UTC+1); or give a zone name (UTC, Europe/Berlin)", s, ErrBadZone)
	}
	loc, err := time.LoadLocation(v)
	if err != nil {
		return nil, fmt.Errorf("time zone %q: %w; give a zone name (UTC, Europe/Berlin, America/New_York) or a fixed offset (+01:00, -05:00, UTC+1)", s, ErrBadZone)
	}
	return loc, nil
}

// parseZoneOffset reads [+-]H, [+-]HH, [+-]HH:MM or [+-]HHMM as seconds.
func parseZoneOffset(s string) (int, bool) {
	sign := 1
	if s[0] == '-' {
		sign = -1
	}
	body := s[1:]
	var hs, ms string
	switch {
	case strings.Contains(body, ":"):
		hs, ms, _ = strings.Cut(body, ":")
		if len(ms) != 2 {
			return 0, false
		}
	case len(body) == 4:
		hs, ms = body[:2], body[2:]
	case len(body) == 1 || len(body) == 2:
		hs = body
	default:
		return 0, false
	}
	if len(hs) < 1 || len(hs) > 2 {
		return 0, false
	}
	h, err := strconv.Atoi(hs)
	if err != nil || hs[0] == '+' || hs[0] == '-' {
		return 0, false
	}
	m := 0
	if ms != "" {
		if m, err = strconv.Atoi(ms); err != nil || ms[0] == '+' || ms[0] == '-' || m > 59 {
			return 0, false
		}
	}
	off := h*3600 + m*60
	if off > 18*3600 {
		return 0, false
	}
	return sign * off, true
}
