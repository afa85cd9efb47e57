package main

// In-process tests of the import command's flags, exit codes and messages
// (the store-level behaviour is tested in store/csvimport/importer_test.go; fixtures
// are the invented files under testdata/import).

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"trendsql/store"
	"trendsql/store/storetest"
)

func importFixture(name string) string {
	return filepath.Join("..", "..", "testdata", "import", name)
}

func importRunMain(t *testing.T, args ...string) (stdout, stderr string, code int) {
	t.Helper()
	var out, errw bytes.Buffer
	code = Main(args, strings.NewReader(""), &out, &errw)
	return out.String(), errw.String(), code
}

func importStoreCheck(t *testing.T, db string) *store.Store {
	t.Helper()
	return storetest.OpenReadOnly(t, db)
}

func TestImportCmdStationsAndReadings(t *testing.T) {
	db := filepath.Join(t.TempDir(), "r.db")
	initStore(t, db)
	out, errs, code := importRunMain(t, "--db", db, "import", "stations", importFixture("stations.csv"))
	if code != 0 || out != "" {
		t.Fatalf("stations: code %d, stdout %q, stderr %q", code, out, errs)
	}
	if want := "stations.csv → batch 1: 3 rows read, 3 new, 0 already stored (0 of them updated), 0 rejected\n"; !strings.HasSuffix(errs, want) {
		t.Errorf("stations summary = %q, want %q", errs, want)
	}
	out, errs, code = importRunMain(t, "--db", db, "import", "readings", "--variable", "level", "--unit", "m",
		"--tz", "Europe/Berlin", importFixture("readings_rejects.csv"))
	if code != 0 || out != "" {
		t.Fatalf("readings: code %d, stdout %q, stderr %q", code, out, errs)
	}
	if want := "readings_rejects.csv → batch 2: 22 rows read, 4 stored, 18 rejected (reasons in import_rejects, batch_id 2), 0 duplicates; created 1 station (id only) and 1 series\n"; !strings.HasSuffix(errs, want) {
		t.Errorf("readings summary = %q, want %q", errs, want)
	}
	if strings.Count(errs, "\n") != 1 {
		t.Errorf("summary is not one line: %q", errs)
	}

	// The same file again fails before reading, naming the earlier batch.
	_, errs, code = importRunMain(t, "--db", db, "import", "readings", "--variable", "level", "--unit", "m",
		"--tz", "Europe/Berlin", importFixture("readings_rejects.csv"))
	if code != ExitFailed || !strings.Contains(errs, "already imported as batch 2; nothing was imported (--on-duplicate keep-first or replace") || strings.Count(errs, "\n") != 1 {
		t.Errorf("same file again: exit %d, %q", code, errs)
	}
	// The same rows in another file (one more line end) fail with a
	// one-line message naming file, line and time, exit code 1, and change
	// nothing.
	raw, err := os.ReadFile(importFixture("readings_rejects.csv"))
	if err != nil {
		t.Fatal(err)
	}
	copyPath := filepath.Join(t.TempDir(), "readings_rejects.csv")
	if err := os.WriteFile(copyPath, append(raw, '\n'), 0o644); err != nil {
		t.Fatal(err)
	}
	_, errs, code = importRunMain(t, "--db", db, "import", "readings", "--variable", "level", "--unit", "m",
		"--tz", "Europe/Berlin", copyPath)
	if code != ExitFailed {
		t.Errorf("duplicate import: exit %d, want %d", code, ExitFailed)
	}
	for _, sub := range []string{"readings_rejects.csv line 2", `station "R1"`, "2021-03-28T00:00:00Z", "already stored", "--on-duplicate keep-first"} {
		if !strings.Contains(errs, sub) {
			t.Errorf("duplicate import message %q lacks %q", errs, sub)
		}
	}
	if strings.Count(errs, "\n") != 1 {
		t.Errorf("error is not one line: %q", errs)
	}
	_, errs, code = importRunMain(t, "--db", db, "import", "readings", "--variable", "level", "--unit", "m",
		"--tz", "Europe/Berlin", "--on-duplicate", "replace", importFixture("readings_rejects.csv"))
	if code != 0 || !strings.Contains(errs, "18 rejected (reasons in import_rejects, batch_id 3), 4 duplicates\n") {
		t.Errorf("replace import: exit %d, %q", code, errs)
	}
	s := importStoreCheck(t, db)
	var batches, readings int
	if err := s.DB.QueryRow(`SELECT (SELECT count(*) FROM import_batches), (SELECT count(*) FROM readings)`).Scan(&batches, &readings); err != nil {
		t.Fatal(err)
	}
	if batches != 3 || readings != 4 {
		t.Errorf("batches %d readings %d, want 3 and 4", batches, readings)
	}
	// The same stations file again: refused naming batch 1, exit 1;
	// --again merges it with a warning naming the batch.
	_, errs, code = importRunMain(t, "--db", db, "import", "stations", importFixture("stations.csv"))
	if code != ExitFailed || !strings.Contains(errs, "already imported as batch 1; nothing was imported (--again merges it anyway)") || strings.Count(errs, "\n") != 1 {
		t.Errorf("same stations file again: exit %d, %q", code, errs)
	}
	_, errs, code = importRunMain(t, "--db", db, "import", "stations", "--again", importFixture("stations.csv"))
	if code != ExitOK || !strings.Contains(errs, "3 rows read, 0 new, 3 already stored (0 of them updated)") || !strings.Contains(errs, "warning: the same file (SHA-256 ") || !strings.Contains(errs, "was already imported as batch 1") {
		t.Errorf("same stations file with --again: exit %d, %q", code, errs)
	}
}

