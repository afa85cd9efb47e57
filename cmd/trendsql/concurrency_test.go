package main

import (
	"bytes"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"

	"trendsql/store"
	"trendsql/store/storetest"
)

// TestConcurrentWritersAndReaders runs, against one copy of the demo
// store, one `import readings`, one `summarize` and two readers (`query`
// processes, one after another, while the writers run) at once. Every
// command must succeed or give up with exit 3 and the busy message; every
// reader observation must show all or none of the import and all or none
// of the new summary run; afterwards the store passes SQLite's integrity
// check, holds every imported row, and the run is complete (ok, one
// summary per selected series) or absent.
func TestConcurrentWritersAndReaders(t *testing.T) {
	db := storetest.Copy(t, demoStore(t))
	exe := bin(t)
	const rows = 200000
	var csv bytes.Buffer
	csv.WriteString("station,time,value\n")
	for i := range rows {
		fmt.Fprintf(&csv, "CONC,%d,%d.25\n", 1500000000+3600*i, i%97)
	}
	file := filepath.Join(t.TempDir(), "concurrent.csv")
	if err := os.WriteFile(file, csv.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	ro := storetest.View(t, db).DB
	runsBefore := queryInt(t, ro, `SELECT coalesce(max(id), 0) FROM summary_runs`)

	sum := startSummarize(t, db, "--period", "1y", "--workers", "1", "--quiet")
	waitRunning(t, ro, sum, runsBefore) // the run has begun: the import below overlaps it
	imp := startImport(t, db, file)

	// Each observation is one SELECT, so one snapshot.
	observe := fmt.Sprintf(`SELECT
  (SELECT count(*) FROM readings r JOIN series s ON s.id = r.series_id WHERE s.station_id = 'CONC'),
  (SELECT count(*) FROM import_batches WHERE source = %s AND finished_at IS NOT NULL),
  (SELECT coalesce(max(id), 0) FROM summary_runs WHERE id > %d AND status = 'ok'),
  (SELECT count(*) FROM series_summaries WHERE run_id > %d)`, sqlQuote(file), runsBefore, runsBefore)
	type obs struct{ readings, batches, okRun, summaries int64 }
	var mu sync.Mutex
	var seen []obs
	var failures []string
	var wg sync.WaitGroup
	writersDone := make(chan struct{})
	for range 2 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := 0; i < 400; i++ {
				select {
				case <-writersDone:
					return
				default:
				}
				cmd := exec.Command(exe, "query", "--db", db, "--format", "csv", observe)
				cmd.Dir = workDir
				cmd.Env = envWithoutDB()
				var out, errb bytes.Buffer
				cmd.Stdout, cmd.Stderr = &out, &errb
				err := cmd.Run()
				mu.Lock()
				if err != nil {
					failures = append(failures, fmt.Sprintf("reader: %v: %s", err, errb.String()))
				} else if o, perr := parseObs(out.String()); perr != nil {
					failures = append(failures, fmt.Sprintf("reader output %q: %v", out.String(), perr))
				} else {
					seen = append(seen, obs{o[0], o[1], o[2], o[3]})
				}
				mu.Unlock()
			}
		}()
	}
	errSum, errImp := sum.wait(), imp.wait()
	close(writersDone)
	wg.Wait()
	for _, f := range failures {
		t.Error(f)
	}
	for _, w := range []struct {
		name string
		r    *bgRun
		err  error
	}{{"summarize", sum, errSum}, {"import", imp, errImp}} {
		msg := w.r.stderr.String()
		switch code := exitCode(w.err); {
		case code == ExitOK:
		case code == ExitNothing && strings.Contains(msg, "busy"):
			t.Logf("%s gave up on a busy store: %s", w.name, msg)
		default:
			t.Errorf("%s: exit %d, stderr %q; want 0, or 3 with the busy message", w.name, code, msg)
		}
	}

	checkIntegrity(t, db)
	final := storetest.View(t, db).DB
	wantReadings := int64(0)
	if exitCode(errImp) == ExitOK {
		wantReadings = rows
	}
	if n := queryInt(t, final, `SELECT count(*) FROM readings r JOIN series s ON s.id = r.series_id WHERE s.station_id = 'CONC'`); n != wantReadings {
		t.Errorf("imported readings stored: %d, want %d", n, wantReadings)
	}
	var runID, selected, summaries int64
	var status string
	err := final.QueryRow(`SELECT id, status, series_selected, (SELECT count(*) FROM series_summaries WHERE run_id = r.id) FROM summary_runs r WHERE id > ?`, runsBefore).Scan(&runID, &status, &selected, &summaries)
	switch {
	case exitCode(errSum) == ExitOK && (err != nil || status != "ok" || summaries != selected):
		t.Errorf("summary run after the concurrent run: id %d status %q, %d summaries of %d selected (%v); want ok and complete", runID, status, summaries, selected, err)
	case exitCode(errSum) != ExitOK && err == nil && status == "ok":
		t.Errorf("summarize failed but its run %d is ok", runID)
	}

	mixed := 0
	var during, after int
	for _, o := range seen {
		importAll := o.readings == wantReadings && o.batches == 1
		importNone := o.readings == 0 && o.batches == 0
		runAll := o.okRun == runID && o.summaries == summaries
		runNone := o.okRun == 0 && o.summaries == 0
		if !(importAll || importNone) || !(runAll || runNone) {
			mixed++
			if mixed <= 5 {
				t.Errorf("a reader saw a partial state: %+v (import: %d rows; run %d: %d summaries)", o, wantReadings, runID, summaries)
			}
		}
		if importNone || runNone {
			during++
		} else {
			after++
		}
	}
	t.Logf("%d reader observations (%d before a writer finished, %d after both), %d partial", len(seen), during, after, mixed)
	if len(seen) == 0 {
		t.Error("no reader observation")
	}
}

// envWithoutDB is the environment without $TRENDSQL_DB.
func envWithoutDB() []string {
	var env []string
	for _, kv := range os.Environ() {
		if !strings.HasPrefix(kv, store.EnvDB+"=") {
			env = append(env, kv)
		}
	}
	return env
}

// parseObs reads the last CSV line of the output: four integers.
func parseObs(s string) ([]int64, error) {
	lines := strings.Split(strings.TrimSpace(s), "\n")
	f := strings.Split(strings.TrimSpace(lines[len(lines)-1]), ",")
	if len(f) != 4 {
		return nil, fmt.Errorf("%d fields, want 4", len(f))
	}
	out := make([]int64, len(f))
	for i, v := range f {
		n, err := strconv.ParseInt(v, 10, 64)
		if err != nil {
			return nil, err
		}
		out[i] = n
	}
	return out, nil
}

// sqlQuote quotes s as an SQL string literal.
func sqlQuote(s string) string { return "'" + strings.ReplaceAll(s, "'", "''") + "'" }
