package summaries

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"testing"

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
