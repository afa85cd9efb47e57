package summaries

import (
	"context"
	"errors"
	"fmt"
	"time"

	"trendsql/store"
)

// lockPoll is how often a waiting run retries the summarize lock.
const lockPoll = 100 * time.Millisecond

// lockSummarize takes the store's summarize locks (store.SummarizeLock:
// keyed on the store file's device and inode, and on its resolved path).
// It retries for up to wait (0: not at all) and until ctx ends (a blocking
// flock could not be interrupted: Ctrl-C would be ignored while waiting),
// calling onWait once after store.WaitNotice; the lock files stay open
// while it waits. After wait it returns ErrBusy.
func lockSummarize(ctx context.Context, path string, wait time.Duration, onWait func()) (release func(), err error) {
	l, err := store.OpenSummarizeLock(path)
	if err != nil {
		return nil, err
	}
	start := time.Now()
	deadline := start.Add(max(wait, 0))
	for {
		err := l.TryLock()
		if err == nil {
			return l.Close, nil
		}
		if !errors.Is(err, store.ErrLockHeld) {
			l.Close()
			return nil, err
		}
		now := time.Now()
		if !now.Before(deadline) {
			l.Close()
			return nil, ErrBusy
		}
		if onWait != nil && now.Sub(start) >= store.WaitNotice {
			onWait()
			onWait = nil
		}
		select {
		case <-ctx.Done():
			l.Close()
			return nil, fmt.Errorf("summarize: stopped while waiting for another run to finish: %w", ctx.Err())
		case <-time.After(min(lockPoll, time.Until(deadline))):
		}
	}
}
