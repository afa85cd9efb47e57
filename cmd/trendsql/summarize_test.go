package main

// End-to-end checks of `trendsql summarize` through the built binary on
// copies of the demo store: crash safety under SIGKILL, --changed-only after
// a real import, readers in another process during a run, and the lock.

import (
	"bytes"
	"context"
	"database/sql"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"trendsql/store"
	"trendsql/store/storetest"
)

func queryInt(t *testing.T, db *sql.DB, q string, args ...any) int64 {
	t.Helper()
	var n int64
	if err := db.QueryRow(q, args...).Scan(&n); err != nil {
		t.Fatalf("%s: %v", q, err)
	}
	return n
}

// viewDigest renders latest_series_summaries in full, for before/after
// comparisons.
func viewDigest(t *testing.T, db *sql.DB) string {
	t.Helper()
	rows, err := db.Query(`SELECT * FROM latest_series_summaries ORDER BY series_id`)
	if err != nil {
		t.Fatal(err)
	}
	all := storetest.ScanAll(t, rows)
	var b strings.Builder
	for _, vals := range all {
		fmt.Fprintln(&b, vals...)
	}
	if len(all) == 0 {
		t.Fatal("latest_series_summaries is empty")
	}
	return b.String()
}

// bgRun is a trendsql process running in the background.
type bgRun struct {
	cmd    *exec.Cmd
	stderr bytes.Buffer
	done   chan struct{} // closed when the process has ended
	err    error         // its Wait error, valid after done
}

func (r *bgRun) wait() error { <-r.done; return r.err }

func (r *bgRun) ended() bool {
	select {
	case <-r.done:
		return true
	default:
		return false
	}
}

// startSummarize starts `trendsql summarize` in the background.
func startSummarize(t *testing.T, db string, args ...string) *bgRun {
	t.Helper()
	return startBackground(t, append([]string{"summarize", "--db", db}, args...)...)
}

// startBackground starts the binary with args in the background, without
// TRENDSQL_DB in its environment; it is killed when the test ends unless it
// has ended by then.
func startBackground(t *testing.T, args ...string) *bgRun {
	t.Helper()
	r := &bgRun{done: make(chan struct{})}
	r.cmd = exec.Command(bin(t), args...)
	r.cmd.Dir = workDir
	for _, kv := range os.Environ() {
		if !strings.HasPrefix(kv, store.EnvDB+"=") {
			r.cmd.Env = append(r.cmd.Env, kv)
		}
	}
	r.cmd.Stderr = &r.stderr
	if err := r.cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go func() { r.err = r.cmd.Wait(); close(r.done) }()
	t.Cleanup(func() {
		if !r.ended() {
			r.cmd.Process.Kill()
			<-r.done
		}
	})
	return r
}

// waitRunning polls until a summary_runs row with status 'running' and an
// id above after appears, and returns its id. It fails if the process ends
// first.
func waitRunning(t *testing.T, db *sql.DB, r *bgRun, after int64) int64 {
	t.Helper()
	for {
		var id int64
		err := db.QueryRow(`SELECT id FROM summary_runs WHERE status = 'running' AND id > ?`, after).Scan(&id)
		if err == nil {
			return id
		}
		if err != sql.ErrNoRows {
			t.Fatal(err)
		}
		if r.ended() {
			t.Fatalf("summarize ended (%v) before its run row appeared:\n%s", r.err, r.stderr.String())
		}
		time.Sleep(5 * time.Millisecond)
	}
}

// waitLockOpen polls until the process of r holds the store's summarize
// lock file open (a link in /proc/PID/fd), which it opens only after its
// interrupt handler is installed and just before it tries the lock. It
// fails if the process ends first, and skips where /proc is missing.
func waitLockOpen(t *testing.T, r *bgRun, db string) {
	t.Helper()
	real, err := filepath.EvalSymlinks(db)
	if err != nil {
		t.Fatal(err)
	}
	lock := real + ".summarize-lock"
	fdDir := fmt.Sprintf("/proc/%d/fd", r.cmd.Process.Pid)
	if _, err := os.Stat("/proc/self/fd"); err != nil {
		t.Skip("no /proc: cannot tell when the process reaches the lock")
	}
	for {
		fds, _ := os.ReadDir(fdDir)
		for _, fd := range fds {
			if target, err := os.Readlink(filepath.Join(fdDir, fd.Name())); err == nil && target == lock {
				return
			}
		}
		if r.ended() {
			t.Fatalf("summarize ended (%v) before it opened the lock file:\n%s", r.err, r.stderr.String())
		}
		time.Sleep(5 * time.Millisecond)
	}
}

