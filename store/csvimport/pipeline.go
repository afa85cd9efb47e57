package csvimport

import (
	"strings"
	"sync"

	"trendsql/sqlfuncs/timefmt"
)

// rowCols are the header indexes of the columns a readings import uses
// (-1: absent).
type rowCols struct{ station, variable, time, value, qualifier, censor int }

// parsedRow is one record after parsing: either a reject reason or the
// row's station, variable, time, value and qualifier.
type parsedRow struct {
	line              int
	raw               string
	reason            string
	station, variable string
	t                 int64
	v                 float64
	c                 int8 // censoring mark: 0, −1 ('<'), 1 ('>')
	q                 *string
	missing           bool // rejected as a declared missing-value marker
}

type parsedChunk struct {
	rows    []parsedRow
	err     error // a read error after rows
	errLine int
}

const chunkRows = 1024

// parseAsync starts the goroutine that reads and parses records. The
// returned stop function ends it and waits for it; call it before the file
// is closed.
func (im *readingsImporter) parseAsync(cr *csvReader, h *csvHeader, cols rowCols) (<-chan *parsedChunk, func()) {
	chunks := make(chan *parsedChunk, 4)
	im.free = make(chan *parsedChunk, 8)
	quit := make(chan struct{})
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		defer close(chunks)
		for {
			var c *parsedChunk
			select {
			case c = <-im.free:
				c.rows = c.rows[:0]
			default:
				c = &parsedChunk{rows: make([]parsedRow, 0, chunkRows)}
			}
			end := false
			for len(c.rows) < chunkRows {
				r, err := cr.next()
				if err != nil {
					c.err, c.errLine, end = err, cr.nextLine-1, true
					break
				}
				if r == nil {
					end = true
					break
				}
				c.rows = append(c.rows, im.parse(r, h, cols))
			}
			select {
			case chunks <- c:
			case <-quit:
				return
			}
			if end {
				return
			}
		}
	}()
	var once sync.Once
	return chunks, func() {
		once.Do(func() {
			close(quit)
			im.in.f.Close() // unblocks a read waiting on a pipe or terminal
			wg.Wait()
		})
	}
}

func (im *readingsImporter) recycle(c *parsedChunk) {
	clear(c.rows) // drop the strings
	select {
	case im.free <- c:
	default:
	}
}

// parse checks one record and parses its fields. It touches no database
// and no importer state, so it runs on the reading goroutine.
func (im *readingsImporter) parse(r *csvRecord, h *csvHeader, c rowCols) parsedRow {
	p := parsedRow{line: r.line, raw: r.raw}
	if p.reason = checkWidth(r, h); p.reason != "" {
		return p
	}
	f := r.fields
	if _, ok := im.missing[f[c.value]]; ok {
		p.reason, p.missing = reasonMissing, true
		return p
	}
	if p.station = strings.TrimSpace(f[c.station]); p.station == "" {
		p.reason = "missing station"
		return p
	}
	if p.reason = idProblem("station id", p.station); p.reason != "" {
		return p
	}
	p.variable = im.opt.Variable
	if c.variable >= 0 {
		if p.variable = strings.TrimSpace(f[c.variable]); p.variable == "" {
			p.reason = "missing variable"
			return p
		}
		if p.reason = idProblem("variable", p.variable); p.reason != "" {
			return p
		}
	}
	if strings.TrimSpace(f[c.time]) == "" {
		p.reason = "missing time"
		return p
	}
	var err error
	if p.t, err = timefmt.ParseTime(f[c.time], im.loc); err != nil {
		p.reason = "bad time: " + err.Error()
		return p
	}
	remark := ""
	if c.censor >= 0 {
		remark = f[c.censor]
	}
	if p.v, p.c, p.reason = parseReported(f[c.value], remark, im.opt.DecimalComma, !im.opt.NoCensored); p.reason != "" {
		return p
	}
	if c.qualifier >= 0 && f[c.qualifier] != "" {
		q := f[c.qualifier]
		p.q = &q
	}
	return p
}
