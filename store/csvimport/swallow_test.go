package csvimport

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"trendsql/store/storetest"
)

// goodRows returns n readings lines of station S1, one per hour.
func goodRows(n int) string {
	var b strings.Builder
	for i := range n {
		fmt.Fprintf(&b, "S1,%d,%d.5\n", 1_600_000_000+3600*i, i%10)
	}
	return b.String()
}

// TestImportNeverSwallowsLines: a stray quote, an unterminated quote and
// line ends of the other kind inside a record each fail the import with the
// line where the problem starts; nothing is stored. Files whose quoted
// fields close within the limits import every line.
func TestImportNeverSwallowsLines(t *testing.T) {
	ctx := context.Background()
	dir := t.TempDir()
	head := "station,time,value\n"
	cases := []struct {
		name, text string
		line       int
		msg        string
	}{
		{"stray quote", head + "S1,\"1600000000,1\n" + goodRows(5000), 2, "not closed within 100 lines"},
		{"stray quote near the end", head + goodRows(20) + "S1,\"1700000000,1\n" + "S1,1700003600,2\n", 22, "not closed before the end of the file"},
		{"unterminated quote", head + goodRows(3) + "S1,1700000000,\"1.5\n", 5, "not closed before the end of the file"},
		{"long quoted field", head + "S1,1600000000,\"" + strings.Repeat("x", 70<<10) + "\n" + goodRows(3), 2, "64 KiB"},
		{"bare CR in an LF file", head + "S1,1600000000,1\rS1,1600003600,2\rS1,1600007200,3\n" + goodRows(3), 2, "carriage return inside a line"},
		{"LF after a bare-CR first line", "station,time,value\rS1,1600000000,1\r" + goodRows(1000), 3, "line feed inside a line"},
	}
	for _, c := range cases {
		s := storetest.Open(t)
		path := filepath.Join(dir, strings.ReplaceAll(c.name, " ", "_")+".csv")
		if err := os.WriteFile(path, []byte(c.text), 0o644); err != nil {
			t.Fatal(err)
		}
		res, err := ImportReadings(ctx, s, path, ReadingsOptions{Variable: "level"})
		var ie *InputError
		if !errors.As(err, &ie) || ie.Line != c.line || !strings.Contains(ie.Msg, c.msg) {
			t.Errorf("%s: result %+v, error %v; want an input error at line %d saying %q", c.name, res, err, c.line, c.msg)
		}
		if n := impCount(t, s, `SELECT count(*) FROM readings`); n != 0 {
			t.Errorf("%s: %d readings stored by a failed import", c.name, n)
		}
	}

	// Quoted fields within the limits: a value quoted on one line and a
	// note spanning 99 lines; every line is accounted for.
	s := storetest.Open(t)
	text := "station,time,value,note\n\"S1\",1600000000,\"1.5\",ok\nS1,1600003600,2.5,\"" + strings.Repeat("line\n", 98) + "end\"\n" + "S1,1600007200,3.5,\n"
	path := filepath.Join(dir, "ok.csv")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	res, err := ImportReadings(ctx, s, path, ReadingsOptions{Variable: "level"})
	if err != nil {
		t.Fatal(err)
	}
	if res.RowsRead != 3 || res.RowsStored != 3 {
		t.Errorf("within limits: %d read, %d stored; want 3 and 3", res.RowsRead, res.RowsStored)
	}
}

