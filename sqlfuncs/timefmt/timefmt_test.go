package timefmt_test

import (
	"errors"
	"math"
	"strings"
	"testing"
	"time"
	_ "time/tzdata" // the zones below must resolve without a system zoneinfo

	"trendsql/sqlfuncs/timefmt"
)

func mustLoad(t testing.TB, name string) *time.Location {
	t.Helper()
	loc, err := time.LoadLocation(name)
	if err != nil {
		t.Fatalf("load %s: %v", name, err)
	}
	return loc
}

// The unix seconds in the tables below were computed outside this project
// with Debian's /usr/bin/python3 3.11 (datetime + zoneinfo, system tzdata):
//
//	d = datetime.fromisoformat(local).replace(tzinfo=ZoneInfo(zone), fold=F)
//	int(d.timestamp())
//
// classifying a local time as nonexistent when neither fold maps back to the
// same wall clock, and as ambiguous when fold=0 and fold=1 give different
// instants. The offset cases were also checked with GNU coreutils
// `date -u -d 'ISO' +%s` (same results).

func TestParseTimeOffsetsAndForms(t *testing.T) {
	cases := []struct {
		in   string
		want int64
	}{
		{"1970-01-01T00:00:00Z", 0},
		{"1969-12-31T23:59:59Z", -1},
		{"2021-03-28T01:30:00Z", 1616895000},
		{"2021-03-28T03:30:00+02:00", 1616895000},
		{"2021-03-28T03:30:00+0200", 1616895000},
		{"2021-03-28T03:30:00+02", 1616895000},
		{"2021-03-28t01:30:00z", 1616895000},
		{"2021-03-28T03:30:00.000+02:00", 1616895000},
		{"2021-03-28T03:30:00,0+02:00", 1616895000},
		{"2000-02-29T23:59:59-05:30", 951888599},
		{"2024-02-29T12:00:00+14:00", 1709157600},
		{"1900-01-01T00:00:00Z", -2208988800},
		{"0001-01-01T00:00:00Z", -62135596800},
		{"9999-12-31T23:59:59Z", 253402300799},
		{"2021-03-28T24:00:00Z", 1616976000}, // end of day = next midnight (ISO 8601)
		{"2021-03-28 01:30:00", 1616895000},  // zone-less: UTC when loc is nil
		{"2021-03-28 01:30", 1616895000},
		{"  2021-03-28T01:30Z  ", 1616895000},
		{"1616895000", 1616895000},
		{"+1616895000", 1616895000},
		{"-1", -1},
	}
	for _, c := range cases {
		got, err := timefmt.ParseTime(c.in, nil)
		if err != nil {
			t.Errorf("ParseTime(%q): %v", c.in, err)
			continue
		}
		if got != c.want {
			t.Errorf("ParseTime(%q) = %d, want %d", c.in, got, c.want)
		}
	}
}

