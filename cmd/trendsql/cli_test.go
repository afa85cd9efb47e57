package main

// End-to-end tests through the built binary (CGO_ENABLED=0, as shipped), on a
// full demo store built once and shared by the tests that only read it.

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"trendsql/store"
	"trendsql/store/demodata"
	"trendsql/store/storetest"
)

var (
	workDir string // scratch directory shared by the tests

	binOnce sync.Once
	binPath string // the built trendsql binary
	binErr  error

	demoOnce   sync.Once
	demoPath   string
	demoStdout string
	demoStderr string
	demoCode   int
)

func TestMain(m *testing.M) {
	os.Exit(testMain(m))
}

func testMain(m *testing.M) int {
	dir, err := os.MkdirTemp("", "trendsql-cli-test-")
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	defer os.RemoveAll(dir)
	workDir = dir
	return m.Run()
}

// bin builds the binary once, as shipped (CGO_ENABLED=0), and returns its path.
func bin(t *testing.T) string {
	t.Helper()
	binOnce.Do(func() {
		binPath = filepath.Join(workDir, "trendsql")
		build := exec.Command("go", "build", "-o", binPath, ".")
		build.Env = append(os.Environ(), "CGO_ENABLED=0")
		if out, err := build.CombinedOutput(); err != nil {
			binErr = fmt.Errorf("building trendsql with CGO_ENABLED=0: %v\n%s", err, out)
		}
	})
	if binErr != nil {
		t.Fatal(binErr)
	}
	return binPath
}

// runBin runs the built binary with stdin and returns stdout, stderr and the
// exit code. TRENDSQL_DB is cleared so only --db selects the store.
func runBin(t *testing.T, stdin string, args ...string) (string, string, int) {
	t.Helper()
	cmd := exec.Command(bin(t), args...)
	cmd.Dir = workDir
	cmd.Stdin = strings.NewReader(stdin)
	for _, kv := range os.Environ() {
		if !strings.HasPrefix(kv, store.EnvDB+"=") {
			cmd.Env = append(cmd.Env, kv)
		}
	}
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	err := cmd.Run()
	code := 0
	if ee, ok := err.(*exec.ExitError); ok {
		code = ee.ExitCode()
	} else if err != nil {
		t.Fatalf("running trendsql %v: %v", args, err)
	}
	return out.String(), errb.String(), code
}

// demoStore builds the full demo store once and returns its path.
func demoStore(t *testing.T) string {
	t.Helper()
	demoOnce.Do(func() {
		demoPath = filepath.Join(workDir, "demo.db")
		cmd := exec.Command(bin(t), "demo", "--db", demoPath)
		var out, errb bytes.Buffer
		cmd.Stdout, cmd.Stderr = &out, &errb
		err := cmd.Run()
		demoStdout, demoStderr = out.String(), errb.String()
		if ee, ok := err.(*exec.ExitError); ok {
			demoCode = ee.ExitCode()
		} else if err != nil {
			demoCode = -1
			demoStderr += err.Error()
		}
	})
	if demoCode != 0 {
		t.Fatalf("trendsql demo exited %d:\n%s", demoCode, demoStderr)
	}
	return demoPath
}

// checkIntegrity opens a store read-only and runs PRAGMA integrity_check.
func checkIntegrity(t *testing.T, path string) {
	t.Helper()
	storetest.OpenReadOnly(t, path)
}