// TestStationsImportStrayQuote: the stations import follows the same rule.
func TestStationsImportStrayQuote(t *testing.T) {
	s := storetest.Open(t)
	path := filepath.Join(t.TempDir(), "st.csv")
	var b strings.Builder
	b.WriteString("id,name\nA,\"Alpha\n")
	for i := range 500 {
		fmt.Fprintf(&b, "S%d,Station %d\n", i, i)
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := ImportStations(context.Background(), s, path, StationsOptions{})
	var ie *InputError
	if !errors.As(err, &ie) || ie.Line != 2 {
		t.Errorf("error %v; want an input error at line 2", err)
	}
	if n := impCount(t, s, `SELECT count(*) FROM stations`); n != 0 {
		t.Errorf("%d stations stored by a failed import", n)
	}
}

// TestCSVReaderMixedLineEnds: outside quotes, a line end of the kind the
// first line did not use is an error naming its line; inside quotes it is
// part of the field.
func TestCSVReaderMixedLineEnds(t *testing.T) {
	for _, c := range []struct {
		in   string
		line int
	}{
		{"a,b\nx\ry,z\n", 2},
		{"a,b\r\n1,2\r\nx\ry,z\r\n", 3},
		{"a,b\r1,2\rx\ny,z\r", 3},
		{"a,b\n\"q\",x\ry\n", 2},
	} {
		cr := newCSVReader(strings.NewReader(c.in), ',')
		var err error
		for {
			var r *csvRecord
			if r, err = cr.next(); err != nil || r == nil {
				break
			}
		}
		var re *ReadError
		if !errors.As(err, &re) || re.Line != c.line {
			t.Errorf("%q: %v; want a ReadError at line %d", c.in, err, c.line)
		}
	}
	cr := newCSVReader(strings.NewReader("a,b\n\"x\ry\",z\n"), ',')
	cr.next()
	r, err := cr.next()
	if err != nil || r == nil || r.fields[0] != "x\ry" {
		t.Errorf("CR inside quotes: %v, %v", r, err)
	}
}

// TestImportRejectRules: an import whose every row is rejected fails and
// stores nothing; RejectLimit fails above its share; a file of declared
// missing values only, and a file re-imported under keep-first, are no
// failure.
func TestImportRejectRules(t *testing.T) {
	ctx := context.Background()
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	head := "station,time,value\n"

	s := storetest.Open(t)
	bad := write("bad.csv", head+"S1,1600000000,abc\nS1,1600003600,x1\nS1,yesterday,1\n")
	_, err := ImportReadings(ctx, s, bad, ReadingsOptions{Variable: "level"})
	var re *RejectError
	if !errors.As(err, &re) || !errors.Is(err, ErrNothingStored) || re.Reasons[0].Count != 2 {
		t.Fatalf("all rejected: %v", err)
	}
	if !strings.Contains(err.Error(), "2 × value \"…\" is not a number (first at line 2") {
		t.Errorf("message lacks the counted reason:\n%s", err)
	}

	// 1 of 4 rows rejected: over a 20% limit, within a 25% limit.
	mixed := write("mixed.csv", head+goodRows(3)+"S1,1700000000,abc\n")
	_, err = ImportReadings(ctx, s, mixed, ReadingsOptions{Variable: "level", RejectLimit: RejectLimit{Set: true, MaxShare: 0.2}})
	if !errors.Is(err, ErrTooManyRejects) || !strings.Contains(err.Error(), "1 of 4 rows rejected (25%), more than the limit of 20%") {
		t.Fatalf("over the limit: %v", err)
	}
	if n := impCount(t, s, `SELECT count(*) FROM readings`); n != 0 {
		t.Fatalf("%d readings stored by an import over the reject limit", n)
	}
	res, err := ImportReadings(ctx, s, mixed, ReadingsOptions{Variable: "level", RejectLimit: RejectLimit{Set: true, MaxShare: 0.25}})
	if err != nil || res.RowsStored != 3 || len(res.RejectReasons) != 1 {
		t.Fatalf("within the limit: %+v, %v", res, err)
	}

	// Re-import under keep-first: every row a duplicate, none rejected.
	if _, err := ImportReadings(ctx, s, mixed, ReadingsOptions{Variable: "level", OnDuplicate: DupKeepFirst}); err != nil {
		t.Errorf("re-import under keep-first: %v", err)
	}
	// Declared missing values only.
	missing := write("missing.csv", head+"S1,1600000000,-999\nS1,1600003600,-999\n")
	if _, err := ImportReadings(ctx, s, missing, ReadingsOptions{Variable: "level", MissingValues: []string{"-999"}}); err != nil {
		t.Errorf("declared missing values only: %v", err)
	}

	st := write("st.csv", "id,latitude\nA,north\nB,south\n")
	_, err = ImportStations(ctx, s, st, StationsOptions{})
	if !errors.Is(err, ErrNothingStored) {
		t.Errorf("stations all rejected: %v", err)
	}
}