func exitCode(err error) int {
	if ee, ok := err.(*exec.ExitError); ok {
		return ee.ExitCode()
	}
	if err != nil {
		return -1
	}
	return 0
}

// runCounts returns the series_summaries and series_correlograms rows of a run.
func runCounts(t *testing.T, db *sql.DB, run int64) (int64, int64) {
	t.Helper()
	return queryInt(t, db, `SELECT count(*) FROM series_summaries WHERE run_id = ?`, run),
		queryInt(t, db, `SELECT count(*) FROM series_correlograms WHERE run_id = ?`, run)
}

// killWhen sends SIGKILL to a background run as soon as ready() reports
// true, and fails unless the process died of that signal (a run that ended
// on its own first proves nothing about a crash).
func killWhen(t *testing.T, r *bgRun, what string, ready func() bool) {
	t.Helper()
	for !ready() {
		if r.ended() {
			t.Fatalf("summarize ended (%v) before %s:\n%s", r.err, what, r.stderr.String())
		}
		time.Sleep(2 * time.Millisecond)
	}
	if err := r.cmd.Process.Signal(syscall.SIGKILL); err != nil {
		t.Fatalf("kill: %v", err)
	}
	err := r.wait()
	if ws, ok := r.cmd.ProcessState.Sys().(syscall.WaitStatus); !ok || !ws.Signaled() || ws.Signal() != syscall.SIGKILL {
		t.Fatalf("summarize was not killed by SIGKILL %s (it ended with %v): the kill came too late to test a crash", what, err)
	}
}