func TestParseTimeLocalZones(t *testing.T) {
	type outcome int
	const (
		ok outcome = iota
		gap
		overlap
	)
	cases := []struct {
		zone, local string
		kind        outcome
		want        int64 // for ok
		a, b        int64 // the two instants, for overlap
	}{
		// Europe/Berlin: spring forward 2021-03-28 02:00 CET -> 03:00 CEST.
		{"Europe/Berlin", "2021-03-28 01:30:00", ok, 1616891400, 0, 0},
		{"Europe/Berlin", "2021-03-28 02:30:00", gap, 0, 0, 0},
		{"Europe/Berlin", "2021-03-28T03:30:00", ok, 1616895000, 0, 0},
		// Europe/Berlin: fall back 2021-10-31 03:00 CEST -> 02:00 CET.
		{"Europe/Berlin", "2021-10-31 01:30:00", ok, 1635636600, 0, 0},
		{"Europe/Berlin", "2021-10-31 02:30:00", overlap, 0, 1635640200, 1635643800},
		{"Europe/Berlin", "2021-10-31 03:30", ok, 1635647400, 0, 0},
		{"Europe/Berlin", "2021-06-15", ok, 1623708000, 0, 0}, // a date: local midnight (CEST)
		// America/New_York: spring forward 2021-03-14 02:00 EST -> 03:00 EDT.
		{"America/New_York", "2021-03-14 01:30:00", ok, 1615703400, 0, 0},
		{"America/New_York", "2021-03-14 02:30:00", gap, 0, 0, 0},
		{"America/New_York", "2021-03-14 03:30:00", ok, 1615707000, 0, 0},
		// America/New_York: fall back 2021-11-07 02:00 EDT -> 01:00 EST.
		{"America/New_York", "2021-11-07 00:30:00", ok, 1636259400, 0, 0},
		{"America/New_York", "2021-11-07 01:30:00", overlap, 0, 1636263000, 1636266600},
		{"America/New_York", "2021-11-07 02:30:00", ok, 1636270200, 0, 0},
		{"America/New_York", "2021-01-15 12:00", ok, 1610730000, 0, 0},
		// Midnight skipped (DST began at 00:00): a bare date does not exist.
		{"America/Sao_Paulo", "2018-11-04", gap, 0, 0, 0},
		{"America/Sao_Paulo", "2018-11-04 01:00", ok, 1541300400, 0, 0},
		// A whole calendar day skipped when the zone crossed the date line.
		{"Pacific/Apia", "2011-12-30 12:00", gap, 0, 0, 0},
		{"Pacific/Apia", "2011-12-31 12:00", ok, 1325282400, 0, 0},
		// A 30-minute daylight-saving shift.
		{"Australia/Lord_Howe", "2021-04-04 01:45", overlap, 0, 1617461100, 1617462900},
		{"Australia/Lord_Howe", "2021-10-03 02:15", gap, 0, 0, 0},
	}
	for _, c := range cases {
		loc := mustLoad(t, c.zone)
		got, err := timefmt.ParseTime(c.local, loc)
		switch c.kind {
		case ok:
			if err != nil || got != c.want {
				t.Errorf("%s %q = %d, %v; want %d", c.zone, c.local, got, err, c.want)
			}
		case gap:
			if !errors.Is(err, timefmt.ErrNonexistentLocal) {
				t.Errorf("%s %q = %d, %v; want ErrNonexistentLocal", c.zone, c.local, got, err)
			}
		case overlap:
			if !errors.Is(err, timefmt.ErrAmbiguousLocal) {
				t.Errorf("%s %q = %d, %v; want ErrAmbiguousLocal", c.zone, c.local, got, err)
				continue
			}
			// The message names both candidate instants.
			for _, u := range []int64{c.a, c.b} {
				s := time.Unix(u, 0).In(loc).Format(time.RFC3339)
				if !strings.Contains(err.Error(), s) {
					t.Errorf("%s %q: message %q does not name %s", c.zone, c.local, err, s)
				}
			}
		}
		// An explicit offset always wins over loc, also inside gaps and overlaps.
		if c.kind == overlap {
			for _, u := range []int64{c.a, c.b} {
				iso := time.Unix(u, 0).In(loc).Format(time.RFC3339)
				if got, err := timefmt.ParseTime(iso, loc); err != nil || got != u {
					t.Errorf("ParseTime(%q, %s) = %d, %v; want %d", iso, c.zone, got, err, u)
				}
			}
		}
	}
}

func TestParseTimeRejects(t *testing.T) {
	for _, in := range []string{
		"", "   ", "abc", "2021-13-01", "2021-02-29", "2021-04-31T00:00Z", "2021-03-28T25:00Z",
		"2021-03-28T24:00:01Z", "2021-03-28T12:60Z", "2021-03-28T12:00:60Z", "2021-03-28T12:00:00.5Z",
		"2021-03-28T12:00:00.Z", "2021-03-28X12:00", "2021-03-28T12", "2021-03-28T12:00+25:00",
		"2021-03-28T12:00+02:60", "2021-03-28T12:00 UTC", "2021-03-28+02:00", "28.03.2021", "03/28/2021",
		"99999999999999999999", "-", "+", "2021-3-28",
	} {
		if v, err := timefmt.ParseTime(in, nil); err == nil {
			t.Errorf("ParseTime(%q) = %d, want an error", in, v)
		}
	}
}