func TestImportCmdDelimiterDecimalCommaTZ(t *testing.T) {
	db := filepath.Join(t.TempDir(), "r.db")
	initStore(t, db)
	_, errs, code := importRunMain(t, "--db", db, "import", "readings", "--variable", "temp", "--delimiter", ";",
		"--decimal-comma", "--tz", "America/New_York", importFixture("decimal_comma.csv"))
	if code != 0 || !strings.Contains(errs, "3 stored, 1 rejected") {
		t.Fatalf("exit %d, %q", code, errs)
	}
	s := importStoreCheck(t, db)
	var tmin int64
	var sum float64
	if err := s.DB.QueryRow(`SELECT min(t), sum(value) FROM readings`).Scan(&tmin, &sum); err != nil {
		t.Fatal(err)
	}
	// 2021-05-01 12:00 in New York is 1619884800 (python3 zoneinfo, see store tests).
	if tmin != 1619884800 || sum != 12.5-0.25+1500 {
		t.Errorf("min t %d, sum %v", tmin, sum)
	}
	var opts string
	if err := s.DB.QueryRow(`SELECT options FROM import_batches`).Scan(&opts); err != nil {
		t.Fatal(err)
	}
	for _, sub := range []string{`"delimiter":";"`, `"decimal_comma":true`, `"tz":"America/New_York"`} {
		if !strings.Contains(opts, sub) {
			t.Errorf("options %s lack %s", opts, sub)
		}
	}
}