// TestSummarizeSurvivesSIGKILL kills a running summarize twice — while it
// computes, and inside its final write transaction — and shows each time
// the store intact, the earlier run untouched and nothing of the killed run
// visible; the next run marks the dead run interrupted and succeeds.
func TestSummarizeSurvivesSIGKILL(t *testing.T) {
	db := storetest.Copy(t, demoStore(t))
	if _, errs, code := runBin(t, "", "summarize", "--db", db, "--period", "1y", "--quiet"); code != 0 {
		t.Fatalf("first summarize exited %d: %s", code, errs)
	}
	ro := storetest.View(t, db).DB
	first := queryInt(t, ro, `SELECT max(id) FROM summary_runs WHERE status = 'ok'`)
	ss1, cg1 := runCounts(t, ro, first)
	if ss1 < 40 || cg1 == 0 {
		t.Fatalf("first run stored %d summaries and %d correlogram rows", ss1, cg1)
	}
	before := viewDigest(t, ro)

	afterKill := func(killed int64) {
		t.Helper()
		checkIntegrity(t, db)
		var status string
		if err := ro.QueryRow(`SELECT status FROM summary_runs WHERE id = ?`, killed).Scan(&status); err != nil || status != "running" {
			t.Errorf("killed run %d: status %q (%v), want the dead process's 'running'", killed, status, err)
		}
		if ss, cg := runCounts(t, ro, killed); ss != 0 || cg != 0 {
			t.Errorf("killed run %d left %d summaries and %d correlogram rows visible", killed, ss, cg)
		}
		if ss, cg := runCounts(t, ro, first); ss != ss1 || cg != cg1 {
			t.Errorf("earlier run now has %d/%d rows, had %d/%d", ss, cg, ss1, cg1)
		}
		if after := viewDigest(t, ro); after != before {
			t.Errorf("latest_series_summaries changed after killing run %d", killed)
		}
	}
	interrupted := func(run int64) {
		t.Helper()
		var status string
		var msg sql.NullString
		if err := ro.QueryRow(`SELECT status, error FROM summary_runs WHERE id = ?`, run).Scan(&status, &msg); err != nil ||
			status != "interrupted" || !strings.Contains(msg.String, "process ended") {
			t.Errorf("killed run %d after the next run started: status %q, error %v (%v); want interrupted with a reason", run, status, msg, err)
		}
	}

	// 1. While computing: kill as soon as the run row is recorded (the
	// results are written only after every series is computed).
	run := startSummarize(t, db, "--period", "1y", "--workers", "1", "--quiet")
	killed1 := waitRunning(t, ro, run, first)
	killWhen(t, run, "the kill while computing", func() bool { return true })
	afterKill(killed1)

	// 2. Inside the write transaction: a long correlogram (--max-lag 5000)
	// makes the one final transaction write megabytes; its pages spill into
	// the WAL file before the commit, so a WAL grown by 1 MiB since the run
	// row appeared means the transaction is open. (Whether the kill came before the commit is
	// then checked by the run's status, not assumed.)
	run = startSummarize(t, db, "--period", "1y", "--max-lag", "5000", "--quiet")
	killed2 := waitRunning(t, ro, run, killed1)
	interrupted(killed1) // the lock holder cleaned up the dead run first
	walSize := func() int64 {
		fi, err := os.Stat(db + "-wal")
		if err != nil {
			return 0
		}
		return fi.Size()
	}
	base := walSize() // computing writes nothing: growth past this is the final transaction
	killWhen(t, run, "the write transaction spilled into the WAL", func() bool { return walSize() > base+1<<20 })
	afterKill(killed2)

	// The OS released the lock with the process: the next run needs no
	// --wait, marks the dead run interrupted and succeeds.
	if _, errs, code := runBin(t, "", "summarize", "--db", db, "--period", "1y", "--quiet"); code != 0 {
		t.Fatalf("summarize after the kills exited %d: %s", code, errs)
	}
	interrupted(killed2)
	next := queryInt(t, ro, `SELECT max(id) FROM summary_runs WHERE status = 'ok'`)
	if next <= killed2 {
		t.Fatalf("no successful run after the killed ones (latest ok %d, killed %d)", next, killed2)
	}
	if ss, cg := runCounts(t, ro, next); ss != ss1 || cg != cg1 {
		t.Errorf("run after the kills stored %d/%d rows, want %d/%d", ss, cg, ss1, cg1)
	}
	if n := queryInt(t, ro, `SELECT count(*) FROM latest_series_summaries WHERE run_id = ?`, next); n != ss1 {
		t.Errorf("view shows %d series from the new run, want %d", n, ss1)
	}
	checkIntegrity(t, db)
}