func TestDemoBuildsStoreAndPrintsTour(t *testing.T) {
	db := demoStore(t)
	defer checkIntegrity(t, db)
	if !strings.Contains(demoStderr, "44 stations") {
		t.Errorf("demo summary does not report 44 stations:\n%s", demoStderr)
	}
	steps := demodata.TourFor(haveFunction())
	if len(steps) < 5 {
		t.Errorf("tour has %d steps, want at least 5", len(steps))
	}
	pos := 0
	for i, st := range steps {
		head := fmt.Sprintf("── %d. %s", i+1, st.Explain)
		k := strings.Index(demoStdout[pos:], head)
		if k < 0 {
			t.Fatalf("tour output lacks step %d heading %q (or steps out of order)", i+1, head)
		}
		pos += k
		firstSQL := strings.SplitN(st.SQL, "\n", 2)[0]
		if !strings.Contains(demoStdout[pos:], "    "+firstSQL) {
			t.Errorf("tour step %d does not show its SQL", i+1)
		}
	}
	if strings.Contains(demoStdout, "step failed") {
		t.Errorf("a tour step failed:\n%s", demoStdout)
	}
	if n := strings.Count(demoStdout, "\n→ "); n != len(steps) {
		t.Errorf("tour printed %d result tables for %d steps", n, len(steps))
	}
	lines := strings.Split(strings.TrimSpace(demoStdout), "\n")
	if last := lines[len(lines)-1]; last != demodata.TourCaution {
		t.Errorf("tour ends with %q, want the caution sentence", last)
	}
	// The store holds roughly a million readings, as the scenario promises.
	out, errOut, code := runBin(t, "", "query", "--db", db, "--format", "csv", "SELECT count(*) AS n, count(DISTINCT series_id) AS series FROM readings")
	if code != 0 {
		t.Fatalf("count query: exit %d: %s", code, errOut)
	}
	var n, series int
	fmt.Sscanf(strings.Split(out, "\n")[1], "%d,%d", &n, &series)
	if n < 800_000 || n > 1_300_000 || series < 40 {
		t.Errorf("demo store has %d readings in %d series; want about a million in at least 40", n, series)
	}
}

func TestDemoRefusesToOverwrite(t *testing.T) {
	// An untouched demo store is rebuilt (same seed, same content), so the
	// README's first command can be run twice.
	db := filepath.Join(t.TempDir(), "again.db")
	if _, e, c := runBin(t, "", "demo", "--db", db, "--no-tour"); c != 0 {
		t.Fatalf("demo: exit %d: %s", c, e)
	}
	first, _, _ := runBin(t, "", "query", "--db", db, "--format", "csv", "SELECT count(*), sum(value) FROM readings")
	_, errOut, code := runBin(t, "", "demo", "--db", db, "--no-tour")
	if code != 0 || !strings.Contains(errOut, "replaced the earlier demo store") {
		t.Errorf("demo over an untouched demo store: exit %d, stderr %q; want it rebuilt", code, errOut)
	}
	second, _, _ := runBin(t, "", "query", "--db", db, "--format", "csv", "SELECT count(*), sum(value) FROM readings")
	if first != second || first == "" {
		t.Errorf("rebuilt demo differs: %q -> %q", first, second)
	}
	// Once it holds a summary run, it is the user's work: refused, unchanged.
	if _, e, c := runBin(t, "", "summarize", "--db", db, "--station", "VOR-W01"); c != 0 {
		t.Fatalf("summarize: exit %d: %s", c, e)
	}
	before, _, _ := runBin(t, "", "query", "--db", db, "--format", "csv", "SELECT count(*), sum(value), (SELECT count(*) FROM summary_runs) FROM readings")
	_, errOut, code = runBin(t, "", "demo", "--db", db)
	if code != ExitFailed || !strings.Contains(errOut, "--force") {
		t.Errorf("demo over a summarized demo store: exit %d, stderr %q; want exit 1 mentioning --force", code, errOut)
	}
	after, _, _ := runBin(t, "", "query", "--db", db, "--format", "csv", "SELECT count(*), sum(value), (SELECT count(*) FROM summary_runs) FROM readings")
	if before != after || before == "" {
		t.Errorf("a refused demo changed the store: %q -> %q", before, after)
	}
	// A user's store with one station is refused too, and left as it was.
	user := filepath.Join(t.TempDir(), "user.db")
	initStore(t, user)
	if _, e, c := runBin(t, "", "query", "--db", user, "--write", "INSERT INTO stations(id) VALUES ('MINE')"); c != 0 {
		t.Fatalf("insert: exit %d: %s", c, e)
	}
	if _, e, c := runBin(t, "", "demo", "--db", user, "--no-tour"); c != ExitFailed || !strings.Contains(e, "refusing") {
		t.Errorf("demo over a user store: exit %d, %q", c, e)
	}
	out, _, _ := runBin(t, "", "query", "--db", user, "--format", "csv", "SELECT group_concat(id) AS ids FROM stations")
	if out != "ids\nMINE\n" {
		t.Errorf("user store after refused demo: %q", out)
	}
	checkIntegrity(t, db)
	checkIntegrity(t, user)
}

