package main

import (
	"bytes"
	"strings"
	"testing"
	"time"

	"trendsql/store/csvimport"
)

func TestImportRateOnlyWhenMeaningful(t *testing.T) {
	// A few rows over a near-zero span give no rate at all.
	if _, ok := importRate(5000, time.Microsecond); ok {
		t.Error("rate over 1 µs")
	}
	if _, ok := importRate(10, 5*time.Second); ok {
		t.Error("rate over 10 rows")
	}
	// 1,500,000 rows in 6 s are 250,000 rows per second.
	if r, ok := importRate(1_500_000, 6*time.Second); !ok || r != 250_000 {
		t.Errorf("rate %v, %v; want 250000", r, ok)
	}
	line := importProgressLine("g.csv", csvimport.Progress{Rows: 1_500_000, Bytes: 30 << 20, TotalBytes: 120 << 20}, 6*time.Second)
	if line != "g.csv  25%  1500000 rows  250.0k rows/s  about 18s left" {
		t.Errorf("line %q", line)
	}
	line = importProgressLine("stdin", csvimport.Progress{Rows: 200, TotalBytes: -1}, 3*time.Second)
	if line != "stdin  200 rows" || strings.Contains(line, "/s") {
		t.Errorf("line without a rate %q", line)
	}
}

func TestImportProgressWaitsAndClears(t *testing.T) {
	var b bytes.Buffer
	now := time.Unix(1_700_000_000, 0)
	p := &importProgress{w: &b, tty: true, name: "g.csv", start: now, now: func() time.Time { return now }}
	p.update(csvimport.Progress{Rows: 10_000, Bytes: 1, TotalBytes: 10})
	if b.Len() != 0 {
		t.Errorf("drawn before the delay: %q", b.String())
	}
	now = now.Add(3 * time.Second)
	p.update(csvimport.Progress{Rows: 30_000, Bytes: 5, TotalBytes: 10})
	if !strings.Contains(b.String(), "g.csv  50%  30000 rows  10.0k rows/s  about 3s left") {
		t.Errorf("line %q", b.String())
	}
	p.done()
	if !strings.HasSuffix(b.String(), "\r\x1b[K") {
		t.Errorf("not cleared: %q", b.String())
	}
}