func TestImportCmdUsageErrors(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "r.db")
	good := importFixture("readings_good.csv")
	cases := []struct {
		args []string
		code int
		want string
	}{
		{[]string{"import", "readings", "--variable", "x", "--on-duplicate", "skip", good}, ExitUsage, "--on-duplicate must be error, keep-first or replace"},
		{[]string{"import", "readings", "--variable", "x", "--variable-col", "v", good}, ExitUsage, "not both"},
		{[]string{"import", "readings", "--variable", "x", "--delimiter", ";;", good}, ExitUsage, "--delimiter"},
		{[]string{"import", "readings", "--variable", "x", "--delimiter", `"`, good}, ExitUsage, "--delimiter"},
		{[]string{"import", "readings", "--variable", "x", "--tz", "Mars/Olympus", good}, ExitUsage, "--tz"},
		{[]string{"import", "readings", "--variable", "x"}, ExitUsage, "expected 1 argument"},
		{[]string{"import", "gauges", good}, ExitUsage, `unknown kind "gauges"`},
		{[]string{"import", "readings", "--variable", "x", "--no-such-flag", good}, ExitUsage, "no-such-flag"},
		{[]string{"import", "readings", "--variable", "x", filepath.Join(dir, "missing.csv")}, ExitFailed, "missing.csv: no such file"},
		{[]string{"import", "stations", dir}, ExitFailed, "is a directory"},
	}
	for _, c := range cases {
		_, errs, code := importRunMain(t, append([]string{"--db", db}, c.args...)...)
		if code != c.code || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit %d and %q", c.args, code, errs, c.code, c.want)
		}
	}
	// Flag and file errors are found before a store is created.
	if _, err := os.Stat(db); !os.IsNotExist(err) {
		t.Errorf("a failed flag check created the store (stat: %v)", err)
	}
	initStore(t, db)
	if _, errs, code := importRunMain(t, "--db", db, "import", "readings", good); code != ExitFailed ||
		!strings.Contains(errs, "readings_good.csv line 1: no variable") || strings.Count(errs, "\n") != 1 {
		t.Errorf("no variable: exit %d, %q", code, errs)
	}
}

// The import's header errors carry no flag names; the command adds the
// flag that fixes each (the error values are tested in
// store/csvimport/importer_test.go).
func TestImportCmdHeaderErrorsNameFlags(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "r.db")
	initStore(t, db)
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	nostation := write("nostation.csv", "site,time,value\nA,2021-01-01,1\n")
	cases := []struct {
		args    []string
		want    []string
		notWant string
	}{
		{[]string{"--variable", "x", nostation},
			[]string{"nostation.csv line 1", `no column "station"`, `"site"`, "; name the column with --station-col"}, ""},
		{[]string{"--variable", "x", "--station-col", "code", nostation},
			[]string{`no column "code"`}, "name the column with"},
		{[]string{"--variable", "x", write("semicolon.csv", "station;time;value\nA;2021-01-01;1\n")},
			[]string{"semicolon.csv line 1", `separated by ";"? (--delimiter)`, "--station-col"}, ""},
		{[]string{write("novar.csv", "station,time,value\nA,2021-01-01,1\n")},
			[]string{"novar.csv line 1", "no variable", "give a fixed variable name (--variable) or the column that holds it (--variable-col)"}, ""},
	}
	for _, c := range cases {
		_, errs, code := importRunMain(t, append([]string{"--db", db, "import", "readings"}, c.args...)...)
		if code != ExitFailed {
			t.Errorf("%v: exit %d, want %d", c.args, code, ExitFailed)
		}
		for _, sub := range c.want {
			if !strings.Contains(errs, sub) {
				t.Errorf("%v: stderr %q does not contain %q", c.args, errs, sub)
			}
		}
		if c.notWant != "" && strings.Contains(errs, c.notWant) {
			t.Errorf("%v: stderr %q contains %q", c.args, errs, c.notWant)
		}
	}
	_, errs, _ := importRunMain(t, "--db", db, "import", "stations", write("st.csv", "code;name\nA;B\n"))
	if !strings.Contains(errs, `needs "id"`) || !strings.Contains(errs, `separated by ";"? (--delimiter)`) {
		t.Errorf("stations file with another separator: %q", errs)
	}
}

func TestImportParseDelimiter(t *testing.T) {
	for in, want := range map[string]byte{",": ',', ";": ';', "tab": '\t', `\t`: '\t', "|": '|'} {
		if got, err := importDelimiter(in); err != nil || got != want {
			t.Errorf("importDelimiter(%q) = %q, %v", in, got, err)
		}
	}
	for _, in := range []string{"", ";;", `"`, "\n", "é"} {
		if _, err := importDelimiter(in); err == nil {
			t.Errorf("importDelimiter(%q): no error", in)
		}
	}
}

