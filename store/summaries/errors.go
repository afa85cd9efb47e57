package summaries

import "errors"

// Errors of Run; the command line adds its own wording.
var (
	// ErrBusy: another summary run holds the store's lock and the caller
	// did not ask to wait.
	ErrBusy = errors.New("another summarize run is in progress on this store")
	// ErrNothingToDo: the selection (after ChangedOnly) is empty.
	ErrNothingToDo = errors.New("nothing to summarize")
)

// SelectError is the error of a series selection the store could not run,
// usually because Options.Where is not a valid SQL condition.
type SelectError struct{ Err error }

func (e *SelectError) Error() string { return "summarize: select series: " + e.Err.Error() }

func (e *SelectError) Unwrap() error { return e.Err }
