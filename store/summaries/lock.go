package summaries

import (
	"context"
	"errors"
	"fmt"
	"time"

	"trendsql/store"
)

// lockPoll is how often a waiting run retries the summarize lock.
const lockPoll = 200 * time.Millisecond

// lockSummarize takes the store's summarize locks (store.SummarizeLock:
// keyed on the store file's device and inode, and on its resolved path).
// With wait it retries until the locks are free or ctx ends (a blocking
// flock could not be interrupted: Ctrl-C would be ignored while waiting);
// the lock files stay open while it waits.
func lockSummarize(ctx context.Context, path string, wait bool) (release func(), err error) {
	l, err := store.OpenSummarizeLock(path)
	if err != nil {
		return nil, err
	}
	for {
		err := l.TryLock()
		if err == nil {
			return l.Close, nil
		}
		if !errors.Is(err, store.ErrLockHeld) {
			l.Close()
			return nil, err
		}
		if !wait {
			l.Close()
			return nil, ErrBusy
		}
		select {
		case <-ctx.Done():
			l.Close()
			return nil, fmt.Errorf("summarize: stopped while waiting for another run to finish: %w", ctx.Err())
		case <-time.After(lockPoll):
		}
	}
}
