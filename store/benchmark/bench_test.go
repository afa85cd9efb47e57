package benchmark

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"trendsql/sqlfuncs"
	"trendsql/sqlfuncs/stats"
	"trendsql/store"
)

// The generator must be deterministic (two runs of `trendsql bench` with the
// same flags measure the same rows) and produce what its comment promises:
// hourly readings in strictly increasing time, three gaps of 6–72 extra
// hours per series, about 1 % qualified readings.
func TestBenchDataDeterministicHourlyWithGaps(t *testing.T) {
	dir := t.TempDir()
	d := Data{Series: 4, PerSeries: 3000, Seed: 11}
	a, b, c := filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.csv"), filepath.Join(dir, "c.csv")
	for _, p := range []string{a, b} {
		n, err := WriteCSV(p, d)
		if err != nil || n != d.Rows() {
			t.Fatalf("WriteCSV: %d rows, %v", n, err)
		}
	}
	d2 := d
	d2.Seed = 12
	if _, err := WriteCSV(c, d2); err != nil {
		t.Fatal(err)
	}
	ba, _ := os.ReadFile(a)
	bb, _ := os.ReadFile(b)
	bc, _ := os.ReadFile(c)
	if !bytes.Equal(ba, bb) {
		t.Fatal("same seed, different files")
	}
	if bytes.Equal(ba, bc) {
		t.Fatal("different seeds, same file")
	}
	lines := strings.Split(strings.TrimSuffix(string(ba), "\n"), "\n")
	if lines[0] != CSVHeader || int64(len(lines)-1) != d.Rows() {
		t.Fatalf("header %q, %d data lines", lines[0], len(lines)-1)
	}
	type acc struct {
		n, gaps, qual int
		last          int64
	}
	per := map[string]*acc{}
	for i, line := range lines[1:] {
		f := strings.Split(line, ",")
		if len(f) != 4 {
			t.Fatalf("line %d: %q", i+2, line)
		}
		tt, err := strconv.ParseInt(f[1], 10, 64)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := strconv.ParseFloat(f[2], 64); err != nil {
			t.Fatal(err)
		}
		s := per[f[0]]
		if s == nil {
			s = &acc{last: tt - 3600}
			per[f[0]] = s
			if tt != Start {
				t.Fatalf("series %s starts at %d", f[0], tt)
			}
		}
		switch step := tt - s.last; {
		case step == 3600:
		case step >= 7*3600 && step <= 217*3600 && step%3600 == 0: // up to three gaps on one reading
			s.gaps++
		default:
			t.Fatalf("series %s: step %d s at line %d", f[0], step, i+2)
		}
		s.last = tt
		s.n++
		if f[3] == "E" {
			s.qual++
		} else if f[3] != "" {
			t.Fatalf("qualifier %q", f[3])
		}
	}
	if len(per) != d.Series {
		t.Fatalf("%d series", len(per))
	}
	for id, s := range per {
		// Two gaps may fall on the same reading and add up, so 1..3.
		if s.n != d.PerSeries || s.gaps < 1 || s.gaps > 3 {
			t.Errorf("series %s: %d rows, %d gaps", id, s.n, s.gaps)
		}
		if s.qual < 5 || s.qual > 80 {
			t.Errorf("series %s: %d qualified readings of %d, want about 1 %%", id, s.qual, s.n)
		}
	}
}

// The importer and the direct loader must store the same readings.
func TestBenchImportAndDirectLoadAgree(t *testing.T) {
	ctx := context.Background()
	dir := t.TempDir()
	csv := filepath.Join(dir, "r.csv")
	d := Data{Series: 3, PerSeries: 500, Seed: 3}
	if _, err := WriteCSV(csv, d); err != nil {
		t.Fatal(err)
	}
	dump := func(load func(*store.Store) (int64, error), name string) string {
		s, err := store.Open(ctx, filepath.Join(dir, name), store.Options{})
		if err != nil {
			t.Fatal(err)
		}
		defer s.Close()
		n, err := load(s)
		if err != nil || n != d.Rows() {
			t.Fatalf("%s: %d rows, %v", name, n, err)
		}
		if err := s.IntegrityCheck(ctx); err != nil {
			t.Fatal(err)
		}
		rows, err := s.DB.QueryContext(ctx, `SELECT station_id, variable, unit, t, value, coalesce(qualifier, '') FROM readings_view ORDER BY station_id, t`)
		if err != nil {
			t.Fatal(err)
		}
		defer rows.Close()
		var b strings.Builder
		for rows.Next() {
			var st, v, u, q string
			var tt int64
			var val float64
			if err := rows.Scan(&st, &v, &u, &tt, &val, &q); err != nil {
				t.Fatal(err)
			}
			b.WriteString(st + "," + v + "," + u + "," + strconv.FormatInt(tt, 10) + "," + strconv.FormatFloat(val, 'g', -1, 64) + "," + q + "\n")
		}
		return b.String()
	}
	a := dump(func(s *store.Store) (int64, error) { return ImportCSV(ctx, s, csv, nil) }, "import.db")
	b := dump(func(s *store.Store) (int64, error) { return LoadCSV(ctx, s, csv) }, "direct.db")
	if a != b {
		t.Fatal("importer and direct loader stored different readings")
	}
	if strings.Count(a, "\n") != int(d.Rows()) {
		t.Fatalf("%d rows dumped", strings.Count(a, "\n"))
	}
}

// A small run: every item is measured (or reported as not available),
// never an error, and the ratios are relative to the avg() scan.
func TestRunBenchSmall(t *testing.T) {
	if err := sqlfuncs.Register(); err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	rep, err := Run(context.Background(), Options{
		Data: Data{Series: 3, PerSeries: 400, Seed: 5}, Dir: dir, Reps: 2,
		ItemTimeout: 2 * time.Minute, Summarize: stats.SummarizeSeries, Direct: true,
	})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Rows != 1200 || len(rep.Items) != len(Queries)+4 {
		t.Fatalf("rows %d, items %d", rep.Rows, len(rep.Items))
	}
	ok := 0
	for _, it := range rep.Items {
		switch it.Status {
		case "ok":
			ok++
			if len(it.Seconds) != 2 || it.Median <= 0 || it.Ratio <= 0 || it.RowsPerSec <= 0 {
				t.Errorf("%s: seconds %v median %v ratio %v rows/s %v", it.Name, it.Seconds, it.Median, it.Ratio, it.RowsPerSec)
			}
			if it.Name == ScanName && it.Ratio != 1 {
				t.Errorf("scan ratio %v", it.Ratio)
			}
		case "not available":
		default:
			t.Errorf("%s: %s: %s", it.Name, it.Status, it.Note)
		}
	}
	for _, it := range rep.Items {
		// 400 hourly readings are far from the two years a seasonal
		// summary needs: reported, not measured as a skipped run.
		if it.Name == "summarize seasonal" && (it.Status != "not available" || !strings.Contains(it.Note, "two years")) {
			t.Errorf("summarize seasonal on short records: %s: %s", it.Status, it.Note)
		}
	}
	for _, name := range []string{"CSV import", "direct load", ScanName, "regr_slope", "summarize"} {
		found := false
		for _, it := range rep.Items {
			found = found || it.Name == name && it.Status == "ok"
		}
		if !found {
			t.Errorf("%s was not measured", name)
		}
	}
	s, err := store.Open(context.Background(), rep.Store, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if err := s.IntegrityCheck(context.Background()); err != nil {
		t.Fatal(err)
	}
}
