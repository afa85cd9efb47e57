package store_test

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"testing"

	"trendsql/store"
)

// TestSummarizeLockKeyedOnIdentity: the summarize lock taken through one
// name of the store file is found through every other name: a hard link
// in another directory, a symbolic link to that link, and the original
// path; CheckNotInUse refuses the store through each. The lock files are
// named by the file's device and inode, not by any of its paths.
func TestSummarizeLockKeyedOnIdentity(t *testing.T) {
	ctx := context.Background()
	dir1, dir2 := t.TempDir(), t.TempDir()
	path := filepath.Join(dir1, "archive.db")
	s, err := store.Open(ctx, path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	s.Close()
	hard := filepath.Join(dir2, "other-name.db")
	if err := os.Link(path, hard); err != nil {
		t.Skipf("no hard links here: %v", err)
	}
	soft := filepath.Join(t.TempDir(), "via-symlink.db")
	if err := os.Symlink(hard, soft); err != nil {
		t.Fatal(err)
	}
	id1, beside1, err := store.SummarizeLockFiles(path)
	if err != nil {
		t.Fatal(err)
	}
	id2, beside2, err := store.SummarizeLockFiles(hard)
	if err != nil {
		t.Fatal(err)
	}
	if id1 == "" || id1 != id2 || beside1 == beside2 {
		t.Errorf("lock files: %q/%q through the first name, %q/%q through the hard link; want one identity lock, two path locks", id1, beside1, id2, beside2)
	}

	for _, holder := range []string{path, hard, soft} {
		release, err := store.TrySummarizeLock(holder)
		if err != nil {
			t.Fatalf("lock through %s: %v", holder, err)
		}
		for _, other := range []string{path, hard, soft} {
			if r2, err := store.TrySummarizeLock(other); !errors.Is(err, store.ErrLockHeld) {
				if r2 != nil {
					r2()
				}
				t.Errorf("held through %s, taken again through %s: %v, want ErrLockHeld", holder, other, err)
			}
			if !store.SummarizeLockHeld(other) {
				t.Errorf("held through %s: SummarizeLockHeld(%s) is false", holder, other)
			}
			if err := store.CheckNotInUse(ctx, other); !errors.Is(err, store.ErrInUse) {
				t.Errorf("held through %s: CheckNotInUse(%s) = %v, want ErrInUse", holder, other, err)
			}
		}
		release()
		if store.SummarizeLockHeld(hard) {
			t.Errorf("released through %s: still held", holder)
		}
	}
}
