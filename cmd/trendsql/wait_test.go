package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"trendsql/store"
)

// lockedBuffer is a bytes.Buffer safe for one writer and one reader.
type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

// holdWriteLock takes the store's write lock as an import holds it, until
// release is called.
func holdWriteLock(t *testing.T, db string) (release func()) {
	t.Helper()
	s, err := store.Open(context.Background(), db, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	tx, err := s.DB.BeginTx(context.Background(), nil) // immediate: the write lock
	if err != nil {
		s.Close()
		t.Fatal(err)
	}
	return func() { tx.Rollback(); s.Close() }
}

// TestWritersHonourWait: while another connection holds the write lock,
// every writable command with --wait 0 gives up at once, and with a short
// --wait after it, with exit code 3 and a message that the store is busy
// and names --wait; nothing is written. An import with a long --wait says
// once that it waits for another writer, and stores its rows once the lock
// is released (the release follows that message, not a sleep).
func TestWritersHonourWait(t *testing.T) {
	db := guardStore(t)
	dir := t.TempDir()
	csv := filepath.Join(dir, "more.csv")
	if err := os.WriteFile(csv, []byte("station,time,value\nS1,1600003600,2.5\nS1,1600007200,2.75\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	stations := filepath.Join(dir, "sites.csv")
	if err := os.WriteFile(stations, []byte("id,name\nS2,Second\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	release := holdWriteLock(t, db)
	for _, wait := range []string{"0", "150ms"} {
		for _, args := range [][]string{
			{"import", "readings", "--variable", "level", csv},
			{"import", "stations", stations},
			{"query", "--write", "INSERT INTO stations(id) VALUES ('S3')"},
			{"summarize", "--quiet"},
			{"demo", "--force", "--no-tour"},
			{"shell", "--write"},
		} {
			var out, errw bytes.Buffer
			full := append(append([]string{}, args...), "--db", db, "--wait", wait)
			code := Main(full, strings.NewReader("INSERT INTO stations(id) VALUES ('S4');\n"), &out, &errw)
			msg := errw.String()
			if code != ExitNothing || !strings.Contains(msg, "busy") && !strings.Contains(msg, "in use") || !strings.Contains(msg, "--wait") {
				t.Errorf("%s --wait %s while another writer holds the store: exit %d, stderr %q; want %d, busy, naming --wait", strings.Join(args[:2], " "), wait, code, msg, ExitNothing)
			}
			if wait == "0" && strings.Contains(msg, "waiting for another writer") {
				t.Errorf("%s --wait 0 said it waits: %q", args[0], msg)
			}
		}
	}
	if n := readingCount(t, db); n != "n\n1" {
		t.Fatalf("readings after the refused imports: %s, want 1", n)
	}

	var errw lockedBuffer
	done := make(chan int, 1)
	go func() {
		done <- Main([]string{"import", "readings", "--db", db, "--variable", "level", "--wait", "1h", csv}, strings.NewReader(""), &bytes.Buffer{}, &errw)
	}()
	for !strings.Contains(errw.String(), "waiting for another writer") {
		select {
		case code := <-done:
			release()
			t.Fatalf("import ended (exit %d) without waiting: %s", code, errw.String())
		case <-time.After(10 * time.Millisecond):
		}
	}
	release()
	if code := <-done; code != ExitOK {
		t.Fatalf("import after the other writer released the store: exit %d: %s", code, errw.String())
	}
	if strings.Count(errw.String(), "waiting for another writer") != 1 {
		t.Errorf("the waiting message is not said exactly once: %q", errw.String())
	}
	if n := readingCount(t, db); n != "n\n3" {
		t.Errorf("readings after the waiting import: %s, want 3", n)
	}
}