// TestImportCmdStdin: FILE "-" reads the command's standard input; the
// batch records "stdin" as its source, error messages name it, and the
// stored rows are those of the same file imported by name.
func TestImportCmdStdin(t *testing.T) {
	dir := t.TempDir()
	runIn := func(stdin string, args ...string) (string, int) {
		var out, errw bytes.Buffer
		code := Main(args, strings.NewReader(stdin), &out, &errw)
		return errw.String(), code
	}
	stations, err := os.ReadFile(importFixture("stations.csv"))
	if err != nil {
		t.Fatal(err)
	}
	readings, err := os.ReadFile(importFixture("readings_rejects.csv"))
	if err != nil {
		t.Fatal(err)
	}
	dbStdin, dbFile := filepath.Join(dir, "stdin.db"), filepath.Join(dir, "file.db")
	initStore(t, dbStdin)
	initStore(t, dbFile)
	errs, code := runIn(string(stations), "--db", dbStdin, "import", "stations", "-")
	if code != 0 || !strings.HasPrefix(errs, "stdin → batch 1: 3 rows read, 3 new") {
		t.Fatalf("stations from stdin: exit %d, %q", code, errs)
	}
	errs, code = runIn(string(readings), "--db", dbStdin, "import", "readings", "--variable", "level", "--unit", "m", "--tz", "Europe/Berlin", "-")
	if code != 0 || !strings.HasPrefix(errs, "stdin → batch 2: 22 rows read, 4 stored, 18 rejected") {
		t.Fatalf("readings from stdin: exit %d, %q", code, errs)
	}
	for _, a := range [][]string{
		{"--db", dbFile, "import", "stations", importFixture("stations.csv")},
		{"--db", dbFile, "import", "readings", "--variable", "level", "--unit", "m", "--tz", "Europe/Berlin", importFixture("readings_rejects.csv")},
	} {
		if errs, code := runIn("", a...); code != 0 {
			t.Fatalf("%v: exit %d, %q", a, code, errs)
		}
	}
	dump := func(db string) (string, []string) {
		s := importStoreCheck(t, db)
		var b strings.Builder
		rows, err := s.DB.Query(`SELECT series_id, t, value, coalesce(qualifier, '-') FROM readings ORDER BY 1, 2`)
		if err != nil {
			t.Fatal(err)
		}
		defer rows.Close()
		for rows.Next() {
			var sid, tt int64
			var v float64
			var q string
			if err := rows.Scan(&sid, &tt, &v, &q); err != nil {
				t.Fatal(err)
			}
			fmt.Fprintf(&b, "%d %d %v %s\n", sid, tt, v, q)
		}
		var sources []string
		srows, err := s.DB.Query(`SELECT source FROM import_batches ORDER BY id`)
		if err != nil {
			t.Fatal(err)
		}
		defer srows.Close()
		for srows.Next() {
			var src string
			srows.Scan(&src)
			sources = append(sources, src)
		}
		return b.String(), sources
	}
	a, srcA := dump(dbStdin)
	b, _ := dump(dbFile)
	if a != b || a == "" {
		t.Errorf("readings from stdin differ from the file's:\n%s\nvs\n%s", a, b)
	}
	if len(srcA) != 2 || srcA[0] != "stdin" || srcA[1] != "stdin" {
		t.Errorf("batch sources %v, want [stdin stdin]", srcA)
	}
	// A bad header from stdin names "stdin" and stores nothing.
	errs, code = runIn("when,level\n2024-01-01,1\n", "--db", dbStdin, "import", "readings", "--variable", "level", "-")
	if code != ExitFailed || !strings.Contains(errs, "stdin line 1") {
		t.Errorf("bad stdin: exit %d, %q", code, errs)
	}
}

// initStore creates a store at path with `trendsql init` (no other command
// creates one).
func initStore(t *testing.T, path string) {
	t.Helper()
	var out, errw bytes.Buffer
	if code := Main([]string{"init", "--db", path}, strings.NewReader(""), &out, &errw); code != 0 {
		t.Fatalf("init %s: exit %d: %s", path, code, errw.String())
	}
}