// TestSummarizeChangedOnlyAfterImport imports readings for exactly three
// demo series and checks that --changed-only recomputes exactly those.
func TestSummarizeChangedOnlyAfterImport(t *testing.T) {
	db := storetest.Copy(t, demoStore(t))
	ro := storetest.View(t, db).DB
	if n := queryInt(t, ro, `SELECT count(*) FROM series`); n < 40 {
		t.Fatalf("demo store has %d series, want 40 or more", n)
	}
	if _, errs, code := runBin(t, "", "summarize", "--db", db, "--period", "1y", "--quiet"); code != 0 {
		t.Fatalf("first summarize exited %d: %s", code, errs)
	}
	first := queryInt(t, ro, `SELECT max(id) FROM summary_runs WHERE status = 'ok'`)
	total := queryInt(t, ro, `SELECT count(*) FROM series_summaries WHERE run_id = ?`, first)

	// New readings on each series' own time grid, after its last reading:
	// a daily logged well, an hourly river gauge, a monthly manual sample.
	type target struct {
		station, variable string
		step              int64
		count             int
	}
	targets := []target{
		{"VOR-W03", "groundwater_level", 86400, 5},
		{"VOR-G04", "stage", 3600, 48},
		{"VOR-M02", "nitrate_n", 0, 1},
	}
	var csv strings.Builder
	csv.WriteString("station,variable,time,value\n")
	want := map[int64]int64{} // series id → readings after the import
	for _, tg := range targets {
		var id, last, n int64
		var v float64
		if err := ro.QueryRow(`SELECT s.id, max(r.t), count(*), avg(r.value) FROM series s JOIN readings r ON r.series_id = s.id
			WHERE s.station_id = ? AND s.variable = ?`, tg.station, tg.variable).Scan(&id, &last, &n, &v); err != nil {
			t.Fatal(err)
		}
		step := tg.step
		if step == 0 {
			step = 30 * 86400
		}
		for k := 1; k <= tg.count; k++ {
			fmt.Fprintf(&csv, "%s,%s,%d,%.3f\n", tg.station, tg.variable, last+int64(k)*step, v)
		}
		want[id] = n + int64(tg.count)
	}
	file := filepath.Join(t.TempDir(), "new-readings.csv")
	if err := os.WriteFile(file, []byte(csv.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, errs, code := runBin(t, "", "import", "readings", "--db", db, file); code != 0 {
		t.Fatalf("import exited %d: %s", code, errs)
	}
	batch := queryInt(t, ro, `SELECT max(id) FROM import_batches`)
	if n := queryInt(t, ro, `SELECT count(*) FROM series_batches WHERE batch_id = ?`, batch); n != 3 {
		t.Fatalf("the import recorded %d series in series_batches, want 3", n)
	}

	_, errs, code := runBin(t, "", "summarize", "--db", db, "--period", "1y", "--changed-only", "--quiet")
	if code != 0 {
		t.Fatalf("summarize --changed-only exited %d: %s", code, errs)
	}
	if wantMsg := fmt.Sprintf("3 series computed, %d unchanged skipped", total-3); !strings.Contains(errs, wantMsg) {
		t.Errorf("summary line %q lacks %q", errs, wantMsg)
	}
	if strings.Count(errs, "\n") != 1 {
		t.Errorf("summarize without a terminal printed %q; want one summary line (cron)", errs)
	}
	second := queryInt(t, ro, `SELECT max(id) FROM summary_runs WHERE status = 'ok'`)
	rows, err := ro.Query(`SELECT series_id, n FROM series_summaries WHERE run_id = ? ORDER BY series_id`, second)
	if err != nil {
		t.Fatal(err)
	}
	got := map[int64]int64{}
	for rows.Next() {
		var id, n int64
		if err := rows.Scan(&id, &n); err != nil {
			t.Fatal(err)
		}
		got[id] = n
	}
	rows.Close()
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("changed-only run summarised (series → n) %v, want %v", got, want)
	}
	var sel, comp, skip int64
	if err := ro.QueryRow(`SELECT series_selected, series_computed, series_skipped FROM summary_runs WHERE id = ?`, second).Scan(&sel, &comp, &skip); err != nil {
		t.Fatal(err)
	}
	if sel != total || comp != 3 || skip != total-3 {
		t.Errorf("run counts selected/computed/skipped = %d/%d/%d, want %d/3/%d", sel, comp, skip, total, total-3)
	}
	// The view: new results for the three, the first run's for the rest.
	rows, err = ro.Query(`SELECT series_id, run_id FROM latest_series_summaries`)
	if err != nil {
		t.Fatal(err)
	}
	seen := 0
	for rows.Next() {
		var id, run int64
		if err := rows.Scan(&id, &run); err != nil {
			t.Fatal(err)
		}
		seen++
		wantRun := first
		if _, ok := want[id]; ok {
			wantRun = second
		}
		if run != wantRun {
			t.Errorf("latest_series_summaries: series %d from run %d, want %d", id, run, wantRun)
		}
	}
	rows.Close()
	if int64(seen) != total {
		t.Errorf("latest_series_summaries has %d rows, want %d", seen, total)
	}

	// Nothing new since: exit code 3 and a clear message, no run recorded.
	runsBefore := queryInt(t, ro, `SELECT count(*) FROM summary_runs`)
	_, errs, code = runBin(t, "", "summarize", "--db", db, "--period", "1y", "--changed-only", "--quiet")
	if code != ExitNothing || !strings.Contains(errs, "nothing to do") || strings.Count(errs, "\n") != 1 {
		t.Errorf("second --changed-only: exit %d, stderr %q; want %d and one line saying 'nothing to do'", code, errs, ExitNothing)
	}
	if n := queryInt(t, ro, `SELECT count(*) FROM summary_runs`); n != runsBefore {
		t.Errorf("a run with nothing to do recorded a run row (%d → %d)", runsBefore, n)
	}
	checkIntegrity(t, db)
}

// TestSummarizeReadersSeeOldOrNew polls, from this process, the results of
// a run that another process is writing: every observation (one SELECT, so
// one snapshot) shows either none or all of the new run.
func TestSummarizeReadersSeeOldOrNew(t *testing.T) {
	db := storetest.Copy(t, demoStore(t))
	// A long correlogram makes the final write transaction large.
	args := []string{"--period", "1y", "--max-lag", "400", "--quiet"}
	if _, errs, code := runBin(t, "", append([]string{"summarize", "--db", db}, args...)...); code != 0 {
		t.Fatalf("first summarize exited %d: %s", code, errs)
	}
	ro := storetest.View(t, db).DB
	first := queryInt(t, ro, `SELECT max(id) FROM summary_runs WHERE status = 'ok'`)
	ss1, cg1 := runCounts(t, ro, first)
	nSeries := queryInt(t, ro, `SELECT count(*) FROM series`)

	bg := startSummarize(t, db, args...)
	run := waitRunning(t, ro, bg, first)
	type obs struct {
		status              string
		ss, cg, view, total int64
	}
	observe := func() obs {
		var o obs
		if err := ro.QueryRow(`SELECT
			(SELECT status FROM summary_runs WHERE id = ?1),
			(SELECT count(*) FROM series_summaries WHERE run_id = ?1),
			(SELECT count(*) FROM series_correlograms WHERE run_id = ?1),
			(SELECT count(*) FROM latest_series_summaries WHERE run_id = ?1),
			(SELECT count(*) FROM latest_series_summaries)`, run).Scan(&o.status, &o.ss, &o.cg, &o.view, &o.total); err != nil {
			t.Fatal(err)
		}
		return o
	}
	var during, after int
	var last obs
	for finished := false; !finished; {
		if bg.ended() {
			if bg.err != nil {
				t.Fatalf("summarize: %v\n%s", bg.err, bg.stderr.String())
			}
			finished = true
		}
		o := observe()
		last = o
		switch {
		case o.status == "running" && o.ss == 0 && o.cg == 0 && o.view == 0 && o.total == nSeries:
			during++
		case o.status == "ok" && o.ss == ss1 && o.cg == cg1 && o.view == nSeries && o.total == nSeries:
			after++
		default:
			t.Fatalf("a reader saw a mixed state: %+v (full run: %d summaries, %d correlogram rows, %d series)", o, ss1, cg1, nSeries)
		}
	}
	if during == 0 || after == 0 || last.status != "ok" {
		t.Errorf("observations: %d during the run, %d after, last %+v; want both kinds", during, after, last)
	}
	t.Logf("%d observations of the old results and %d of the new, none mixed", during, after)
	checkIntegrity(t, db)
}

// TestSummarizeLock: a second summarize while one runs exits 3 with a clear
// message; with --wait it runs after the first has finished.
func TestSummarizeLock(t *testing.T) {
	db := storetest.Copy(t, demoStore(t))
	ro := storetest.View(t, db).DB
	// One worker and a long correlogram keep the first run busy for seconds.
	a := startSummarize(t, db, "--period", "1y", "--workers", "1", "--max-lag", "5000", "--quiet")
	runA := waitRunning(t, ro, a, 0)

	_, errs, code := runBin(t, "", "summarize", "--db", db, "--period", "1y", "--quiet", "--wait", "0")
	if code != ExitNothing || !strings.Contains(errs, "another summarize run is in progress") || !strings.Contains(errs, "--wait") {
		t.Errorf("summarize during a run: exit %d, stderr %q; want %d and a message naming --wait", code, errs, ExitNothing)
	}
	if a.ended() {
		t.Fatal("the first run ended before the busy check: the check proved nothing")
	}
	if n := queryInt(t, ro, `SELECT count(*) FROM summary_runs`); n != 1 {
		t.Errorf("the refused run recorded a run row (%d rows)", n)
	}

	// Ctrl-C while waiting ends the waiting process, before the first run
	// has finished, without a run row.
	d := startSummarize(t, db, "--period", "1y", "--wait", "1h", "--quiet")
	waitLockOpen(t, d, db) // its interrupt handler is installed once it reaches the lock
	if err := d.cmd.Process.Signal(os.Interrupt); err != nil {
		t.Fatal(err)
	}
	if err := d.wait(); exitCode(err) != ExitFailed {
		t.Errorf("summarize --wait after SIGINT: %v, want exit %d\n%s", err, ExitFailed, d.stderr.String())
	}
	if a.ended() {
		t.Error("the first run ended before the interrupted waiter: SIGINT did not end the wait")
	}
	if n := queryInt(t, ro, `SELECT count(*) FROM summary_runs`); n != 1 {
		t.Errorf("the interrupted waiter recorded a run row (%d rows)", n)
	}

	c := startSummarize(t, db, "--period", "1y", "--wait", "1h", "--quiet")
	if err := a.wait(); err != nil {
		t.Fatalf("first summarize: %v\n%s", err, a.stderr.String())
	}
	if err := c.wait(); err != nil {
		t.Fatalf("summarize --wait: %v\n%s", err, c.stderr.String())
	}
	var aStatus, aFinished, cStatus, cStarted string
	if err := ro.QueryRow(`SELECT status, finished_at FROM summary_runs WHERE id = ?`, runA).Scan(&aStatus, &aFinished); err != nil {
		t.Fatal(err)
	}
	if err := ro.QueryRow(`SELECT status, started_at FROM summary_runs WHERE id > ? ORDER BY id LIMIT 1`, runA).Scan(&cStatus, &cStarted); err != nil {
		t.Fatalf("no run row from summarize --wait: %v", err)
	}
	if aStatus != "ok" || cStatus != "ok" || cStarted < aFinished {
		t.Errorf("runs: first %s finished %s; waiting run %s started %s; want both ok and the second to start after the first finished",
			aStatus, aFinished, cStatus, cStarted)
	}
	if n := queryInt(t, ro, `SELECT count(*) FROM summary_runs`); n != 2 {
		t.Errorf("%d run rows, want 2", n)
	}
	checkIntegrity(t, db)
}

// TestSummarizeOnTerminal: on a terminal (a pseudo-terminal made by
// util-linux script(1); skipped when absent) summarize shows a progress bar
// and the reading note; --quiet drops the bar. Without a terminal the other
// tests check that it prints one line.
func TestSummarizeOnTerminal(t *testing.T) {
	scriptBin, err := exec.LookPath("script")
	if err != nil {
		t.Skip("script(1) not installed: cannot make a pseudo-terminal")
	}
	db := storetest.Copy(t, demoStore(t))
	for _, quiet := range []bool{false, true} {
		line := bin(t) + " summarize --db " + db + " --period 1y"
		if quiet {
			line += " --quiet"
		}
		ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute) // guards against a hang only
		cmd := exec.CommandContext(ctx, scriptBin, "-qfec", line, "/dev/null")
		cmd.Env = append(os.Environ(), "TERM=dumb")
		raw, err := cmd.Output()
		cancel()
		if err != nil {
			t.Fatalf("summarize on a terminal (quiet %v): %v\n%s", quiet, err, raw)
		}
		out := string(raw)
		if !strings.Contains(out, "series computed") || !strings.Contains(out, "not causal findings") {
			t.Errorf("terminal output (quiet %v) lacks the summary or the note:\n%q", quiet, out)
		}
		if bar := strings.Contains(out, "summarizing"); bar == quiet {
			t.Errorf("terminal output (quiet %v): progress bar shown = %v:\n%q", quiet, bar, out)
		}
	}
	checkIntegrity(t, db)
}
