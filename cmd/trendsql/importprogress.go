package main

import (
	"fmt"
	"io"
	"path/filepath"
	"strings"
	"time"

	"trendsql/store/csvimport"
)

// Import progress is one status line on a terminal: file, share of the
// file read, rows read, rows per second and the time left. It appears only
// after importProgressDelay and is redrawn at most every
// importProgressEvery; elsewhere (a pipe, a log file) nothing is drawn.
const (
	importProgressDelay = 2 * time.Second
	importProgressEvery = 200 * time.Millisecond
	// A rate is shown only over at least rateMinSpan and rateMinRows: over
	// a shorter span the quotient says nothing about the import's speed.
	rateMinSpan = time.Second
	rateMinRows = 1000
)

type importProgress struct {
	w     io.Writer
	tty   bool
	name  string
	start time.Time
	now   func() time.Time
	last  time.Time // last redraw
	drawn bool
}

func newImportProgress(w io.Writer, path string) *importProgress {
	return &importProgress{w: w, tty: isTerminalWriter(w), name: filepath.Base(path), start: time.Now(), now: time.Now}
}

func (b *importProgress) update(p csvimport.Progress) {
	if !b.tty {
		return
	}
	now := b.now()
	if now.Sub(b.start) < importProgressDelay || now.Sub(b.last) < importProgressEvery {
		return
	}
	b.last = now
	fmt.Fprintf(b.w, "\r%s\x1b[K", importProgressLine(b.name, p, now.Sub(b.start)))
	b.drawn = true
}

// done clears the line so the summary or error starts on a clean line.
func (b *importProgress) done() {
	if b.drawn {
		fmt.Fprint(b.w, "\r\x1b[K")
		b.drawn = false
	}
}

// importProgressLine words the progress of an import that has run for
// elapsed, e.g. "gauges.csv  42%  1204332 rows  215.3k rows/s  about 9s left".
func importProgressLine(name string, p csvimport.Progress, elapsed time.Duration) string {
	parts := []string{name}
	known := p.TotalBytes > 0 && p.Bytes > 0
	if known {
		parts = append(parts, fmt.Sprintf("%d%%", min(100, 100*p.Bytes/p.TotalBytes)))
	}
	parts = append(parts, plural(int(p.Rows), "row", "rows"))
	if rate, ok := importRate(p.Rows, elapsed); ok {
		parts = append(parts, humanRate(rate)+" rows/s")
		if known && p.Bytes < p.TotalBytes {
			left := time.Duration(float64(elapsed) * float64(p.TotalBytes-p.Bytes) / float64(p.Bytes))
			parts = append(parts, "about "+left.Round(time.Second).String()+" left")
		}
	}
	return strings.Join(parts, "  ")
}

// importRate is the rows per second over the whole import so far; ok is
// false until rateMinSpan has passed and rateMinRows rows were read.
func importRate(rows int64, elapsed time.Duration) (rate float64, ok bool) {
	if elapsed < rateMinSpan || rows < rateMinRows {
		return 0, false
	}
	return float64(rows) / elapsed.Seconds(), true
}
