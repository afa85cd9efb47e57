package main

import (
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

// Output formats for query results.
const (
	FormatTable = "table"
	FormatCSV   = "csv"
	FormatJSON  = "json"
)

// nullMark is how the table format shows SQL NULL, distinct from any text.
const nullMark = "∅"

// maxCell is the widest a table cell is drawn; longer text is cut with "…".
const maxCell = 60

func validFormat(f string) bool { return f == FormatTable || f == FormatCSV || f == FormatJSON }

// writeRows renders a result set in the chosen format and returns the row count.
func writeRows(w io.Writer, rows *sql.Rows, format string) (int, error) {
	cols, err := rows.Columns()
	if err != nil {
		return 0, err
	}
	vals := make([]any, len(cols))
	ptrs := make([]any, len(cols))
	for i := range vals {
		ptrs[i] = &vals[i]
	}
	var n int
	switch format {
	case FormatCSV:
		cw := csv.NewWriter(w)
		if len(cols) > 0 {
			cw.Write(cols)
		}
		rec := make([]string, len(cols))
		for rows.Next() {
			if err := rows.Scan(ptrs...); err != nil {
				return n, err
			}
			for i, v := range vals {
				rec[i] = fullText(v, true)
			}
			cw.Write(rec)
			n++
		}
		cw.Flush()
		if err := cw.Error(); err != nil {
			return n, err
		}
	case FormatJSON:
		// One JSON array of objects; column order kept.
		fmt.Fprint(w, "[")
		for rows.Next() {
			if err := rows.Scan(ptrs...); err != nil {
				return n, err
			}
			if n > 0 {
				fmt.Fprint(w, ",")
			}
			fmt.Fprint(w, "\n  {")
			for i, c := range cols {
				if i > 0 {
					fmt.Fprint(w, ", ")
				}
				k, _ := json.Marshal(c)
				fmt.Fprintf(w, "%s: %s", k, jsonValue(vals[i]))
			}
			fmt.Fprint(w, "}")
			n++
		}
		if n > 0 {
			fmt.Fprint(w, "\n")
		}
		fmt.Fprintln(w, "]")
	default:
		// Widths come from the first tableBuffer rows; later rows stream
		// with those widths (longer cells are cut with "…"), so a huge
		// result does not have to fit in memory.
		var table [][]string
		var numeric = make([]bool, len(cols))
		for i := range numeric {
			numeric[i] = true
		}
		var width []int
		for rows.Next() {
			if err := rows.Scan(ptrs...); err != nil {
				return n, err
			}
			rec := make([]string, len(cols))
			for i, v := range vals {
				rec[i] = tableCell(v)
				switch v.(type) {
				case int64, float64, nil:
				default:
					if width == nil {
						numeric[i] = false
					}
				}
			}
			n++
			if width != nil {
				drawRow(w, rec, width, numeric, false)
				continue
			}
			table = append(table, rec)
			if len(table) == tableBuffer {
				width = drawTable(w, cols, table, numeric)
				table = nil
			}
		}
		if err := rows.Err(); err != nil {
			return n, err
		}
		if len(cols) > 0 {
			if width == nil {
				drawTable(w, cols, table, numeric)
			}
			fmt.Fprintf(w, "(%d row%s)\n", n, plural(n))
		}
	}
	return n, rows.Err()
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}

// tableBuffer is how many rows the table format reads before fixing the
// column widths.
const tableBuffer = 5000

// drawTable prints the header, rule and rows, and returns the column widths.
func drawTable(w io.Writer, cols []string, table [][]string, numeric []bool) []int {
	width := make([]int, len(cols))
	for i, c := range cols {
		width[i] = utf8.RuneCountInString(c)
	}
	for _, r := range table {
		for i, c := range r {
			if l := utf8.RuneCountInString(c); l > width[i] {
				width[i] = l
			}
		}
	}
	drawRow(w, cols, width, numeric, true)
	rule := make([]string, len(cols))
	for i := range cols {
		rule[i] = strings.Repeat("─", width[i])
	}
	drawRow(w, rule, width, numeric, true)
	for _, r := range table {
		drawRow(w, r, width, numeric, false)
	}
	return width
}

// drawRow prints one row padded to width; numbers are right-aligned.
func drawRow(w io.Writer, r []string, width []int, numeric []bool, header bool) {
	var b strings.Builder
	for i, c := range r {
		if i > 0 {
			b.WriteString("  ")
		}
		l := utf8.RuneCountInString(c)
		if l > width[i] {
			rs := []rune(c)
			c = string(rs[:width[i]-1]) + "…"
			l = width[i]
		}
		pad := strings.Repeat(" ", width[i]-l)
		switch {
		case numeric[i] && !header:
			b.WriteString(pad + c)
		case i == len(r)-1:
			b.WriteString(c)
		default:
			b.WriteString(c + pad)
		}
	}
	fmt.Fprintln(w, strings.TrimRight(b.String(), " "))
}

// tableCell renders a value for the table format.
func tableCell(v any) string {
	switch x := v.(type) {
	case nil:
		return nullMark
	case float64:
		return strconv.FormatFloat(x, 'g', 10, 64)
	}
	s := fullText(v, false)
	s = strings.ReplaceAll(s, "\n", "⏎")
	if utf8.RuneCountInString(s) > maxCell {
		r := []rune(s)
		s = string(r[:maxCell-1]) + "…"
	}
	return s
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

func jsonValue(v any) string {
	switch x := v.(type) {
	case nil:
		return "null"
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return "null"
		}
		return strconv.FormatFloat(x, 'g', -1, 64)
	case int64:
		return strconv.FormatInt(x, 10)
	case []byte:
		b, _ := json.Marshal(fmt.Sprintf("%x", x))
		return string(b)
	default:
		b, _ := json.Marshal(fmt.Sprint(x))
		return string(b)
	}
}
