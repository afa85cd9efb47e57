package benchmark

import (
	"bufio"
	"context"
	"fmt"
	"os"
	"strconv"
	"strings"

	"trendsql/store"
	"trendsql/store/csvimport"
)

// ImportMethod names how `trendsql bench` imports the CSV file.
const ImportMethod = "csvimport.ImportReadings (the `trendsql import` path: header lookup, time and value validation, duplicate checks, reject accounting, batch record, one transaction)"

// DirectMethod names the optional direct load measured for comparison.
const DirectMethod = "the bench's own minimal CSV reader + ReadingWriter (500-row multi-VALUES inserts, one transaction; no validation or reject accounting)"

// ImportCSV imports the CSV file written by WriteCSV the way
// `trendsql import` does (onInsertPath as in csvimport.ReadingsOptions; nil
// for none), then checkpoints the WAL so the rows are in the main database
// file. It returns the rows stored.
func ImportCSV(ctx context.Context, s *store.Store, csvPath string, onInsertPath func(cLevel bool) func()) (int64, error) {
	res, err := csvimport.ImportReadings(ctx, s, csvPath, csvimport.ReadingsOptions{Variable: Variable, Unit: "m", OnInsertPath: onInsertPath})
	if err != nil {
		return 0, err
	}
	if res.RowsRejected != 0 || res.RowsDuplicate != 0 {
		return res.RowsStored, fmt.Errorf("bench: import of %s rejected %d and found %d duplicate rows; the generator is broken", csvPath, res.RowsRejected, res.RowsDuplicate)
	}
	if err := s.Checkpoint(ctx); err != nil {
		return res.RowsStored, err
	}
	return res.RowsStored, nil
}

// LoadCSV loads the CSV file written by WriteCSV into the store:
// one station and one series per station code, readings through the
// batched ReadingWriter, all in one transaction, then a WAL checkpoint so the
// rows are in the main database file. It returns the rows stored.
func LoadCSV(ctx context.Context, s *store.Store, csvPath string) (int64, error) {
	f, err := os.Open(csvPath)
	if err != nil {
		return 0, fmt.Errorf("bench load: %w", err)
	}
	defer f.Close()
	rt, err := csvimport.BeginReadingsTx(ctx, s, csvimport.ConflictError)
	if err != nil {
		return 0, fmt.Errorf("bench load: %w", err)
	}
	defer rt.End()
	tx, w := rt.Tx, rt.W
	insSt, err := tx.PrepareContext(ctx, `INSERT INTO stations(id, name) VALUES (?, ?)`)
	if err != nil {
		return 0, fmt.Errorf("bench load: %w", err)
	}
	defer insSt.Close()
	insSe, err := tx.PrepareContext(ctx, `INSERT INTO series(station_id, variable, unit) VALUES (?, ?, 'm')`)
	if err != nil {
		return 0, fmt.Errorf("bench load: %w", err)
	}
	defer insSe.Close()
	ids := map[string]int64{}
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 0, 64<<10), 1<<20)
	var fields []string
	line := 0
	header := true
	qual := "E"
	for sc.Scan() {
		line++
		text := sc.Text()
		if strings.TrimSpace(text) == "" {
			continue
		}
		fields = splitComma(fields[:0], text)
		if header {
			header = false
			if strings.Join(fields, ",") != CSVHeader {
				return 0, fmt.Errorf("bench load %s: header %q is not %q", csvPath, text, CSVHeader)
			}
			continue
		}
		if len(fields) != 4 {
			return 0, fmt.Errorf("bench load %s line %d: %d fields, want 4", csvPath, line, len(fields))
		}
		code := fields[0]
		id, ok := ids[code]
		if !ok {
			if _, err := insSt.ExecContext(ctx, code, "bench station "+code); err != nil {
				return 0, fmt.Errorf("bench load: station %s: %w", code, err)
			}
			res, err := insSe.ExecContext(ctx, code, Variable)
			if err != nil {
				return 0, fmt.Errorf("bench load: series %s: %w", code, err)
			}
			id, _ = res.LastInsertId()
			ids[code] = id
		}
		t, err := strconv.ParseInt(fields[1], 10, 64)
		if err != nil {
			return 0, fmt.Errorf("bench load %s line %d: time %q: %w", csvPath, line, fields[1], err)
		}
		v, err := strconv.ParseFloat(fields[2], 64)
		if err != nil {
			return 0, fmt.Errorf("bench load %s line %d: value %q: %w", csvPath, line, fields[2], err)
		}
		r := csvimport.Reading{SeriesID: id, T: t, Value: v}
		if fields[3] != "" {
			r.Qualifier = &qual
		}
		if err := w.Add(ctx, r); err != nil {
			return 0, err
		}
	}
	if err := sc.Err(); err != nil {
		return 0, fmt.Errorf("bench load %s: %w", csvPath, err)
	}
	n, err := w.Flush(ctx)
	if err != nil {
		return n, err
	}
	if err := tx.Commit(); err != nil {
		return n, fmt.Errorf("bench load: commit: %w", err)
	}
	if err := s.Checkpoint(ctx); err != nil {
		return n, err
	}
	return n, nil
}

// splitComma appends the comma-separated fields of line to dst. The
// generated file has no quoted fields.
func splitComma(dst []string, line string) []string {
	for {
		i := strings.IndexByte(line, ',')
		if i < 0 {
			return append(dst, line)
		}
		dst = append(dst, line[:i])
		line = line[i+1:]
	}
}
