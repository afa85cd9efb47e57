package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"trendsql/store/benchmark"
)

// A tiny `trendsql bench` through the command: the table names every
// measurement with a ratio to the avg() scan, the JSON parses, --keep keeps
// the files and no item fails.
func TestBenchCommandTableAndJSON(t *testing.T) {
	dir := t.TempDir()
	var out, errw bytes.Buffer
	code := Main([]string{"bench", "--stations", "2", "--readings", "300", "--reps", "1", "--dir", dir, "--keep", "--quiet",
		"--json", filepath.Join(dir, "r.json")}, strings.NewReader(""), &out, &errw)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, errw.String())
	}
	txt := out.String()
	for _, want := range []string{"scan avg()", "1.00", "regr_slope", "summarize", "rows/s", "peak RSS MiB", "2 series × 300 hourly readings = 600 rows"} {
		if !strings.Contains(txt, want) {
			t.Errorf("table lacks %q:\n%s", want, txt)
		}
	}
	for _, bad := range []string{" error", "timed out"} {
		if strings.Contains(txt, bad) {
			t.Errorf("table reports %q:\n%s", bad, txt)
		}
	}
	b, err := os.ReadFile(filepath.Join(dir, "r.json"))
	if err != nil {
		t.Fatal(err)
	}
	var rep benchmark.Report
	if err := json.Unmarshal(b, &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Rows != 600 || len(rep.Items) == 0 {
		t.Fatalf("json report: %+v", rep)
	}
	for _, f := range []string{"readings.csv", "bench.db"} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Errorf("--keep: %v", err)
		}
	}

	out.Reset()
	errw.Reset()
	dir2 := t.TempDir()
	code = Main([]string{"bench", "--stations", "1", "--readings", "100", "--reps", "1", "--dir", dir2, "--format", "json", "--quiet"},
		strings.NewReader(""), &out, &errw)
	if code != ExitOK {
		t.Fatalf("exit %d: %s", code, errw.String())
	}
	if err := json.Unmarshal(out.Bytes(), &rep); err != nil || rep.Rows != 100 {
		t.Fatalf("--format json: %v %+v", err, rep)
	}
	if _, err := os.Stat(filepath.Join(dir2, "bench.db")); !os.IsNotExist(err) {
		t.Errorf("without --keep bench.db should be removed: %v", err)
	}

	if code := Main([]string{"bench", "--format", "xml"}, strings.NewReader(""), &out, &errw); code != ExitUsage {
		t.Errorf("--format xml: exit %d, want %d", code, ExitUsage)
	}
}
