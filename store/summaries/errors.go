package summaries

import "errors"

// ErrBusy is returned when another summarize run holds the store's lock and
// the caller did not ask to wait.
var ErrBusy = errors.New("another summarize run is in progress on this store (use --wait to wait for it)")

// ErrNothingToDo is returned when the selection (after --changed-only) is empty.
var ErrNothingToDo = errors.New("nothing to summarize")
