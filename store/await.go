package store

import (
	"context"
	"errors"
	"fmt"
	"time"
)

// ErrBusy: another writer held the store for longer than the caller's wait.
var ErrBusy = errors.New("another writer holds the store")

// BusyError is returned when another writer held the store at Path for
// longer than Wait. It matches ErrBusy.
type BusyError struct {
	Path string
	Wait time.Duration // 0: the caller did not wait
	// What is what held it: "another writer" or "a summary run".
	What string
}

func (e *BusyError) Error() string {
	what := e.What
	if what == "" {
		what = "another writer"
	}
	if e.Wait <= 0 {
		return fmt.Sprintf("%s is busy: %s holds it", e.Path, what)
	}
	return fmt.Sprintf("%s is busy: %s held it for longer than the wait of %s", e.Path, what, e.Wait)
}

func (e *BusyError) Unwrap() error { return ErrBusy }

// WaitNotice is how long a writer waits for another writer before it
// calls its OnWait (a variable so tests can shorten it).
var WaitNotice = 500 * time.Millisecond

// waitPoll is how often a waiting writer tries again.
const waitPoll = 50 * time.Millisecond

// Wait is how long the store's writers wait for another writer (the
// busy timeout of its connections; 0: they fail at once).
func (s *Store) Wait() time.Duration { return s.wait }

// AwaitWriter returns once no other connection holds the store's write
// lock, taking and at once releasing it, so the caller's writes that
// follow start without waiting (unless yet another writer comes first:
// they then wait up to Wait, as every statement does). While it waits it
// calls the store's OnWait once, after WaitNotice; after Wait it returns a
// BusyError. A read-only store returns at once.
func (s *Store) AwaitWriter(ctx context.Context) error {
	if s.ReadOnly {
		return nil
	}
	return poll(ctx, s.wait, s.onWait, func() (bool, error) {
		conn, err := s.DB.Conn(ctx)
		if err != nil {
			return false, err
		}
		defer conn.Close()
		if _, err := conn.ExecContext(ctx, `PRAGMA busy_timeout = 0`); err != nil {
			return false, err
		}
		defer RestorePragma(conn, "busy_timeout", s.wait.Milliseconds())
		if _, err := conn.ExecContext(ctx, `BEGIN IMMEDIATE`); err != nil {
			if IsBusy(err) {
				return false, nil
			}
			return false, err
		}
		_, err = conn.ExecContext(ctx, `ROLLBACK`)
		return true, err
	}, &BusyError{Path: s.Path, Wait: s.wait})
}

// AwaitNotInUse is CheckNotInUse waiting up to wait for the store at path
// to be free, calling onWait (if set) once after WaitNotice.
func AwaitNotInUse(ctx context.Context, path string, wait time.Duration, onWait func()) error {
	var last error
	err := poll(ctx, wait, onWait, func() (bool, error) {
		last = CheckNotInUse(ctx, path)
		if errors.Is(last, ErrInUse) {
			return false, nil
		}
		return last == nil, last
	}, nil)
	if err == nil {
		return nil
	}
	if errors.Is(err, ErrBusy) && wait > 0 {
		return fmt.Errorf("%w; waited %s", last, wait)
	}
	if errors.Is(err, ErrBusy) {
		return last
	}
	return err
}

// poll calls try until it reports done, fails, ctx ends or wait has
// passed (then it returns busy, or ErrBusy when busy is nil); onWait, if
// set, is called once when the wait has lasted WaitNotice.
func poll(ctx context.Context, wait time.Duration, onWait func(), try func() (bool, error), busy error) error {
	start := time.Now()
	deadline := start.Add(max(wait, 0))
	noticed := onWait == nil
	for {
		done, err := try()
		if err != nil || done {
			return err
		}
		now := time.Now()
		if !now.Before(deadline) {
			if busy == nil {
				busy = ErrBusy
			}
			return busy
		}
		if !noticed && now.Sub(start) >= WaitNotice {
			noticed = true
			onWait()
		}
		select {
		case <-ctx.Done():
			return fmt.Errorf("stopped while waiting for another writer: %w", ctx.Err())
		case <-time.After(min(waitPoll, time.Until(deadline))):
		}
	}
}
