package timefmt

import (
	"errors"
	"testing"
	"time"
)

// TestParseTimeRange: times are accepted from 0001-01-01T00:00:00Z to
// 9999-12-31T23:59:59Z (the four-digit years of ISO 8601) and refused
// outside; the bounds are checked against Go's time package.
func TestParseTimeRange(t *testing.T) {
	if got := time.Date(1, 1, 1, 0, 0, 0, 0, time.UTC).Unix(); got != MinUnix {
		t.Fatalf("MinUnix %d, time package %d", MinUnix, got)
	}
	if got := time.Date(9999, 12, 31, 23, 59, 59, 0, time.UTC).Unix(); got != MaxUnix {
		t.Fatalf("MaxUnix %d, time package %d", MaxUnix, got)
	}
	for _, s := range []string{"-62135596800", "253402300799", "0001-01-01T00:00:00Z", "9999-12-31T23:59:59Z", "9999-12-31"} {
		if _, err := ParseTime(s, nil); err != nil {
			t.Errorf("%s: %v", s, err)
		}
	}
	for _, s := range []string{"-62135596801", "253402300800", "9223372036854775807", "-9223372036854775808",
		"0000-12-31T23:59:59Z", "0001-01-01T00:30:00+01:00", "9999-12-31T23:30:00-01:00"} {
		if _, err := ParseTime(s, nil); !errors.Is(err, ErrOutOfRange) {
			t.Errorf("%s: %v, want ErrOutOfRange", s, err)
		}
	}
}
