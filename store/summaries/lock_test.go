package summaries

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"testing"
	"time"

	"trendsql/sqlfuncs/stats"
	"trendsql/store"
)

// TestRunLockThroughHardLink: a run on a store opened through its path
// finds the summarize lock taken through a hard link of the file in
// another directory (the lock is keyed on the file's device and inode),
// and returns ErrBusy.
func TestRunLockThroughHardLink(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "archive.db")
	s, err := store.Open(ctx, path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	hard := filepath.Join(t.TempDir(), "second-name.db")
	if err := os.Link(path, hard); err != nil {
		t.Skipf("no hard links here: %v", err)
	}
	release, err := lockSummarize(ctx, hard, 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer release()
	o := Options{Analyze: stats.SummarizeSeries}
	if _, err := Run(ctx, s, o); !errors.Is(err, ErrBusy) {
		t.Errorf("run while a run holds the lock through a hard link: %v, want ErrBusy", err)
	}
}

// TestLockWaitSaysSoOnce: a run waiting for another run's lock calls its
// OnWait once and takes the lock when the other run releases it (released
// from OnWait, not after a sleep); without a wait it gives up at once
// without calling OnWait.
func TestLockWaitSaysSoOnce(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "archive.db")
	if err := os.WriteFile(path, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	first, err := lockSummarize(ctx, path, 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	called := 0
	if _, err := lockSummarize(ctx, path, 0, func() { called++ }); !errors.Is(err, ErrBusy) || called != 0 {
		t.Fatalf("no wait: %v, OnWait called %d times; want ErrBusy and none", err, called)
	}
	second, err := lockSummarize(ctx, path, time.Hour, func() {
		called++
		first()
	})
	if err != nil {
		t.Fatalf("waiting for the lock: %v", err)
	}
	second()
	if called != 1 {
		t.Errorf("OnWait called %d times, want 1", called)
	}
}
