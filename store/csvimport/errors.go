package csvimport

import (
	"errors"
	"fmt"
)

// Errors of the import. An import that stops on a problem of its input file
// returns an *InputError whose Err, when set, is one of these (errors.Is
// finds it); the command line adds the wording that names its flags.
var (
	// ErrDuplicate: a reading was already stored or appeared earlier in
	// the file, and the duplicate rule is DupError.
	ErrDuplicate = errors.New("duplicate reading")
	// ErrMissingColumn: a column the import needs is not in the header
	// (InputError.Column names it, MissingColumn says which role).
	ErrMissingColumn = errors.New("column missing from the header")
	// ErrNoVariable: a readings file has no variable column and no fixed
	// variable was given.
	ErrNoVariable = errors.New("no variable")
	// ErrOnDuplicate: an unknown duplicate rule (see ParseOnDuplicate).
	ErrOnDuplicate = errors.New("duplicate rule must be error, keep-first or replace")
)

// InputError is a problem with the input file that stops the import. Its
// message names the file and, where there is one, the line.
type InputError struct {
	File   string
	Line   int    // 0 when the problem is not tied to a line
	Column string // the header column concerned, "" for none
	Msg    string
	// Err is the sentinel the error matches (nil for none).
	Err error
	// MissingColumn, with ErrMissingColumn, names what the missing column
	// was looked up for ("station", "time", "value", "qualifier",
	// "variable" or "censor"); DefaultName says the import looked for the default
	// name because the caller named no column.
	MissingColumn string
	DefaultName   bool
	// Separator is set when the header read as one column whose name
	// contains this character, which is then likely the file's field
	// separator.
	Separator string
}

func (e *InputError) Error() string {
	if e.Line > 0 {
		return fmt.Sprintf("%s line %d: %s", e.File, e.Line, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.File, e.Msg)
}

func (e *InputError) Unwrap() error { return e.Err }

// ErrAlreadyImported is wrapped by the error of an import of a file whose
// SHA-256 equals that of an earlier finished batch of its kind: a readings
// import under OnDuplicate "error", a stations import without Again.
// Nothing is written.
var ErrAlreadyImported = errors.New("file already imported")

// AlreadyImportedError names the file and the earlier batch.
type AlreadyImportedError struct {
	File   string
	SHA256 string
	Batch  int64 // the earliest batch with the same SHA-256
}

func (e *AlreadyImportedError) Error() string {
	return fmt.Sprintf("%s: the same file (SHA-256 %s) was already imported as batch %d; nothing was imported", e.File, e.SHA256, e.Batch)
}

// Unwrap matches ErrAlreadyImported and ErrDuplicate (every row of the file
// is a duplicate).
func (e *AlreadyImportedError) Unwrap() []error { return []error{ErrAlreadyImported, ErrDuplicate} }
