package main

import (
	"errors"
	"fmt"
	"strings"
	"time"

	"trendsql/store"
	"trendsql/store/csvimport"
	"trendsql/store/demodata"
	"trendsql/store/summaries"
)

// The store packages return typed errors without command-line wording;
// the functions here add the hints that name this program's commands and
// flags. A worded error keeps the original in its chain, so errors.Is and
// errors.As still see it.

type worded struct {
	msg string
	err error
}

func (w *worded) Error() string { return w.msg }
func (w *worded) Unwrap() error { return w.err }

// withHint appends hint to err's message.
func withHint(err error, hint string) error { return &worded{msg: err.Error() + hint, err: err} }

// wordOpenError words the errors of opening a store.
func wordOpenError(err error) error {
	var se *store.SchemaError
	switch {
	case errors.As(err, &se):
		return withHint(err, fmt.Sprintf(": run `trendsql init --db %s` to migrate", se.Path))
	case errors.Is(err, store.ErrNoStore):
		return withHint(err, " (create one with `trendsql init` or `trendsql demo`)")
	}
	return err
}

// wordImportError words the input errors of `trendsql import`.
func wordImportError(err error) error {
	if errors.Is(err, csvimport.ErrNothingStored) || errors.Is(err, csvimport.ErrTooManyRejects) {
		return withHint(err, "\nnothing was recorded: fix the file or the options (e.g. --decimal-comma, --delimiter, --tz, --unit) and import it again")
	}
	var ie *csvimport.InputError
	if !errors.As(err, &ie) {
		return err
	}
	msg := err.Error()
	if ie.Separator != "" {
		q := fmt.Sprintf("separated by %q?", ie.Separator)
		msg = strings.Replace(msg, q, q+" (--delimiter)", 1)
	}
	switch {
	case errors.Is(err, csvimport.ErrMissingColumn) && ie.DefaultName:
		msg += "; name the column with --" + ie.MissingColumn + "-col"
	case errors.Is(err, csvimport.ErrNoVariable):
		msg += "; give a fixed variable name (--variable) or the column that holds it (--variable-col)"
	case errors.Is(err, csvimport.ErrDuplicate):
		msg += " (--on-duplicate keep-first keeps the earlier reading, replace overwrites it)"
	}
	if msg == err.Error() {
		return err
	}
	return &worded{msg: msg, err: err}
}

// wordDemoError words the refusals of `trendsql demo`.
func wordDemoError(err error) error {
	switch {
	case errors.Is(err, demodata.ErrStoreNotEmpty):
		return withHint(err, " (use --force to replace it, or choose another --db)")
	case errors.Is(err, demodata.ErrNotAStore):
		return withHint(err, ", choose another --db")
	}
	return err
}

// wordBusyError words the error of a command that gave up waiting for
// another writer: a store.BusyError, or SQLite's "database is locked" when
// a statement's own wait ran out.
func wordBusyError(err error) error {
	if errors.Is(err, store.ErrBusy) {
		return withHint(err, " (--wait DURATION waits longer; try again when it has finished)")
	}
	return withHint(err, "\nanother writer held the store for longer than --wait: try again when it has finished, or give a longer --wait")
}

// isBusyError reports whether err means another writer held the store for
// longer than the command waited.
func isBusyError(err error) bool { return errors.Is(err, store.ErrBusy) || store.IsBusy(err) }

// wordSummarizeError words the errors of `trendsql summarize`.
func wordSummarizeError(err error, wait time.Duration) error {
	var sel *summaries.SelectError
	switch {
	case errors.Is(err, summaries.ErrBusy) && wait == 0:
		return withHint(err, " (--wait DURATION waits for it)")
	case errors.Is(err, summaries.ErrBusy):
		return withHint(err, fmt.Sprintf(" and did not finish within --wait %s (a longer --wait waits for it)", wait))
	case errors.As(err, &sel):
		return &worded{msg: "summarize: select series (check --where): " + store.UserMessage(sel.Err), err: err}
	}
	return err
}
