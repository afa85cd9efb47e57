package csvimport

import (
	"fmt"
	"io"
)

// OnDuplicate says what a readings import does with a (series, time) that is
// already stored or appeared earlier in the same file.
type OnDuplicate string

const (
	DupError     OnDuplicate = "error"      // fail the whole import, change nothing
	DupKeepFirst OnDuplicate = "keep-first" // keep the earlier reading, count the row as duplicate
	DupReplace   OnDuplicate = "replace"    // overwrite a differing reading; count duplicate (and replaced if it differed)
)

// ParseOnDuplicate checks an OnDuplicate name; "" means DupError.
func ParseOnDuplicate(s string) (OnDuplicate, error) {
	switch OnDuplicate(s) {
	case "", DupError:
		return DupError, nil
	case DupKeepFirst, DupReplace:
		return OnDuplicate(s), nil
	}
	return "", fmt.Errorf("%w, got %q", ErrOnDuplicate, s)
}

// Progress is reported while a file is read.
type Progress struct {
	Rows       int64 // data records read so far
	Bytes      int64 // bytes of the file read so far
	TotalBytes int64 // size of the file, or -1 if unknown
}

// ReadingsOptions controls ImportReadings.
type ReadingsOptions struct {
	StationCol   string // default "station"
	TimeCol      string // default "time"
	ValueCol     string // default "value"
	QualifierCol string // default: "qualifier" if the header has it, else none
	VariableCol  string // column holding the variable name; excludes Variable
	Variable     string // fixed variable name for every row; excludes VariableCol
	Unit         string // unit of the series; "" leaves it unstated
	TZ           string // zone of zone-less times (timefmt.ParseZone: a name or a fixed offset); "" means UTC
	// CensorCol names a column of censoring remarks ('<', '>' or empty)
	// that mark the value of the same row; "" for none.
	CensorCol string
	// NoCensored rejects censored values ('<5', '>5', or a remark) instead
	// of storing them with their mark.
	NoCensored bool
	// MissingValues are raw value-cell texts that mean "no reading"
	// (matched exactly, e.g. "-999", "NA"); such rows are rejected with the
	// reason "declared missing-value marker" and counted in RowsMissing.
	MissingValues []string
	DecimalComma  bool // values use a comma as decimal separator
	Delimiter     byte // field separator; 0 means ','
	OnDuplicate   OnDuplicate
	// Progress, if set, is called now and then while the file is read, and
	// once at its end, from the importing goroutine.
	Progress func(Progress)
	// Stdin is read when the path is StdinPath (nil: os.Stdin).
	Stdin io.Reader
	// OnInsertPath, if set, is called once before the first row is read,
	// with whether full batches are written through SQLite's C API (true)
	// or through database/sql (false); a returned function runs when the
	// import ends. It lets the caller tune process-wide settings (such as
	// the garbage collector's target) for the path in use.
	OnInsertPath func(cLevel bool) (restore func())
	// RejectLimit fails the import above a share of rejected rows.
	RejectLimit RejectLimit
}

// StationsOptions controls ImportStations.
type StationsOptions struct {
	DecimalComma bool // latitude, longitude and elevation use a decimal comma
	Delimiter    byte // field separator; 0 means ','
	Progress     func(Progress)
	Stdin        io.Reader // read when the path is StdinPath (nil: os.Stdin)
	RejectLimit  RejectLimit
	// Again imports a file whose SHA-256 equals that of an earlier stations
	// batch (reported in ImportResult.SameFileBatch) instead of refusing it.
	Again bool
}

// StdinPath as an import path reads standard input (or the options' Stdin)
// instead of a file. The batch records its source as StdinName; the file is
// read once, as any other, so nothing is stored unless all of it was read.
const (
	StdinPath = "-"
	StdinName = "stdin"
)

// ImportResult is the accounting of one import batch.
type ImportResult struct {
	BatchID       int64
	Kind          string // "stations" or "readings"
	File          string // the path as given
	Source        string // the absolute path recorded in import_batches
	SHA256        string
	RowsRead      int64
	RowsStored    int64
	RowsRejected  int64
	RowsDuplicate int64
	RowsReplaced  int64
	// Readings only.
	RowsCensored int64 // of RowsStored: stored with a censoring mark
	RowsMissing  int64 // of RowsRejected: value cell was a declared missing-value marker
	// DuplicatesRecorded counts the rows of import_duplicates this batch
	// wrote: every duplicate under keep-first, the replaced ones under
	// replace.
	DuplicatesRecorded int64
	// SameFileBatch is the earliest finished batch of the same kind (readings
	// or stations) of a file with the same SHA-256 (0: none); the import went
	// ahead because duplicates are kept or replaced (readings) or Again was
	// set (stations).
	SameFileBatch   int64
	StationsCreated int64 // stations created with their id only
	SeriesCreated   int64
	SeriesWritten   int64 // series with rows in series_batches for this batch
	// RejectReasons counts the rejected rows by kind of reason, most
	// frequent first.
	RejectReasons []ReasonCount
}
