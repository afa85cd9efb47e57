package summaries

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"syscall"
	"time"

	"trendsql/store"
)

// lockPoll is how often a waiting run retries the summarize lock.
const lockPoll = 200 * time.Millisecond

// lockSummarize takes the store's summarize lock. With wait it retries
// until the lock is free or ctx ends (a blocking flock could not be
// interrupted: Ctrl-C would be ignored while waiting).
func lockSummarize(ctx context.Context, path string, wait bool) (release func(), err error) {
	// One lock file per store file, however the store was named: resolve
	// symbolic links so two paths to one file share the lock.
	if p, err := filepath.EvalSymlinks(path); err == nil {
		path = p
	}
	f, err := os.OpenFile(path+store.SummarizeLockSuffix, os.O_CREATE|os.O_RDWR, 0o644)
	if err != nil {
		return nil, fmt.Errorf("summarize lock: %w", err)
	}
	for {
		err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
		if err == nil {
			return func() { syscall.Flock(int(f.Fd()), syscall.LOCK_UN); f.Close() }, nil
		}
		if !errors.Is(err, syscall.EWOULDBLOCK) && !errors.Is(err, syscall.EINTR) {
			f.Close()
			return nil, fmt.Errorf("summarize lock: %w", err)
		}
		if !wait {
			f.Close()
			return nil, ErrBusy
		}
		select {
		case <-ctx.Done():
			f.Close()
			return nil, fmt.Errorf("summarize: stopped while waiting for another run to finish: %w", ctx.Err())
		case <-time.After(lockPoll):
		}
	}
}
