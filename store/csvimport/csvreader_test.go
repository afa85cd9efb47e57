package csvimport

import (
	"encoding/csv"
	"errors"
	"io"
	"strings"
	"testing"
)

// FuzzCSVReader checks the import's record reader against Go's
// encoding/csv (RFC 4180) on every input both accept in the same way: when
// encoding/csv reads the input without error, and the input has none of the
// things the two treat differently on purpose (carriage returns, a byte
// order mark, lines of blanks only, which the import skips), the records
// and their first line numbers must be equal. An input the reader stops at
// (an unclosed quote) must be one encoding/csv refuses too. On any input the
// reader must not panic, and line numbers must increase.
func FuzzCSVReader(f *testing.F) {
	for _, s := range []string{
		"a,b,c\n1,2,3\n",
		"a,\"b,c\",d\n",
		"\"multi\nline\",x\n\"q\"\"q\",\n",
		"a,b\n\n1,2",
		"\"open",
		"a,\"b\"c\n",
		",,\n,\n",
		"x\n  \ny\n",
		"\xef\xbb\xbfid\r\nA\r\n",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, in string) {
		cr := newCSVReader(strings.NewReader(in), ',')
		var got [][]string
		var lines []int
		bad := false
		for {
			r, err := cr.next()
			var re *ReadError
			if errors.As(err, &re) {
				// The reader stops at an unclosed quote and at mixed
				// line ends; encoding/csv must refuse such an input
				// too, unless it has carriage returns or a quoted
				// field longer than the reader allows.
				if strings.ContainsAny(in, "\r") || strings.Count(in, "\n") >= maxQuotedLines || len(in) > maxRawLen {
					return
				}
				ref := csv.NewReader(strings.NewReader(in))
				ref.FieldsPerRecord = -1
				if _, rerr := ref.ReadAll(); rerr == nil {
					t.Fatalf("input %q: reader error %v, encoding/csv reads it", in, err)
				}
				return
			}
			if err != nil {
				t.Fatalf("read error on a string reader: %v", err)
			}
			if r == nil {
				break
			}
			if len(lines) > 0 && r.line <= lines[len(lines)-1] {
				t.Fatalf("line numbers do not increase: %d after %d", r.line, lines[len(lines)-1])
			}
			if r.bad != "" {
				bad = true
			}
			got = append(got, append([]string(nil), r.fields...))
			lines = append(lines, r.line)
		}
		if strings.ContainsAny(in, "\r") || strings.HasPrefix(in, "\xef\xbb\xbf") {
			return
		}
		for _, l := range strings.Split(in, "\n") {
			if l != "" && strings.TrimSpace(l) == "" {
				return
			}
		}
		ref := csv.NewReader(strings.NewReader(in))
		ref.FieldsPerRecord = -1
		var want [][]string
		var wantLines []int
		for {
			rec, err := ref.Read()
			if err != nil {
				if err == io.EOF {
					break
				}
				return // encoding/csv refuses the input: no comparison
			}
			line, _ := ref.FieldPos(0)
			want = append(want, rec)
			wantLines = append(wantLines, line)
		}
		if bad {
			t.Fatalf("input %q: reader flagged a record that encoding/csv reads as %q", in, want)
		}
		if len(got) != len(want) {
			t.Fatalf("input %q: %d records %q, encoding/csv has %d %q", in, len(got), got, len(want), want)
		}
		for i := range want {
			if strings.Join(got[i], "\x00") != strings.Join(want[i], "\x00") || len(got[i]) != len(want[i]) || lines[i] != wantLines[i] {
				t.Fatalf("input %q: record %d = %q (line %d), encoding/csv %q (line %d)", in, i, got[i], lines[i], want[i], wantLines[i])
			}
		}
	})
}
