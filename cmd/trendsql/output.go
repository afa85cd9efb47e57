package main

import (
	"bytes"
	"database/sql"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Output formats for results (query, shell, functions).
const (
	FormatTable  = "table"  // aligned columns under a rule
	FormatCSV    = "csv"    // RFC 4180, a header line, NULL as an empty field
	FormatJSON   = "json"   // one array of objects, column order kept; see jsonValue for infinities
	FormatFields = "fields" // one field per line, rows one after another: for wide results
)

// formatNames lists the formats for flag help and messages.
const formatNames = "table, csv, json or fields"

// nullMark is how the table and fields formats show SQL NULL, distinct
// from any text.
const nullMark = "∅"

// cutMark ends a table cell cut to fit the terminal.
const cutMark = "…"

func validFormat(f string) bool {
	return f == FormatTable || f == FormatCSV || f == FormatJSON || f == FormatFields
}

// outputOptions says how results are rendered.
type outputOptions struct {
	format string
	// width is the terminal width the table format fits its rows to,
	// cutting the widest cells (marked with cutMark); 0 means no limit and
	// no cell is ever cut (output to a pipe or a file).
	width int
	// nestJSON puts text values that are JSON objects or arrays (the JSON
	// results of the SQL functions) into the json format as JSON, not as
	// strings.
	nestJSON bool
}

// rowSource is a result set: *sql.Rows, or rows built in memory.
type rowSource interface {
	Columns() ([]string, error)
	Next() bool
	Scan(dest ...any) error
	Err() error
}

var _ rowSource = (*sql.Rows)(nil)

// writeRows renders a result set and returns the row count. A statement
// without result columns prints nothing.
func writeRows(w io.Writer, rows rowSource, o outputOptions) (int, error) {
	cols, err := rows.Columns()
	if err != nil {
		return 0, err
	}
	if len(cols) == 0 {
		for rows.Next() {
		}
		return 0, rows.Err()
	}
	vals := make([]any, len(cols))
	ptrs := make([]any, len(cols))
	for i := range vals {
		ptrs[i] = &vals[i]
	}
	next := func() (bool, error) {
		if !rows.Next() {
			return false, rows.Err()
		}
		return true, rows.Scan(ptrs...)
	}
	switch o.format {
	case FormatCSV:
		return writeCSV(w, cols, vals, next)
	case FormatJSON:
		return writeJSON(w, cols, vals, next, o.nestJSON)
	case FormatFields:
		return writeFields(w, cols, vals, next)
	default:
		return writeTable(w, cols, vals, next, o.width)
	}
}

func writeCSV(w io.Writer, cols []string, vals []any, next func() (bool, error)) (int, error) {
	cw := csv.NewWriter(w)
	cw.Write(cols)
	rec := make([]string, len(cols))
	n := 0
	for {
		ok, err := next()
		if err != nil || !ok {
			cw.Flush()
			if err == nil {
				err = cw.Error()
			}
			return n, err
		}
		for i, v := range vals {
			rec[i] = fullText(v, true)
		}
		cw.Write(rec)
		n++
	}
}

func writeJSON(w io.Writer, cols []string, vals []any, next func() (bool, error), nest bool) (int, error) {
	keys := make([]string, len(cols))
	for i, c := range cols {
		keys[i] = jsonString(c)
	}
	var b strings.Builder
	b.WriteString("[")
	n := 0
	for {
		ok, err := next()
		if err != nil {
			return n, err
		}
		if !ok {
			break
		}
		if n > 0 {
			b.WriteString(",")
		}
		b.WriteString("\n  {")
		for i := range cols {
			if i > 0 {
				b.WriteString(", ")
			}
			b.WriteString(keys[i] + ": " + jsonValue(vals[i], nest))
		}
		b.WriteString("}")
		n++
		if b.Len() > 1<<16 {
			if _, err := io.WriteString(w, b.String()); err != nil {
				return n, err
			}
			b.Reset()
		}
	}
	if n > 0 {
		b.WriteString("\n")
	}
	b.WriteString("]\n")
	_, err := io.WriteString(w, b.String())
	return n, err
}

// writeFields prints each row as one "name  value" line per column under a
// numbered heading: wide results read top to bottom instead of running off
// the screen. Values are never cut; line ends inside a value are shown
// as ⏎.
func writeFields(w io.Writer, cols []string, vals []any, next func() (bool, error)) (int, error) {
	nameWidth := 0
	for _, c := range cols {
		nameWidth = max(nameWidth, utf8.RuneCountInString(c))
	}
	n := 0
	for {
		ok, err := next()
		if err != nil {
			return n, err
		}
		if !ok {
			break
		}
		n++
		var b strings.Builder
		fmt.Fprintf(&b, "── row %d\n", n)
		for i, c := range cols {
			b.WriteString(c + strings.Repeat(" ", nameWidth-utf8.RuneCountInString(c)) + "  " + displayText(vals[i]) + "\n")
		}
		if _, err := io.WriteString(w, b.String()); err != nil {
			return n, err
		}
	}
	_, err := io.WriteString(w, rowCount(n, false)+"\n")
	return n, err
}

// tableBuffer is how many rows the table format reads before fixing the
// column widths.
const tableBuffer = 5000

// minCutWidth is the narrowest a cell is cut to when fitting a terminal.
const minCutWidth = 8

// writeTable prints aligned columns: widths come from the first tableBuffer
// rows; later rows stream with those widths (a longer later cell overflows
// its column, and is cut only under a terminal width), so a huge result
// does not have to fit in memory.
func writeTable(w io.Writer, cols []string, vals []any, next func() (bool, error), width int) (int, error) {
	t := &table{w: w, cols: cols, numeric: make([]bool, len(cols)), maxWidth: width}
	for i := range t.numeric {
		t.numeric[i] = true
	}
	var buffered [][]string
	n := 0
	for {
		ok, err := next()
		if err != nil {
			return n, err
		}
		if !ok {
			break
		}
		rec := make([]string, len(cols))
		for i, v := range vals {
			rec[i] = displayText(v)
			switch v.(type) {
			case int64, float64, nil:
			default:
				if t.width == nil {
					t.numeric[i] = false
				}
			}
		}
		n++
		if t.width != nil {
			t.row(rec, false)
			continue
		}
		buffered = append(buffered, rec)
		if len(buffered) == tableBuffer {
			t.start(buffered)
			buffered = nil
		}
	}
	if t.width == nil {
		t.start(buffered)
	}
	_, err := io.WriteString(w, t.footer(n)+"\n")
	return n, err
}

// rowCount is the line under a table or field list.
func rowCount(n int, cut bool) string {
	s := "→ " + plural(n, "row", "rows")
	if n == 0 {
		s = "→ no rows"
	}
	if cut {
		s += " (cells ending in " + cutMark + " are cut to fit the terminal; --format csv or fields, or --out FILE, shows them whole)"
	}
	return s
}

// footer is the line under the table: the row count, what was cut, and
// when even cut rows are wider than the terminal (they wrap), the layout
// that reads them.
func (t *table) footer(n int) string {
	if t.tooWide {
		return rowCount(n, false) + " (rows are wider than the terminal even with cells cut to " + strconv.Itoa(minCutWidth) + " characters: --format fields shows one field per line)"
	}
	return rowCount(n, t.cut)
}

// plural words a count: "1 row", "2 rows".
func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return strconv.Itoa(n) + " " + many
}

