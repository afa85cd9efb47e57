package main

import (
	"bufio"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"trendsql/store/storetest"
)

// startImport starts `trendsql import readings` of file in the background.
func startImport(t *testing.T, db, file string) *bgRun {
	t.Helper()
	return startBackground(t, "import", "readings", "--variable", "level", "--db", db, file)
}

// readOffset is how far the process of r has read file, from
// /proc/PID/fdinfo (-1 while the file is not open).
func readOffset(r *bgRun, file string) int64 {
	dir := fmt.Sprintf("/proc/%d/fd", r.cmd.Process.Pid)
	fds, _ := os.ReadDir(dir)
	for _, fd := range fds {
		if target, err := os.Readlink(filepath.Join(dir, fd.Name())); err != nil || target != file {
			continue
		}
		f, err := os.Open(fmt.Sprintf("/proc/%d/fdinfo/%s", r.cmd.Process.Pid, fd.Name()))
		if err != nil {
			return -1
		}
		defer f.Close()
		sc := bufio.NewScanner(f)
		for sc.Scan() {
			if v, ok := strings.CutPrefix(sc.Text(), "pos:"); ok {
				n, _ := strconv.ParseInt(strings.TrimSpace(v), 10, 64)
				return n
			}
		}
	}
	return -1
}

// TestImportSurvivesSIGKILL kills `trendsql import` with SIGKILL after it
// has read a tenth, half and nine tenths of its file: each time the store
// passes the integrity check and holds nothing of the killed import (no
// reading, no batch); a final import stores every row.
func TestImportSurvivesSIGKILL(t *testing.T) {
	if _, err := os.Stat("/proc/self/fdinfo"); err != nil {
		t.Skip("no /proc: cannot tell how far the import has read")
	}
	dir := t.TempDir()
	db := filepath.Join(dir, "crash.db")
	file := filepath.Join(dir, "big.csv")
	const rows = 400_000
	var b strings.Builder
	b.WriteString("station,time,value\n")
	for i := range rows {
		fmt.Fprintf(&b, "S%d,%d,%d.25\n", i%20, 1_600_000_000+3600*(i/20), i%97)
	}
	if err := os.WriteFile(file, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	size := int64(b.Len())
	if _, errs, code := runBin(t, "", "init", "--db", db); code != 0 {
		t.Fatal(errs)
	}
	for _, share := range []float64{0.1, 0.5, 0.9} {
		r := startImport(t, db, file)
		for readOffset(r, file) < int64(share*float64(size)) {
			if r.ended() {
				t.Fatalf("import ended (%v) before it read %.0f%% of the file:\n%s", r.err, 100*share, r.stderr.String())
			}
			time.Sleep(time.Millisecond)
		}
		r.cmd.Process.Signal(syscall.SIGKILL)
		r.wait()
		if ws, ok := r.cmd.ProcessState.Sys().(syscall.WaitStatus); !ok || !ws.Signaled() {
			t.Fatalf("the import at %.0f%% was not killed (%v)", 100*share, r.err)
		}
		s := storetest.OpenReadOnly(t, db) // fails the test unless integrity_check says ok
		var readings, batches int64
		s.DB.QueryRow(`SELECT count(*) FROM readings`).Scan(&readings)
		s.DB.QueryRow(`SELECT count(*) FROM import_batches`).Scan(&batches)
		s.Close()
		if readings != 0 || batches != 0 {
			t.Fatalf("after a kill at %.0f%%: %d readings, %d batches of the killed import are visible", 100*share, readings, batches)
		}
	}
	if _, errs, code := runBin(t, "", "import", "readings", "--variable", "level", "--db", db, file); code != 0 {
		t.Fatalf("import after the kills: %s", errs)
	}
	s := storetest.OpenReadOnly(t, db)
	var n int64
	s.DB.QueryRow(`SELECT count(*) FROM readings`).Scan(&n)
	if n != rows {
		t.Fatalf("%d readings after the final import, want %d", n, rows)
	}
}
