package timefmt

import (
	"math"
	"testing"
	"time"
)

// FuzzParseTimeInRange: any text is an error or a time within [MinUnix, MaxUnix]
// that, written as ISO 8601 UTC, parses back to itself. Never a panic.
func FuzzParseTimeInRange(f *testing.F) {
	for _, s := range []string{"2021-03-28T01:30:00Z", "2021-03-28T03:30:00+02:00", "2021-03-28 03:30", "2021-03-28",
		"1616895000", "-62135596800", "253402300800", "9999-12-31T23:59:59-01:00", "0000-01-01", "2021-02-29",
		"2021-03-28T24:00", "2021-03-28T03:30:00.000+0200", "+1", "2021-10-31T02:30", "", " ", "2021-13-01T00:00Z"} {
		f.Add(s, "Europe/Berlin")
		f.Add(s, "")
	}
	f.Fuzz(func(t *testing.T, s, zone string) {
		loc := time.UTC
		if zone != "" {
			l, err := ParseZone(zone)
			if err != nil {
				return
			}
			loc = l
		}
		v, err := ParseTime(s, loc)
		if err != nil {
			return
		}
		if v < MinUnix || v > MaxUnix {
			t.Fatalf("ParseTime(%q) = %d, outside [%d, %d]", s, v, MinUnix, MaxUnix)
		}
		back, err := ParseTime(FormatUTC(v), nil)
		if err != nil || back != v {
			t.Fatalf("ParseTime(%q) = %d; %s parses to %d, %v", s, v, FormatUTC(v), back, err)
		}
	})
}

// FuzzParseDuration: any text is an error or a positive finite number of
// seconds. Never a panic.
func FuzzParseDuration(f *testing.F) {
	for _, s := range []string{"1h", "15min", "1.5d", "2w", "1y", "0s", "-1h", "1e308y", "1e-400s", "1 h", "h", "1e", ".5min", "+3d", "NaNs", "Infh"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		d, err := ParseDuration(s)
		if err != nil {
			return
		}
		if !(d > 0) || math.IsInf(d, 0) || math.IsNaN(d) {
			t.Fatalf("ParseDuration(%q) = %v, want a positive finite number", s, d)
		}
	})
}