// table draws rows with fixed column widths.
type table struct {
	w        io.Writer
	cols     []string
	numeric  []bool
	maxWidth int   // terminal width to fit, 0 = none
	width    []int // column widths, set by start
	cut      bool  // a cell was cut
	tooWide  bool  // rows are wider than maxWidth even with cut cells
}

// drawTable prints a complete table (header, rule and rows) without a row
// count, fitted to no terminal: the layout of the bench report.
func drawTable(w io.Writer, cols []string, rows [][]string, numeric []bool) {
	t := &table{w: w, cols: cols, numeric: numeric}
	t.start(rows)
}

// start fixes the widths from the buffered rows and prints the header, the
// rule and those rows.
func (t *table) start(rows [][]string) {
	t.width = make([]int, len(t.cols))
	for i, c := range t.cols {
		// At least one character, so a later longer cell can be cut to
		// the mark.
		t.width[i] = max(1, utf8.RuneCountInString(c))
	}
	for _, r := range rows {
		for i, c := range r {
			t.width[i] = max(t.width[i], utf8.RuneCountInString(c))
		}
	}
	if t.maxWidth > 0 {
		t.fit()
	}
	t.row(t.cols, true)
	rule := make([]string, len(t.cols))
	for i := range t.cols {
		rule[i] = strings.Repeat("─", t.width[i])
	}
	t.row(rule, true)
	for _, r := range rows {
		t.row(r, false)
	}
}

