package timefmt

import (
	"errors"
	"strings"
	"testing"
	"time"
)

// TestParseZone: fixed offsets as ISO 8601 writes them (±HH:MM, ±HHMM, ±HH)
// and after UTC/GMT, checked by the instant a local time maps to.
func TestParseZone(t *testing.T) {
	for in, off := range map[string]int{
		"+01:00": 3600, "-05:00": -5 * 3600, "+0530": 5*3600 + 1800, "+1": 3600, "-09": -9 * 3600,
		"UTC+1": 3600, "utc-05:00": -5 * 3600, "GMT+2": 7200, "UTC+05:45": 5*3600 + 45*60, " +00:00 ": 0,
	} {
		loc, err := ParseZone(in)
		if err != nil {
			t.Errorf("%q: %v", in, err)
			continue
		}
		// 2021-01-01T12:00 local is 12:00 − offset UTC.
		got, err := ParseTime("2021-01-01T12:00:00", loc)
		want := time.Date(2021, 1, 1, 12, 0, 0, 0, time.UTC).Unix() - int64(off)
		if err != nil || got != want {
			t.Errorf("%q: 12:00 local = %d, want %d (%v)", in, got, want, err)
		}
		// No daylight-saving change in July either.
		got, _ = ParseTime("2021-07-01T12:00:00", loc)
		if want := time.Date(2021, 7, 1, 12, 0, 0, 0, time.UTC).Unix() - int64(off); got != want {
			t.Errorf("%q in July: %d, want %d", in, got, want)
		}
	}
	if loc, err := ParseZone("Europe/Berlin"); err != nil || loc.String() != "Europe/Berlin" {
		t.Errorf("zone name: %v %v", loc, err)
	}
	for _, bad := range []string{"", "Local", "+25:00", "+01:60", "UTC+", "+1:5", "Mars/Base", "+abc", "UTC+01:00:00"} {
		_, err := ParseZone(bad)
		if err == nil || !errors.Is(err, ErrBadZone) || !strings.Contains(err.Error(), "+01:00") || !strings.Contains(err.Error(), "Europe/Berlin") {
			t.Errorf("%q: %v", bad, err)
		}
	}
}