// FuzzParseTime: ParseTime never panics, and every instant it returns for a
// year 0001..9999 formats (FormatUTC) to a text that parses back to it.
func FuzzParseTime(f *testing.F) {
	for _, s := range []string{"2021-03-28T03:30:00+02:00", "2021-10-31 02:30", "1616895000", "2021-03-28",
		"2021-03-28T03:30:00.000Z", "", "2021-03-28T", "0000-00-00T00:00:00-00:00", "2021-03-28T24:00Z"} {
		f.Add(s, int64(1616895000))
	}
	f.Add("x", int64(-62135596800))
	f.Add("9999-12-31T23:59:59Z", int64(253402300799))
	berlin := mustLoad(f, "Europe/Berlin")
	const lo, hi = -62135596800, 253402300799 // 0001-01-01 .. 9999-12-31T23:59:59Z
	f.Fuzz(func(t *testing.T, s string, u int64) {
		for _, loc := range []*time.Location{nil, berlin} {
			v, err := timefmt.ParseTime(s, loc)
			if err == nil && v >= lo && v <= hi {
				back, err := timefmt.ParseTime(timefmt.FormatUTC(v), loc)
				if err != nil || back != v {
					t.Fatalf("ParseTime(%q) = %d; its UTC text %q parses to %d, %v", s, v, timefmt.FormatUTC(v), back, err)
				}
			}
		}
		if u >= lo && u <= hi {
			txt := timefmt.FormatUTC(u)
			back, err := timefmt.ParseTime(txt, berlin)
			if err != nil || back != u {
				t.Fatalf("FormatUTC(%d) = %q parses to %d, %v", u, txt, back, err)
			}
		}
	})
}

func TestFormatUTC(t *testing.T) {
	// Values as in TestParseTimeOffsetsAndForms (python3 datetime, see above).
	for u, want := range map[int64]string{0: "1970-01-01T00:00:00Z", 1616895000: "2021-03-28T01:30:00Z", -2208988800: "1900-01-01T00:00:00Z"} {
		if got := timefmt.FormatUTC(u); got != want {
			t.Errorf("FormatUTC(%d) = %q, want %q", u, got, want)
		}
	}
}

func TestParseDuration(t *testing.T) {
	// Units as documented in package timefmt: 1 d = 86 400 s, 1 w = 7 d and
	// 1 y = 365.25 d (the Julian year; common practice for "per year"
	// rates). 365.25*86400 = 31557600.
	cases := []struct {
		in   string
		want float64
	}{
		{"1y", 31557600},
		{"2y", 63115200},
		{"0.5y", 15778800},
		{"1s", 1},
		{"90s", 90},
		{"15min", 900},
		{"1h", 3600},
		{"1.5h", 5400},
		{"1d", 86400},
		{"1w", 604800},
		{"2w", 1209600},
		{" 3 d ", 259200},
		{"1e1s", 10},
	}
	for _, c := range cases {
		got, err := timefmt.ParseDuration(c.in)
		if err != nil || got != c.want {
			t.Errorf("ParseDuration(%q) = %v, %v; want %v", c.in, got, err, c.want)
		}
	}
	if timefmt.SecondsPerYear != 31557600 {
		t.Errorf("SecondsPerYear = %v, want 31557600", timefmt.SecondsPerYear)
	}
	for _, in := range []string{"", "y", "1", "1m", "1yr", "0s", "-1d", "0y", "1e400y", "NaNs", "inf h", "1 x", "1.2.3h"} {
		if v, err := timefmt.ParseDuration(in); err == nil {
			t.Errorf("ParseDuration(%q) = %v, want an error", in, v)
		}
	}
	for sec, want := range map[float64]string{604800: "1w", 86400: "1d", 3600: "1h", 900: "15min", 90: "90s", 1.5: "1.5s", 172800: "2d"} {
		if got := timefmt.FormatDuration(sec); got != want {
			t.Errorf("FormatDuration(%v) = %q, want %q", sec, got, want)
		}
	}
	if d, _ := timefmt.ParseDuration("1y"); math.Abs(d/86400-365.25) > 0 {
		t.Errorf("1y = %v d, want 365.25", d/86400)
	}
}