func TestQueryTableFormat(t *testing.T) {
	db := demoStore(t)
	out, errOut, code := runBin(t, "", "query", "--db", db,
		"SELECT id, name, NULL AS missing, elevation_m FROM stations WHERE id IN ('VOR-G01', 'VOR-L01') ORDER BY id")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	lines := strings.Split(strings.TrimRight(out, "\n"), "\n")
	if len(lines) != 5 {
		t.Fatalf("want header, rule, 2 rows, count; got:\n%s", out)
	}
	if f := strings.Fields(lines[0]); strings.Join(f, " ") != "id name missing elevation_m" {
		t.Errorf("header %q", lines[0])
	}
	if !strings.HasPrefix(lines[1], "──") {
		t.Errorf("rule line %q", lines[1])
	}
	if !strings.Contains(lines[2], "VOR-G01") || !strings.Contains(lines[2], "Vorlen at Hessel Bridge") || !strings.Contains(lines[2], nullMark) || !strings.HasSuffix(lines[2], "412") {
		t.Errorf("row %q: want id, name, %s for NULL and right-aligned elevation", lines[2], nullMark)
	}
	// Columns are aligned: the elevation column ends at the same position.
	if len([]rune(lines[2])) != len([]rune(lines[3])) {
		t.Errorf("rows not aligned:\n%s\n%s", lines[2], lines[3])
	}
	if lines[4] != "→ 2 rows" {
		t.Errorf("count line %q", lines[4])
	}
}

func TestQueryCSVFormat(t *testing.T) {
	db := demoStore(t)
	out, errOut, code := runBin(t, "", "query", "--db", db, "--format", "csv",
		"SELECT id, name, NULL AS missing, 'a,\"b\"' AS quoted FROM stations ORDER BY id LIMIT 2")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatalf("output is not CSV: %v\n%s", err, out)
	}
	want := [][]string{
		{"id", "name", "missing", "quoted"},
		{"VOR-G01", "Vorlen at Hessel Bridge", "", `a,"b"`},
		{"VOR-G02", "Skarra Beck at Tamsey Weir", "", `a,"b"`},
	}
	if fmt.Sprint(recs) != fmt.Sprint(want) {
		t.Errorf("CSV records %q, want %q", recs, want)
	}
}

func TestQueryJSONFormat(t *testing.T) {
	db := demoStore(t)
	out, errOut, code := runBin(t, "", "query", "--db", db, "--format", "json",
		"SELECT id, NULL AS missing, elevation_m, count(*) OVER () AS n FROM stations WHERE id = 'VOR-W09'")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var got []map[string]any
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("output is not JSON: %v\n%s", err, out)
	}
	if len(got) != 1 {
		t.Fatalf("want one object, got %v", got)
	}
	o := got[0]
	if o["id"] != "VOR-W09" || o["elevation_m"] != 203.0 || o["n"] != 1.0 {
		t.Errorf("object %v", o)
	}
	if v, ok := o["missing"]; !ok || v != nil {
		t.Errorf("NULL column: present %v, value %v; want JSON null", ok, v)
	}
	// Column order is kept.
	if strings.Index(out, `"id"`) > strings.Index(out, `"missing"`) || strings.Index(out, `"missing"`) > strings.Index(out, `"elevation_m"`) {
		t.Errorf("column order lost: %s", out)
	}
	// An infinite REAL is never written as null (SQL NULL's rendering).
	out, errOut, code = runBin(t, "", "query", "--db", db, "--format", "json", "SELECT 9e999 AS up, -9e999 AS down, NULL AS missing")
	got = nil
	if err := json.Unmarshal([]byte(out), &got); code != 0 || err != nil || len(got) != 1 {
		t.Fatalf("exit %d, %v: %s %s", code, err, out, errOut)
	}
	if o := got[0]; o["up"] != "Infinity" || o["down"] != "-Infinity" || o["missing"] != nil {
		t.Errorf("infinities: %v", o)
	}
}

