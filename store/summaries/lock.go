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

// lockSummarize takes the store's summarize locks (store.TrySummarizeLock:
// keyed on the store file's device and inode, and on its resolved path).
// With wait it retries until the locks are free or ctx ends (a blocking
// flock could not be interrupted: Ctrl-C would be ignored while waiting).
func lockSummarize(ctx context.Context, path string, wait bool) (release func(), err error) {
	for {
		release, err := store.TrySummarizeLock(path)
		if err == nil {
			return release, nil
		}
		if !errors.Is(err, store.ErrLockHeld) {
			return nil, err
		}
		if !wait {
			return nil, ErrBusy
		}
		select {
		case <-ctx.Done():
			return nil, fmt.Errorf("summarize: stopped while waiting for another run to finish: %w", ctx.Err())
		case <-time.After(lockPoll):
		}
	}
}
