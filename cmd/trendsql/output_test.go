package main

// Tests of the result formats and of where results go: terminal fitting
// with a visible cut mark, nothing cut elsewhere, the one-field-per-line
// layout, nested JSON, files (--out, :out), SQL from a file or standard
// input, and the rows each statement changed under --write.

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func sampleRows() *memRows {
	long := strings.Repeat("reason text ", 12) + "END"
	return &memRows{
		cols: []string{"line", "reason", "raw"},
		rows: [][]any{
			{int64(2), long, "S1,2021-01-01,abc"},
			{int64(3), "short", nil},
		},
	}
}

func TestTableFitsTerminalAndMarksCuts(t *testing.T) {
	var b bytes.Buffer
	n, err := writeRows(&b, sampleRows(), outputOptions{format: FormatTable, width: 60})
	if err != nil || n != 2 {
		t.Fatalf("writeRows: %d rows, %v", n, err)
	}
	lines := strings.Split(strings.TrimRight(b.String(), "\n"), "\n")
	for _, l := range lines[:len(lines)-1] {
		if w := len([]rune(l)); w > 60 {
			t.Errorf("line wider than the terminal (%d > 60): %q", w, l)
		}
	}
	if !strings.Contains(lines[2], cutMark) || strings.Contains(b.String(), "END") {
		t.Errorf("the long cell is not cut with %s:\n%s", cutMark, b.String())
	}
	if last := lines[len(lines)-1]; !strings.HasPrefix(last, "→ 2 rows (cells ending in …") {
		t.Errorf("footer %q does not say that cells were cut", last)
	}

	// Without a terminal width nothing is cut and the footer is plain.
	b.Reset()
	writeRows(&b, sampleRows(), outputOptions{format: FormatTable})
	if !strings.Contains(b.String(), "END") || strings.Contains(b.String(), cutMark) {
		t.Errorf("table without a terminal cut a cell:\n%s", b.String())
	}
	if !strings.HasSuffix(b.String(), "\n→ 2 rows\n") {
		t.Errorf("footer: %q", b.String())
	}
	b.Reset()
	writeRows(&b, &memRows{cols: []string{"x"}}, outputOptions{format: FormatTable})
	if !strings.HasSuffix(b.String(), "→ no rows\n") {
		t.Errorf("empty result footer: %q", b.String())
	}

	// Rows that cannot fit even with every cell cut to minCutWidth (ten
	// columns of 20 characters on a 40-column terminal) point to the
	// one-field-per-line layout.
	wide := &memRows{}
	var cells []any
	for i := range 10 {
		wide.cols = append(wide.cols, fmt.Sprintf("column_%d", i))
		cells = append(cells, strings.Repeat("x", 20))
	}
	wide.rows = [][]any{cells}
	b.Reset()
	writeRows(&b, wide, outputOptions{format: FormatTable, width: 40})
	if !strings.HasSuffix(b.String(), "→ 1 row (rows are wider than the terminal even with cells cut to 8 characters: --format fields shows one field per line)\n") {
		t.Errorf("too wide a table: %q", b.String())
	}

	// A column whose name and first tableBuffer cells are empty text, and a
	// longer cell after them on a terminal: the cell is cut to the column,
	// which is at least one character wide, and marked.
	empty := &memRows{cols: []string{""}}
	for range tableBuffer {
		empty.rows = append(empty.rows, []any{""})
	}
	empty.rows = append(empty.rows, []any{"late and long"})
	b.Reset()
	if n, err := writeRows(&b, empty, outputOptions{format: FormatTable, width: 40}); err != nil || n != tableBuffer+1 {
		t.Fatalf("writeRows: %d rows, %v", n, err)
	}
	if !strings.Contains(b.String(), "\n"+cutMark+"\n") {
		t.Errorf("the late cell is not cut to one marked character: %q", b.String()[b.Len()-200:])
	}
}