func TestQueryBadSQLReportsPosition(t *testing.T) {
	db := demoStore(t)
	_, errOut, code := runBin(t, "", "query", "--db", db, "SELECT 1;\n  SELEC id FROM stations")
	if code != ExitFailed {
		t.Errorf("exit %d, want %d", code, ExitFailed)
	}
	if !strings.Contains(errOut, "line 2, column 3") || !strings.Contains(errOut, "SELEC") {
		t.Errorf("error %q: want line 2, column 3 and the offending token", errOut)
	}
	// The token SQLite names occurs earlier in the statement too: the
	// position is the one where parsing stopped (the third ")", column
	// 63), not the first ")" (column 14).
	_, errOut, _ = runBin(t, "", "query", "--db", db, "SELECT count(*), max(id) FROM stations WHERE (id > 1 AND (id <) 3)")
	if !strings.Contains(errOut, "line 1, column 63") || !strings.Contains(errOut, `near ")"`) {
		t.Errorf("error %q: want line 1, column 63", errOut)
	}
	// In a string, a comment and an earlier statement: not the position.
	_, errOut, _ = runBin(t, "", "query", "--db", db, "SELECT 'a;b 1' AS x; -- 1\nSELECT 2 /* 1 */ 1")
	if !strings.Contains(errOut, "line 2, column 18") {
		t.Errorf("error %q: want line 2, column 18", errOut)
	}
	_, errOut, code = runBin(t, "", "query", "--db", db, "SELECT no_such_column FROM stations")
	if code != ExitFailed || !strings.Contains(errOut, "no_such_column") {
		t.Errorf("unknown column: exit %d, %q", code, errOut)
	}
}

func TestQueryWritesOnlyWithWrite(t *testing.T) {
	db := filepath.Join(t.TempDir(), "w.db")
	if _, e, c := runBin(t, "", "init", "--db", db); c != 0 {
		t.Fatalf("init: exit %d: %s", c, e)
	}
	_, errOut, code := runBin(t, "", "query", "--db", db, "INSERT INTO stations(id, name) VALUES ('S1', 'one')")
	if code != ExitFailed || !strings.Contains(errOut, "readonly") {
		t.Errorf("write without --write: exit %d, %q; want exit 1 saying readonly", code, errOut)
	}
	if _, e, c := runBin(t, "", "query", "--db", db, "--write", "INSERT INTO stations(id, name) VALUES ('S1', 'one')"); c != 0 {
		t.Errorf("write with --write: exit %d: %s", c, e)
	}
	out, _, _ := runBin(t, "", "query", "--db", db, "--format", "csv", "SELECT id, name FROM stations")
	if out != "id,name\nS1,one\n" {
		t.Errorf("stations after the write: %q", out)
	}
	checkIntegrity(t, db)
}

func TestFunctionsAndVersion(t *testing.T) {
	out, errOut, code := runBin(t, "", "functions")
	if code != 0 {
		t.Fatalf("functions: exit %d: %s", code, errOut)
	}
	if f := strings.Fields(strings.SplitN(out, "\n", 2)[0]); strings.Join(f, " ") != "name signature kind summary" || !strings.Contains(out, "regr_slope(y, x)") {
		t.Errorf("functions output lacks the header or regr_slope:\n%s", out)
	}
	out, _, code = runBin(t, "", "functions", "--format", "json")
	var docs []struct{ Name, Signature, Kind, Summary string }
	if code != 0 || json.Unmarshal([]byte(out), &docs) != nil || len(docs) == 0 {
		t.Errorf("functions --format json: exit %d, %q", code, out)
	}
	out, _, code = runBin(t, "", "version")
	if code != 0 || !strings.HasPrefix(out, "trendsql ") || !strings.Contains(out, "modernc.org/sqlite") {
		t.Errorf("version: exit %d, %q", code, out)
	}
}

