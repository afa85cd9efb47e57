package csvimport

import (
	"errors"
	"fmt"
)

// message names the file and, where there is one, the line.
type InputError struct {
	File string
	Line int // 0 when the problem is not tied to a line
	Msg  string
}

func (e *InputError) Error() string {
	if e.Line > 0 {
		return fmt.Sprintf("%s line %d: %s", e.File, e.Line, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.File, e.Msg)
}

// ErrDuplicate is wrapped by the error of an import that found a duplicate
// under OnDuplicate "error".
var ErrDuplicate = errors.New("duplicate reading")

// dupError is an InputError that also matches ErrDuplicate.
type dupError struct{ InputError }

func (e *dupError) Unwrap() error { return ErrDuplicate }