func TestFieldsLayout(t *testing.T) {
	var b bytes.Buffer
	writeRows(&b, sampleRows(), outputOptions{format: FormatFields, width: 40})
	want := "── row 1\nline    2\nreason  " + strings.Repeat("reason text ", 12) + "END\nraw     S1,2021-01-01,abc\n" +
		"── row 2\nline    3\nreason  short\nraw     " + nullMark + "\n→ 2 rows\n"
	if b.String() != want {
		t.Errorf("fields layout:\n%s\nwant:\n%s", b.String(), want)
	}
}

func TestJSONNestsFunctionResults(t *testing.T) {
	rows := func() *memRows {
		return &memRows{cols: []string{"id", "fit", "note"}, rows: [][]any{{"S1", `{"slope": 1.5, "n": 3}`, "[not json"}}}
	}
	var b bytes.Buffer
	writeRows(&b, rows(), outputOptions{format: FormatJSON, nestJSON: true})
	var got []map[string]any
	if err := json.Unmarshal(b.Bytes(), &got); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, b.String())
	}
	fit, ok := got[0]["fit"].(map[string]any)
	if !ok || fit["slope"] != 1.5 || fit["n"] != 3.0 || got[0]["note"] != "[not json" {
		t.Errorf("nested: %v", got[0])
	}
	b.Reset()
	writeRows(&b, rows(), outputOptions{format: FormatJSON})
	got = nil
	json.Unmarshal(b.Bytes(), &got)
	if got[0]["fit"] != `{"slope": 1.5, "n": 3}` {
		t.Errorf("without --nest-json the result stays a string: %v", got[0])
	}
	// A censored value reads as reported ('<5', as readings_view shows it),
	// not with the \u003c escape meant for JSON inside HTML; the text still
	// decodes to the same string (RFC 8259 needs only quote, backslash and
	// control characters escaped).
	b.Reset()
	writeRows(&b, &memRows{cols: []string{"value <&>"}, rows: [][]any{{"<5"}, {"a & b > c"}}}, outputOptions{format: FormatJSON})
	if want := "[\n  {\"value <&>\": \"<5\"},\n  {\"value <&>\": \"a & b > c\"}\n]\n"; b.String() != want {
		t.Errorf("json %q, want %q", b.String(), want)
	}
	got = nil
	if err := json.Unmarshal(b.Bytes(), &got); err != nil || got[0]["value <&>"] != "<5" || got[1]["value <&>"] != "a & b > c" {
		t.Errorf("decoded %v, %v", got, err)
	}
	// --nest-json outside json output is a usage error, not silently ignored.
	if _, errs, code := runIn("", "functions", "--nest-json"); code != ExitUsage || !strings.Contains(errs, "--nest-json applies to json output") {
		t.Errorf("--nest-json with a table: exit %d, %q", code, errs)
	}
	if _, errs, code := runIn("", "functions", "--nest-json", "--out", filepath.Join(t.TempDir(), "f.json"), "pettitt"); code != 0 {
		t.Errorf("--nest-json with --out FILE.json: exit %d, %q", code, errs)
	}
}