func TestShellWithPipedInput(t *testing.T) {
	db := demoStore(t)
	in := `:tables
-- a comment line before a statement
SELECT count(*) AS stations,
       count(*) FILTER (WHERE json_extract(metadata, '$.aquifer') = 'karst') AS karst
FROM stations;
:columns readings
:columns main."stations"
:format csv
SELECT id, 'semi;colon' AS text FROM stations ORDER BY id LIMIT 1;
:functions regr_slope
`
	out, errOut, code := runBin(t, in, "shell", "--db", db)
	if code != 0 {
		t.Fatalf("shell: exit %d: %s", code, errOut)
	}
	for _, want := range []string{
		"readings_view",                      // :tables
		"stations  karst", "      44      7", // the multi-line statement, table format
		"series_id", "qualifier", // :columns readings
		"elevation_m",                   // :columns main."stations"
		"id,text\nVOR-G01,semi;colon\n", // after :format csv
		"regr_slope(y, x)",              // :functions
	} {
		if !strings.Contains(out, want) {
			t.Errorf("shell output lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, "›") {
		t.Error("piped shell printed a prompt")
	}
}

func TestShellContinuesAfterErrors(t *testing.T) {
	db := demoStore(t)
	in := "SELEC 1;\n:nonsense\nINSERT INTO stations(id) VALUES ('X');\nSELECT 6 * 7 AS answer;\n\nSELECT 1,\n  2 FROM\n  nowhere );\n"
	out, errOut, code := runBin(t, in, "shell", "--db", db)
	if code != ExitFailed {
		t.Errorf("exit %d, want %d after failed statements", code, ExitFailed)
	}
	if !strings.Contains(out, "answer") || !strings.Contains(out, "42") {
		t.Errorf("the statement after the errors did not run:\n%s", out)
	}
	for _, want := range []string{"input line 1: SQL error at line 1, column 1", "input line 2: unknown shell command :nonsense", "input line 3: SQL error: attempt to write a readonly database",
		"input line 6: SQL error at line 8, column 11", "4 of 5"} {
		if !strings.Contains(errOut, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errOut)
		}
	}
	checkIntegrity(t, db)
}

func TestShellWriteAndTransaction(t *testing.T) {
	db := filepath.Join(t.TempDir(), "s.db")
	if _, e, c := runBin(t, "", "init", "--db", db); c != 0 {
		t.Fatalf("init: %s", e)
	}
	// One connection for the session: a transaction spans statements, and a
	// trigger body with semicolons is one statement.
	in := `BEGIN;
INSERT INTO stations(id, name) VALUES ('A', 'a');
CREATE TEMP TRIGGER name_upper AFTER INSERT ON stations BEGIN
  UPDATE stations SET name = upper(name) WHERE id = new.id;
END;
INSERT INTO stations(id, name) VALUES ('B', 'b');
COMMIT;
SELECT group_concat(id || '=' || name, ' ') AS s FROM (SELECT * FROM stations ORDER BY id)
`
	out, errOut, code := runBin(t, in, "shell", "--db", db, "--write", "--format", "csv")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if out != "s\nA=a B=B\n" {
		t.Errorf("output %q, want the trigger to have run on B only", out)
	}
	checkIntegrity(t, db)
}

// TestShellInteractiveOnTerminal drives the line-editing shell through a
// pseudo-terminal made by util-linux script(1); skipped when script is absent.
func TestShellInteractiveOnTerminal(t *testing.T) {
	scriptBin, err := exec.LookPath("script")
	if err != nil {
		t.Skip("script(1) not installed: cannot make a pseudo-terminal")
	}
	db := demoStore(t)
	cache := t.TempDir()
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute) // guards against a hang only
	defer cancel()
	cmd := exec.CommandContext(ctx, scriptBin, "-qfec", bin(t)+" shell --db "+db, "/dev/null")
	cmd.Env = append(os.Environ(), "XDG_CACHE_HOME="+cache, "HOME="+cache, "TERM=dumb")
	cmd.Stdin = strings.NewReader("SELECT 6 * 7 AS answer,\r 1 AS one;\r:format csv\rSELECT 'x' AS two;\r:quit\r")
	raw, err := cmd.Output()
	if err != nil {
		t.Fatalf("interactive shell: %v\n%s", err, raw)
	}
	out := strings.ReplaceAll(string(raw), "\r", "")
	for _, want := range []string{"read-only", "›", "┆", "42", "two\nx\n"} {
		if !strings.Contains(out, want) {
			t.Errorf("terminal session lacks %q:\n%q", want, out)
		}
	}
	hist, err := os.ReadFile(filepath.Join(cache, "trendsql", "history"))
	if err != nil {
		t.Fatalf("history file: %v", err)
	}
	if !strings.Contains(string(hist), "SELECT 'x' AS two;") {
		t.Errorf("history lacks the last statement:\n%s", hist)
	}
}