// fit narrows the widest columns, one character at a time, until a row
// fits maxWidth or every column is at minCutWidth.
func (t *table) fit() {
	total := 2 * (len(t.width) - 1)
	for _, x := range t.width {
		total += x
	}
	for total > t.maxWidth {
		widest := 0
		for i, x := range t.width {
			if x > t.width[widest] {
				widest = i
			}
		}
		if t.width[widest] <= minCutWidth {
			t.tooWide = true
			return
		}
		t.width[widest]--
		total--
	}
}

// row prints one row padded to the widths; numbers are right-aligned. Under
// a terminal width a longer cell is cut and ends in cutMark.
func (t *table) row(r []string, header bool) {
	var b strings.Builder
	for i, c := range r {
		if i > 0 {
			b.WriteString("  ")
		}
		l := utf8.RuneCountInString(c)
		if l > t.width[i] && t.maxWidth > 0 {
			rs := []rune(c)
			c = string(rs[:t.width[i]-1]) + cutMark
			l = t.width[i]
			t.cut = true
		}
		pad := strings.Repeat(" ", max(0, t.width[i]-l))
		switch {
		case t.numeric[i] && !header:
			b.WriteString(pad + c)
		case i == len(r)-1:
			b.WriteString(c)
		default:
			b.WriteString(c + pad)
		}
	}
	fmt.Fprintln(t.w, strings.TrimRight(b.String(), " "))
}

// displayText renders a value for the table and fields formats: NULL as
// nullMark, floats to 10 significant digits, line ends as ⏎.
func displayText(v any) string {
	switch x := v.(type) {
	case nil:
		return nullMark
	case float64:
		return strconv.FormatFloat(x, 'g', 10, 64)
	}
	return strings.ReplaceAll(fullText(v, false), "\n", "⏎")
}

// fullText renders a value at full precision; NULL is empty in CSV.
func fullText(v any, csvNull bool) string {
	switch x := v.(type) {
	case nil:
		if csvNull {
			return ""
		}
		return nullMark
	case int64:
		return strconv.FormatInt(x, 10)
	case float64:
		return strconv.FormatFloat(x, 'g', -1, 64)
	case []byte:
		return fmt.Sprintf("x'%x'", x)
	case string:
		return x
	default:
		return fmt.Sprint(x)
	}
}

// jsonValue renders a value for the json format. With nest, text holding a
// JSON object or array is written as that JSON. JSON has no number for an
// infinity (a REAL column can hold one, e.g. from 9e999): it is written as
// the string "Infinity" or "-Infinity" (NaN, which SQLite stores as NULL,
// as "NaN"), never as null, so it cannot be mistaken for SQL NULL.
func jsonValue(v any, nest bool) string {
	switch x := v.(type) {
	case nil:
		return "null"
	case float64:
		switch {
		case math.IsInf(x, 1):
			return `"Infinity"`
		case math.IsInf(x, -1):
			return `"-Infinity"`
		case math.IsNaN(x):
			return `"NaN"`
		}
		return strconv.FormatFloat(x, 'g', -1, 64)
	case int64:
		return strconv.FormatInt(x, 10)
	case []byte:
		return jsonString(fmt.Sprintf("%x", x))
	case string:
		if nest {
			if t := strings.TrimSpace(x); (strings.HasPrefix(t, "{") || strings.HasPrefix(t, "[")) && json.Valid([]byte(t)) {
				var compact bytes.Buffer
				if err := json.Compact(&compact, []byte(t)); err == nil {
					return compact.String()
				}
			}
		}
		return jsonString(x)
	default:
		return jsonString(fmt.Sprint(x))
	}
}

// jsonString quotes s as a JSON string. Unlike json.Marshal it leaves <, >
// and & as they are (the escapes \u003c… are for JSON embedded in HTML), so
// a censored value reads "<5" in json output as in the other formats.
func jsonString(s string) string {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	enc.Encode(s) // a string always encodes
	return strings.TrimSuffix(b.String(), "\n")
}