func TestQueryFromFileStdinAndToFile(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "q.db")
	initStore(t, db)
	sqlFile := filepath.Join(dir, "q.sql")
	os.WriteFile(sqlFile, []byte("INSERT INTO stations(id, name) VALUES ('A', 'a'), ('B', 'b');\nUPDATE stations SET name = upper(name) WHERE id = 'A';\nSELECT id, name FROM stations ORDER BY id;\n"), 0o644)

	// --file, with --write: each changing statement's count goes to stderr.
	out, errs, code := runIn("", "--db", db, "query", "--write", "--format", "csv", "--file", sqlFile)
	if code != 0 || out != "id,name\nA,A\nB,b\n" {
		t.Fatalf("--file: exit %d, stdout %q, stderr %q", code, out, errs)
	}
	if errs != "statement 1 (INSERT): 2 rows changed\nstatement 2 (UPDATE): 1 row changed\n" {
		t.Errorf("--write changes on stderr: %q", errs)
	}
	// "-" reads standard input.
	out, _, code = runIn("SELECT count(*) AS n FROM stations;", "--db", db, "query", "--format", "csv", "-")
	if code != 0 || out != "n\n2\n" {
		t.Errorf("stdin: exit %d, %q", code, out)
	}
	// The store itself is never an --out file, --force or not.
	before, _ := os.ReadFile(db)
	if _, errs, code := runIn("", "--db", db, "query", "--format", "csv", "--force", "--out", db, "SELECT 1"); code != ExitUsage || !strings.Contains(errs, "is the store itself") {
		t.Errorf("--out the store: exit %d, %q", code, errs)
	}
	if after, _ := os.ReadFile(db); !bytes.Equal(before, after) {
		t.Error("--out replaced the store")
	}
	out, _, code = runIn("SELECT count(*) AS n FROM stations;", "--db", db, "query", "--format", "csv", "--file", "-")
	if code != 0 || out != "n\n2\n" {
		t.Errorf("--file - (standard input): exit %d, %q", code, out)
	}
	// --out: format from the extension, nothing on stdout, no partial file.
	csvOut := filepath.Join(dir, "st.csv")
	out, errs, code = runIn("", "--db", db, "query", "--out", csvOut, "SELECT id, name FROM stations ORDER BY id")
	got, _ := os.ReadFile(csvOut)
	if code != 0 || out != "" || string(got) != "id,name\nA,A\nB,b\n" {
		t.Errorf("--out csv: exit %d, stdout %q, stderr %q, file %q", code, out, errs, got)
	}
	_, errs, code = runIn("", "--db", db, "query", "--out", csvOut, "SELECT 1")
	if code != ExitFailed || !strings.Contains(errs, "exists") {
		t.Errorf("--out over an existing file: exit %d, %q", code, errs)
	}
	if _, _, code = runIn("", "--db", db, "query", "--out", csvOut, "--force", "--format", "json", "SELECT 7 AS seven"); code != 0 {
		t.Errorf("--force: exit %d", code)
	}
	got, _ = os.ReadFile(csvOut)
	if string(got) != "[\n  {\"seven\": 7}\n]\n" {
		t.Errorf("--format json wins over the extension: %q", got)
	}
	failed := filepath.Join(dir, "failed.csv")
	if _, _, code = runIn("", "--db", db, "query", "--out", failed, "SELECT no_such_column FROM stations"); code != ExitFailed {
		t.Errorf("failing query: exit %d", code)
	}
	if m, _ := filepath.Glob(filepath.Join(dir, "*failed*")); len(m) != 0 {
		t.Errorf("a failed query left files: %v", m)
	}
	// A long cell written to a file is whole.
	long := strings.Repeat("x", 300)
	txt := filepath.Join(dir, "long.txt")
	runIn("", "--db", db, "query", "--out", txt, "SELECT '"+long+"' AS v")
	if got, _ := os.ReadFile(txt); !strings.Contains(string(got), long) {
		t.Errorf("table in a file cut a cell: %q", got)
	}
}

func TestFunctionsSharesQueryOutput(t *testing.T) {
	out, errs, code := runIn("", "functions", "--format", "csv", "regr_slope")
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if code != 0 || err != nil || len(recs) < 2 || strings.Join(recs[0], ",") != "name,signature,kind,summary" || recs[1][0] != "regr_slope" {
		t.Errorf("functions --format csv: exit %d, %q, %v, stderr %q", code, out, err, errs)
	}
	out, _, code = runIn("", "functions", "--format", "fields", "ljung")
	if code != 0 || !strings.Contains(out, "── row 1\nname ") || !strings.Contains(out, "ljung_box") {
		t.Errorf("functions --format fields: %q", out)
	}
	file := filepath.Join(t.TempDir(), "f.json")
	if _, errs, code := runIn("", "functions", "--out", file); code != 0 {
		t.Fatalf("functions --out: %s", errs)
	}
	var docs []map[string]any
	if b, _ := os.ReadFile(file); json.Unmarshal(b, &docs) != nil || len(docs) == 0 {
		t.Errorf("functions --out f.json: %s", b)
	}
}

