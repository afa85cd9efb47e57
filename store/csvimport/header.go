package csvimport

import (
	"fmt"
	"strconv"
	"strings"
)

// header maps column names (case-insensitive, trimmed) to indexes.
type csvHeader struct {
	line  int // line number of the header
	names []string
	idx   map[string]int
	dup   map[string]bool
}

func newHeader(fields []string) *csvHeader {
	h := &csvHeader{idx: map[string]int{}, dup: map[string]bool{}}
	for i, f := range fields {
		n := strings.TrimSpace(f)
		h.names = append(h.names, n)
		k := strings.ToLower(n)
		if n == "" {
			continue
		}
		if _, ok := h.idx[k]; ok {
			h.dup[k] = true
		}
		h.idx[k] = i
	}
	return h
}

// find returns the index of column name, -1 if absent, or an error if the
// header has it twice.
func (h *csvHeader) find(name string) (int, error) {
	k := strings.ToLower(strings.TrimSpace(name))
	i, ok := h.idx[k]
	if !ok {
		return -1, nil
	}
	if h.dup[k] {
		return -1, fmt.Errorf("column %q appears more than once in the header", name)
	}
	return i, nil
}

// list quotes the header's column names for a message; a header read as
// one column that contains a likely separator gets a note saying so.
func (h *csvHeader) list() string {
	q := make([]string, len(h.names))
	for i, n := range h.names {
		q[i] = strconv.Quote(n)
	}
	s := strings.Join(q, ", ")
	if d := h.separator(); d != "" {
		s += fmt.Sprintf(" — one column only: are the fields separated by %q?", d)
	}
	return s
}

// separator returns the likely field separator of a header that read as
// one column containing ";", a tab, "," or "|" (in that order), else "".
func (h *csvHeader) separator() string {
	if len(h.names) == 1 {
		for _, d := range []string{";", "\t", ",", "|"} {
			if strings.Contains(h.names[0], d) {
				return d
			}
		}
	}
	return ""
}

// readHeader reads the header record.
func readHeader(cr *csvReader, name string) (*csvHeader, error) {
	rec, err := cr.next()
	if re, ok := err.(*ReadError); ok {
		return nil, &InputError{File: name, Line: re.Line, Msg: "header: " + re.Msg}
	}
	if err != nil {
		return nil, &InputError{File: name, Msg: "read: " + err.Error()}
	}
	if rec == nil {
		return nil, &InputError{File: name, Msg: "file is empty: a header line with column names is needed"}
	}
	if rec.bad != "" {
		return nil, &InputError{File: name, Line: rec.line, Msg: "header: " + rec.bad}
	}
	h := newHeader(rec.fields)
	h.line = rec.line
	return h, nil
}

// checkWidth returns a reject reason when a record is malformed or its field
// count differs from the header's, or when a column without a header name
// holds text.
func checkWidth(rec *csvRecord, h *csvHeader) string {
	if rec.bad != "" {
		return "malformed record: " + rec.bad
	}
	if len(rec.fields) != len(h.names) {
		return fmt.Sprintf("record has %d fields, the header has %d", len(rec.fields), len(h.names))
	}
	for i, n := range h.names {
		if n == "" && strings.TrimSpace(rec.fields[i]) != "" {
			return fmt.Sprintf("field %d has text %q but its column has no name in the header", i+1, rec.fields[i])
		}
	}
	return ""
}

func delimOf(d byte) byte {
	if d == 0 {
		return ','
	}
	return d
}