func TestShellOutSendsNextResultsToFile(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "s.db")
	initStore(t, db)
	file := filepath.Join(dir, "one.csv")
	in := ":out " + file + "\nSELECT 1 AS a, 'x,y' AS b;\nSELECT 2 AS back_on_screen;\n:out " + file + "\nINSERT INTO stations(id) VALUES ('Z');\n"
	out, errs, code := runIn(in, "--db", db, "shell", "--write")
	got, _ := os.ReadFile(file)
	if string(got) != "a,b\n1,\"x,y\"\n" {
		t.Errorf(":out file %q", got)
	}
	if strings.Contains(out, "x,y") || !strings.Contains(out, "back_on_screen") {
		t.Errorf("stdout %q: the first result should be in the file only, the second on screen", out)
	}
	if code != ExitFailed || !strings.Contains(errs, "1 row written to "+file) || !strings.Contains(errs, "exists") ||
		!strings.Contains(errs, "statement (INSERT): 1 row changed") {
		t.Errorf("exit %d, stderr %q", code, errs)
	}
}

// :out replaces an existing file only with --force, as --out does; the
// store itself is never replaced, --force or not.
func TestShellOutForceReplaces(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "s.db")
	initStore(t, db)
	file := filepath.Join(dir, "old.csv")
	if err := os.WriteFile(file, []byte("kept\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, errs, code := runIn(":out "+file+"\nSELECT 1 AS a;\n", "--db", db, "shell")
	if got, _ := os.ReadFile(file); string(got) != "kept\n" || code != ExitFailed ||
		!strings.Contains(errs, ":out: "+file+" exists; choose another file or replace it with :out --force "+file) {
		t.Errorf(":out on an existing file: exit %d, stderr %q, file %q", code, errs, got)
	}
	out, errs, code := runIn(":out --force "+file+"\nSELECT 1 AS a;\nSELECT 2 AS b;\n", "--db", db, "shell")
	if got, _ := os.ReadFile(file); string(got) != "a\n1\n" || code != 0 || !strings.Contains(out, "b") ||
		!strings.Contains(errs, "1 row written to "+file) {
		t.Errorf(":out --force: exit %d, stdout %q, stderr %q, file %q", code, out, errs, got)
	}
	for _, c := range []struct{ in, want string }{
		{":out --force\n", ":out --force: name the file to write"},
		{":out --force " + db + "\n", ":out: " + db + " is the store itself (or its journal); results never replace it, --force or not"},
		{":out --force " + dir + "\n", ":out: " + dir + " is a directory"},
		{":out --replace\n", ":out: unknown option --replace"},
	} {
		if _, errs, code := runIn(c.in, "--db", db, "shell"); code != ExitFailed || !strings.Contains(errs, c.want) {
			t.Errorf("%q: exit %d, stderr %q; want %q", c.in, code, errs, c.want)
		}
	}
	if st, err := os.Stat(db); err != nil || st.Size() == 0 {
		t.Errorf("the store after :out --force on it: %v", err)
	}
	if !strings.Contains(shellHelp, ":out --force FILE") {
		t.Errorf(":help does not list :out --force FILE:\n%s", shellHelp)
	}
}

func TestTieMessageNamesTimeAndSeries(t *testing.T) {
	db := filepath.Join(t.TempDir(), "tie.db")
	initStore(t, db)
	setup := `INSERT INTO stations(id) VALUES ('S');
INSERT INTO series(station_id, variable) VALUES ('S', 'stage'), ('S', 'temp');
INSERT INTO readings(series_id, t, value) SELECT s.id, 1421139060 + 3600 * k.k, k.k FROM series s, (SELECT 0 AS k UNION ALL SELECT 1 UNION ALL SELECT 2) k;
SELECT 1`
	if _, errs, code := runIn("", "--db", db, "query", "--write", setup); code != 0 {
		t.Fatal(errs)
	}
	_, errs, code := runIn("", "--db", db, "query", "SELECT trend_slope(t, value) FROM readings_view WHERE station_id = 'S'")
	// 1421139060 unix seconds is 2015-01-13T08:51:00Z (GNU date -u -d @1421139060).
	for _, want := range []string{"2015-01-13T08:51:00Z", "t = 1421139060)", "may belong to different series", "GROUP BY series_id"} {
		if code != ExitFailed || !strings.Contains(errs, want) {
			t.Errorf("tie error: exit %d, stderr %q lacks %q", code, errs, want)
		}
	}
	// The readings table holds every series too.
	_, errs, _ = runIn("", "--db", db, "query", "SELECT trend_slope(r.t, r.value) FROM readings r")
	if !strings.Contains(errs, "the rows come from readings, which holds every series") || !strings.Contains(errs, "2015-01-13T08:51:00Z") {
		t.Errorf("tie in the readings table: %q", errs)
	}
	// Rows of the user's own making get the time but no word about series.
	_, errs, _ = runIn("", "--db", db, "query", "SELECT trend_slope(t, y) FROM (SELECT 1421139060 AS t, 1 AS y UNION ALL SELECT 1421139060, 2 UNION ALL SELECT 1421142660, 3)")
	if strings.Contains(errs, "different series") || !strings.Contains(errs, "2015-01-13T08:51:00Z") {
		t.Errorf("tie outside the store's readings: %q", errs)
	}
}

// A TEXT that no function mentions is a usage error naming the closest
// function names (the list is fixed, so an empty list is always a mistake);
// nothing goes to stdout or to --out. The shell's :functions says the same.
func TestFunctionsNoMatchIsUsageError(t *testing.T) {
	for _, c := range []struct{ text, want string }{
		{"ljungbox", `functions: no SQL function mentions "ljungbox" (closest: ljung_box)`},
		{"kendal1", `functions: no SQL function mentions "kendal1" (closest: mann_kendall, seasonal_kendall, censored_mann_kendall)`},
		{"sen slpe", `functions: no SQL function mentions "sen slpe" (closest: sen_slope)`},
		{"zzz", `functions: no SQL function mentions "zzz" and no function name is close to it (` + "`trendsql functions`" + ` lists all `},
	} {
		out, errs, code := runIn("", "functions", c.text)
		if code != ExitUsage || out != "" || !strings.HasPrefix(errs, "trendsql: "+c.want) || strings.Count(errs, "\n") != 1 {
			t.Errorf("functions %q: exit %d, stdout %q, stderr %q; want exit 2 and %q", c.text, code, out, errs, c.want)
		}
	}
	// Any TEXT some name or summary mentions still lists, in any case.
	if out, errs, code := runIn("", "functions", "--format", "csv", "AUTOCORRELATION"); code != 0 || !strings.Contains(out, "\nsample_acf,") {
		t.Errorf("functions AUTOCORRELATION: exit %d, stdout %q, stderr %q", code, out, errs)
	}
	// No --out file is left behind, and flag errors still come first.
	file := filepath.Join(t.TempDir(), "none.csv")
	if _, _, code := runIn("", "functions", "--out", file, "zzz"); code != ExitUsage {
		t.Errorf("functions --out FILE zzz: exit %d", code)
	}
	if entries, _ := os.ReadDir(filepath.Dir(file)); len(entries) != 0 {
		t.Errorf("functions --out with no match left %v", entries)
	}
	if _, errs, code := runIn("", "functions", "--format", "xml", "zzz"); code != ExitUsage || !strings.Contains(errs, "--format must be") {
		t.Errorf("functions --format xml zzz: exit %d, stderr %q", code, errs)
	}
	db := filepath.Join(t.TempDir(), "s.db")
	initStore(t, db)
	out, errs, code := runIn(":functions zzz\n:functions ljungbox\n", "--db", db, "shell")
	if code != ExitFailed || out != "" || !strings.Contains(errs, `:functions: no SQL function mentions "zzz"`) ||
		!strings.Contains(errs, `:functions: no SQL function mentions "ljungbox" (closest: ljung_box)`) {
		t.Errorf("shell :functions with no match: exit %d, stdout %q, stderr %q", code, out, errs)
	}
}
