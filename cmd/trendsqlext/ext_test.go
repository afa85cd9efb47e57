package main

// The extension checked against the binary: the library is built with the
// README's command, loaded into the sqlite3 shell and into Python's sqlite3
// module, and every README example (a ```sql block followed by a ```text
// block) runs on the demo store through each host and through `trendsql
// query`; the results must agree value by value (column names, counts and
// text exactly, numbers to 1e-12 relative, JSON text structurally). The
// misuse cases must give the same values, or the same error messages, as
// the binary.
//
// Needs gcc and SQLite's headers (Debian: gcc, libsqlite3-dev) to build the
// library, and sqlite3 and /usr/bin/python3 for the hosts. A missing tool
// skips the test with a message, except under CI=true, where it fails.

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
)

const python = "/usr/bin/python3"

// need skips (or, under CI=true, fails) the test when a tool is missing.
func need(t *testing.T, what string, err error) {
	t.Helper()
	if err == nil {
		return
	}
	if os.Getenv("CI") == "true" {
		t.Fatalf("%s: %v", what, err)
	}
	t.Skipf("skipped: %s: %v", what, err)
}

// fixture is built once per test binary: the library, the binary and the
// demo store with the README's two summarize runs.
type fixtureT struct {
	once          sync.Once
	dir           string
	lib, bin, db  string
	missing, fail string
}

var fixture fixtureT

func run(dir string, env []string, name string, args ...string) (string, error) {
	cmd := exec.Command(name, args...)
	cmd.Dir = dir
	cmd.Env = append(os.Environ(), env...)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	err := cmd.Run()
	if err != nil {
		return out.String(), fmt.Errorf("%s %s: %v: %s", name, strings.Join(args, " "), err, errb.String())
	}
	return out.String(), nil
}

func buildFixture() {
	f := &fixture
	cc := os.Getenv("CC")
	if cc == "" {
		cc = "gcc"
	}
	if _, err := exec.LookPath(cc); err != nil {
		f.missing = "a C compiler (" + cc + ") is needed to build the extension (Debian: apt-get install gcc)"
		return
	}
	probe := exec.Command(cc, "-fsyntax-only", "-x", "c", "-")
	probe.Stdin = strings.NewReader("#include <sqlite3ext.h>\n")
	if out, err := probe.CombinedOutput(); err != nil {
		f.missing = "SQLite's extension header sqlite3ext.h is needed (Debian: apt-get install libsqlite3-dev): " + strings.TrimSpace(string(out))
		return
	}
	dir, err := os.MkdirTemp("", "trendsqlext-test-")
	if err != nil {
		f.fail = err.Error()
		return
	}
	f.dir = dir
	f.lib = filepath.Join(dir, "trendsql.so")
	f.bin = filepath.Join(dir, "trendsql")
	f.db = filepath.Join(dir, "demo.db")
	steps := []struct {
		env  []string
		name string
		args []string
	}{
		// The README's build command.
		{[]string{"CGO_ENABLED=1"}, "go", []string{"build", "-tags", "trendsqlext", "-buildmode=c-shared", "-o", f.lib, "."}},
		{[]string{"CGO_ENABLED=0"}, "go", []string{"build", "-o", f.bin, "../trendsql"}},
		{nil, f.bin, []string{"demo", "--db", f.db}},
		{nil, f.bin, []string{"summarize", "--db", f.db, "--period", "1y", "--until", "2024-12-31T23:59:59Z"}},
		{nil, f.bin, []string{"summarize", "--db", f.db, "--period", "1y"}},
	}
	for _, s := range steps {
		if _, err := run(".", s.env, s.name, s.args...); err != nil {
			f.fail = err.Error()
			return
		}
	}
}

// setup returns the fixture or skips/fails the test.
func setup(t *testing.T) *fixtureT {
	t.Helper()
	if testing.Short() {
		t.Skip("builds the extension and the demo store")
	}
	fixture.once.Do(buildFixture)
	if fixture.missing != "" {
		need(t, "building the extension", fmt.Errorf("%s", fixture.missing))
	}
	if fixture.fail != "" {
		t.Fatal(fixture.fail)
	}
	return &fixture
}

func TestMain(m *testing.M) {
	code := m.Run()
	if fixture.dir != "" {
		os.RemoveAll(fixture.dir)
	}
	os.Exit(code)
}

// result is one statement's outcome in any host.
type result struct {
	cols []string
	rows [][]any // nil, json.Number, string, or map[string]any (a BLOB)
	err  string
}

// decodeObjects reads a JSON array of objects, keeping column order.
func decodeObjects(data []byte) (result, error) {
	var r result
	data = bytes.TrimSpace(data)
	if len(data) == 0 {
		return r, nil
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	if tok, err := dec.Token(); err != nil || tok != json.Delim('[') {
		return r, fmt.Errorf("not a JSON array: %.200s", data)
	}
	for dec.More() {
		if tok, err := dec.Token(); err != nil || tok != json.Delim('{') {
			return r, fmt.Errorf("not a JSON object in %.200s", data)
		}
		var cols []string
		var row []any
		for dec.More() {
			k, err := dec.Token()
			if err != nil {
				return r, err
			}
			var v any
			if err := dec.Decode(&v); err != nil {
				return r, err
			}
			cols = append(cols, k.(string))
			row = append(row, v)
		}
		if _, err := dec.Token(); err != nil {
			return r, err
		}
		if r.cols == nil {
			r.cols = cols
		}
		r.rows = append(r.rows, row)
	}
	return r, nil
}

// viaBinary runs a statement with `trendsql query --format json`.
func viaBinary(t *testing.T, f *fixtureT, sql string) result {
	t.Helper()
	cmd := exec.Command(f.bin, "query", "--db", f.db, "--format", "json", sql)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		return result{err: strings.TrimSpace(errb.String())}
	}
	r, err := decodeObjects(out.Bytes())
	if err != nil {
		t.Fatalf("trendsql query output: %v", err)
	}
	return r
}

// viaShell runs a statement in the sqlite3 shell after `.load`.
func viaShell(t *testing.T, lib, db, sql string) result {
	t.Helper()
	args := []string{"-bail"}
	if db != ":memory:" {
		args = append(args, "-readonly")
	}
	cmd := exec.Command("sqlite3", append(args, db)...)
	cmd.Stdin = strings.NewReader(".load " + strings.TrimSuffix(lib, ".so") + "\n.mode json\n" + strings.TrimRight(strings.TrimSpace(sql), ";") + ";\n")
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil || errb.Len() > 0 {
		return result{err: strings.TrimSpace(errb.String())}
	}
	r, err := decodeObjects(out.Bytes())
	if err != nil {
		t.Fatalf("sqlite3 shell output: %v", err)
	}
	return r
}

// viaPython runs statements through Python's sqlite3 module (testdata/host.py).
func viaPython(t *testing.T, lib, db string, sqls []string) []result {
	t.Helper()
	in, _ := json.Marshal(sqls)
	cmd := exec.Command(python, "testdata/host.py", lib, db)
	cmd.Stdin = bytes.NewReader(in)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		t.Fatalf("python3 testdata/host.py: %v: %s", err, errb.String())
	}
	var raw []struct {
		Columns []string          `json:"columns"`
		Rows    []json.RawMessage `json:"rows"`
		Error   *string           `json:"error"`
	}
	dec := json.NewDecoder(&out)
	dec.UseNumber()
	if err := dec.Decode(&raw); err != nil {
		t.Fatalf("python output: %v", err)
	}
	res := make([]result, len(raw))
	for i, r := range raw {
		if r.Error != nil {
			res[i] = result{err: *r.Error}
			continue
		}
		res[i].cols = r.Columns
		for _, row := range r.Rows {
			d := json.NewDecoder(bytes.NewReader(row))
			d.UseNumber()
			var vals []any
			if err := d.Decode(&vals); err != nil {
				t.Fatal(err)
			}
			res[i].rows = append(res[i].rows, vals)
		}
	}
	return res
}

// sameValue compares two values: NULL, text and whole numbers exactly,
// other numbers to 1e-12 relative, JSON text structurally.
func sameValue(a, b any) bool {
	switch x := a.(type) {
	case nil:
		return b == nil
	case json.Number:
		y, ok := b.(json.Number)
		if !ok {
			return false
		}
		if x == y {
			return true
		}
		fx, err1 := x.Float64()
		fy, err2 := y.Float64()
		if err1 != nil || err2 != nil {
			return false
		}
		if fx == math.Trunc(fx) && fy == math.Trunc(fy) && math.Abs(fx) < 1<<53 {
			return fx == fy
		}
		return math.Abs(fx-fy) <= 1e-12*math.Max(math.Abs(fx), math.Abs(fy))
	case string:
		y, ok := b.(string)
		if !ok {
			return false
		}
		if x == y {
			return true
		}
		ja, oka := parseJSON(x)
		jb, okb := parseJSON(y)
		return oka && okb && sameValue(ja, jb)
	case map[string]any:
		y, ok := b.(map[string]any)
		if !ok || len(x) != len(y) {
			return false
		}
		for k, v := range x {
			w, ok := y[k]
			if !ok || !sameValue(v, w) {
				return false
			}
		}
		return true
	case []any:
		y, ok := b.([]any)
		if !ok || len(x) != len(y) {
			return false
		}
		for i := range x {
			if !sameValue(x[i], y[i]) {
				return false
			}
		}
		return true
	case bool:
		y, ok := b.(bool)
		return ok && x == y
	}
	return false
}

// parseJSON parses text that holds a JSON object or array.
func parseJSON(s string) (any, bool) {
	s = strings.TrimSpace(s)
	if !strings.HasPrefix(s, "{") && !strings.HasPrefix(s, "[") {
		return nil, false
	}
	d := json.NewDecoder(strings.NewReader(s))
	d.UseNumber()
	var v any
	if err := d.Decode(&v); err != nil {
		return nil, false
	}
	return v, true
}

// compare reports how got differs from want (empty when they agree).
func compare(want, got result) string {
	if want.err != "" || got.err != "" {
		switch {
		case want.err == "":
			return "host failed: " + got.err
		case got.err == "":
			return "host succeeded, binary failed: " + want.err
		}
		return ""
	}
	if len(want.rows) != len(got.rows) {
		return fmt.Sprintf("%d rows, binary %d", len(got.rows), len(want.rows))
	}
	if len(want.rows) > 0 && strings.Join(want.cols, "|") != strings.Join(got.cols, "|") {
		return fmt.Sprintf("columns %q, binary %q", got.cols, want.cols)
	}
	for i := range want.rows {
		if len(want.rows[i]) != len(got.rows[i]) {
			return fmt.Sprintf("row %d has %d values, binary %d", i+1, len(got.rows[i]), len(want.rows[i]))
		}
		for j := range want.rows[i] {
			if !sameValue(want.rows[i][j], got.rows[i][j]) {
				return fmt.Sprintf("row %d column %s: %v, binary %v", i+1, want.cols[j], got.rows[i][j], want.rows[i][j])
			}
		}
	}
	return ""
}

// readmeSQL returns the README's checked examples: every ```sql block that
// is followed by a ```text block.
func readmeSQL(t *testing.T) []string {
	raw, err := os.ReadFile(filepath.Join("..", "..", "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(raw), "\n")
	var out []string
	for i := 0; i < len(lines); i++ {
		if strings.TrimSpace(lines[i]) != "```sql" {
			continue
		}
		j := i + 1
		for j < len(lines) && strings.TrimSpace(lines[j]) != "```" {
			j++
		}
		k := j + 1
		for k < len(lines) && strings.TrimSpace(lines[k]) == "" {
			k++
		}
		if k < len(lines) && strings.TrimSpace(lines[k]) == "```text" {
			out = append(out, strings.Join(lines[i+1:j], "\n"))
		}
		i = j
	}
	if len(out) < 10 {
		t.Fatalf("found only %d checked examples in README.md", len(out))
	}
	return out
}

func TestReadmeExamplesInShell(t *testing.T) {
	f := setup(t)
	_, err := exec.LookPath("sqlite3")
	need(t, "the sqlite3 shell (Debian: apt-get install sqlite3)", err)
	for i, sql := range readmeSQL(t) {
		want := viaBinary(t, f, sql)
		if want.err != "" {
			t.Fatalf("README example %d fails in the binary: %s", i+1, want.err)
		}
		got := viaShell(t, f.lib, f.db, sql)
		if d := compare(want, got); d != "" {
			t.Errorf("README example %d through the sqlite3 shell: %s\n%s", i+1, d, sql)
		}
	}
}

func TestReadmeExamplesInPython(t *testing.T) {
	f := setup(t)
	need(t, "Debian's python3 with sqlite3 extension loading", pythonCanLoad())
	sqls := readmeSQL(t)
	got := viaPython(t, f.lib, f.db, sqls)
	for i, sql := range sqls {
		want := viaBinary(t, f, sql)
		if want.err != "" {
			t.Fatalf("README example %d fails in the binary: %s", i+1, want.err)
		}
		if d := compare(want, got[i]); d != "" {
			t.Errorf("README example %d through Python's sqlite3: %s\n%s", i+1, d, sql)
		}
	}
}

func pythonCanLoad() error {
	out, err := exec.Command(python, "-c", "import sqlite3; sqlite3.connect(':memory:').enable_load_extension(True); print('ok')").CombinedOutput()
	if err != nil {
		return fmt.Errorf("%v: %s", err, out)
	}
	return nil
}

// misuse holds statements that must behave in every host exactly as in the
// binary: wrong argument counts and types, NULL-only and empty groups,
// window frames that are empty, options that change within a group, ties.
var misuse = []string{
	// argument counts
	`SELECT trend_slope(1)`,
	`SELECT correlogram(1, 2)`,
	`SELECT regr_slope(1)`,
	`SELECT trend_value('{}')`,
	// argument types and values
	`SELECT trend_slope(t, y) FROM (SELECT 1 AS t, 'abc' AS y)`,
	`SELECT trend_slope(t, y) FROM (SELECT x'00' AS t, 1 AS y)`,
	`SELECT trend_slope(NULL, 1)`,
	`SELECT trend_slope(t, y) FROM (SELECT 1 AS t, 9e999 AS y)`,
	`SELECT regr_slope(y, x) FROM (SELECT 'x' AS y, 1 AS x)`,
	`SELECT regr_slope(y, x) FROM (SELECT NULL AS y, 'x' AS x)`,
	`WITH v(t, y) AS (VALUES (1, 2), (2, 3), (3, 5)) SELECT trend_fit(t, y, 5) FROM v`,
	`WITH v(t, y) AS (VALUES (1, 2), (2, 3), (3, 5)) SELECT trend_fit(t, y, 'degree=9') FROM v`,
	`WITH v(t, y) AS (VALUES (1, 2), (2, 3), (3, 5)) SELECT sample_acf(t, y, 'a') FROM v`,
	`WITH v(t, y, s) AS (VALUES (1, 2, 'degree=1'), (2, 3, 'degree=1'), (3, 5, 'degree=2')) SELECT trend_fit(t, y, s) FROM v`,
	`WITH v(t, y, k) AS (VALUES (1, 1.0, 1), (2, 2.0, 1.0), (3, 1.5, '1'), (4, 3.0, 1)) SELECT sample_acf(t, y, k) FROM v`,
	`WITH v(t, y) AS (VALUES (1, 2), (2, 3), (1, 5)) SELECT trend_slope(t, y) FROM v`,
	`WITH v(t, y) AS (VALUES (1, 2), (2, 3), (3, 5)) SELECT trend_fit(t, y, NULL) FROM v`,
	`SELECT trend_value('not json', 1)`,
	`SELECT trend_value('{"t_center": 0, "degree": 1, "coef": [1]}', 1)`,
	`SELECT trend_residual(NULL, 1, 2), trend_value('{}', NULL)`,
	// NULL-only and empty groups
	`WITH v(g, t, y) AS (VALUES (1, 1, NULL), (1, 2, NULL), (2, 1, 5.0), (2, 2, NULL))
	 SELECT g, trend_slope(t, y), trend_fit(t, y), mann_kendall(t, y), sen_slope(t, y), sen_slope_per_year(t, y),
	        correlogram(t, y, 2), sample_acvf(t, y, 0), sample_acf(t, y, 1), ljung_box(t, y, 1), box_pierce_p(t, y, 1),
	        pettitt(t, y), seasonal_kendall(t, y, 'calendar-month'), cross_corr(t, y, y, 0), cross_correlogram(t, y, y, 1),
	        regr_count(y, t), regr_slope(y, t), regr_avgy(y, t), covar_samp(y, t), corr(y, t),
	        trendsql_qualifier_counts(y), hex(trendsql_pack_series(t, y))
	 FROM v GROUP BY g`,
	`SELECT trend_slope(t, y), trend_fit(t, y, 'degree=2'), regr_count(y, t), regr_avgx(y, t), mann_kendall(t, y),
	        correlogram(t, y, 3), trendsql_qualifier_counts(y), trendsql_pack_series(t, y)
	 FROM (SELECT 1 AS t, 2 AS y) WHERE 0`,
	// window frames, including empty frames and a NULL-only partition
	`WITH v(g, t, y) AS (VALUES (1, 1, 1.0), (1, 2, 2.5), (1, 3, 2.0), (1, 4, 4.0), (1, 5, 3.0), (2, 1, NULL), (2, 2, NULL))
	 SELECT g, t, trend_slope(t, y) OVER w, regr_count(y, t) OVER w, regr_slope(y, t) OVER w,
	        mann_kendall(t, y) OVER w, trend_fit(t, y) OVER w, trendsql_qualifier_counts(y) OVER w
	 FROM v WINDOW w AS (PARTITION BY g ORDER BY t ROWS BETWEEN 1 FOLLOWING AND 3 FOLLOWING) ORDER BY g, t`,
	`WITH v(t, y) AS (VALUES ('2020-01-01', 1.0), ('2020-01-02', NULL), ('2020-01-03', 3.5), ('2020-01-04', 2),
	                         ('2020-01-05', '4.5'), ('2020-01-06', 7), (1578441600, 6.5), ('2020-01-09T00:00:00Z', 8))
	 SELECT t, trend_slope(t, y) OVER w, sen_slope(t, y) OVER w, regr_slope(y, t) OVER w, cross_corr(t, y, y, 1) OVER w,
	        sample_acvf(t, y, 1, 'step=1d') OVER w
	 FROM v WINDOW w AS (ORDER BY rowid ROWS BETWEEN 2 PRECEDING AND CURRENT ROW)`,
	// rows with a NULL value mark slots of the inferred time grid (step 1 s
	// here, not 2 s), also in a sliding frame
	`WITH v(t, y) AS (VALUES (1, 1.0), (2, NULL), (3, 2.0), (4, NULL), (5, 3.0), (6, 2.5), (7, NULL), (8, 4.0))
	 SELECT correlogram(t, y, 2), sample_acf(t, y, 2), ljung_box(t, y, 2), cross_correlogram(t, y, y, 1) FROM v`,
	`WITH v(t, y) AS (VALUES (1, 1.0), (2, NULL), (3, 2.0), (4, NULL), (5, 3.0), (6, 2.5), (7, NULL), (8, 4.0))
	 SELECT t, correlogram(t, y, 1) OVER (ORDER BY t ROWS BETWEEN 3 PRECEDING AND CURRENT ROW) FROM v`,
	`WITH v(t, y) AS (VALUES (1, 1.0), (2, 2.0), (3, 'x'), (4, 4.0))
	 SELECT trend_slope(t, y) OVER (ORDER BY t ROWS BETWEEN 1 PRECEDING AND 1 PRECEDING) FROM v`,
	// censored values: refused by the functions without censoring support,
	// taken by the censored ones with their marks (NULL marks, a bad mark,
	// a window)
	`WITH v(t, y) AS (VALUES (1, 2.0), (2, '<5'), (3, 4.0), (4, 5.0)) SELECT trend_slope(t, y), mann_kendall(t, y) FROM v`,
	`WITH v(t, y) AS (VALUES (1, 2.0), (2, '<5'), (3, 4.0), (4, 5.0), (5, 4.5))
	 SELECT t, sen_slope(t, y) OVER (ORDER BY t ROWS BETWEEN 1 PRECEDING AND CURRENT ROW) FROM v`,
	`WITH v(t, y, m) AS (VALUES (1, 1.0, '<'), (2, 2.0, NULL), (3, 1.0, '<'), (4, 3.0, ''), (5, 4.0, 0))
	 SELECT censored_mann_kendall(t, y, m), censored_sen_slope(t, y, m) FROM v`,
	`WITH v(t, y, m) AS (VALUES (1, 1.0, '<'), (2, 2.0, '?')) SELECT censored_mann_kendall(t, y, m) FROM v`,
	`WITH v(t, y, m) AS (VALUES (1, 1.0, '<'), (2, 2.0, NULL), (3, NULL, '<'), (4, 3.0, '>'), (5, 4.0, -1))
	 SELECT t, censored_mann_kendall(t, y, m) OVER (ORDER BY t ROWS BETWEEN 2 PRECEDING AND CURRENT ROW) FROM v`,
	// long groups: runs of numbers across buffer blocks, rows given as
	// values (text time, numeric text, NULL) in the middle, sliding frames
	`WITH RECURSIVE s(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM s WHERE i < 20000)
	 SELECT trend_fit(CASE WHEN i % 5000 = 0 THEN datetime(i * 3600, 'unixepoch') ELSE i * 3600 END,
	                  CASE WHEN i % 777 = 0 THEN NULL WHEN i % 3001 = 0 THEN CAST((i * 7919) % 1000 AS TEXT)
	                       ELSE (i * 7919) % 1000 / 10.0 END, 'degree=2'),
	        regr_slope((i * 7919) % 1000, i), cross_correlogram(i * 3600, i % 17, (i * 7919) % 1000, 3),
	        correlogram(i * 3600, (i * 7919) % 1000, 4, 'detrend=linear')
	 FROM s`,
	`WITH RECURSIVE s(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM s WHERE i < 140000)
	 SELECT i % 2, trend_slope(CASE WHEN i = 70001 THEN datetime(i * 3600, 'unixepoch') ELSE i * 3600 END,
	                           CASE WHEN i % 50001 = 0 THEN NULL ELSE (i * 7919) % 1000 + i / 1000.0 END),
	        regr_slope(CASE WHEN i = 99999 THEN CAST(i AS TEXT) ELSE (i * 7919) % 1000 + i / 1000.0 END, i)
	 FROM s GROUP BY i % 2`,
	`WITH RECURSIVE s(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM s WHERE i < 8000),
	 w AS (SELECT i, trend_slope(CASE WHEN i % 2500 = 0 THEN datetime(i * 86400, 'unixepoch') ELSE i * 86400 END,
	                             CASE WHEN i % 333 = 0 THEN NULL ELSE (i * 7919) % 1000 + i / 10.0 END)
	                    OVER (ORDER BY i ROWS BETWEEN 999 PRECEDING AND CURRENT ROW) AS slope,
	                 regr_r2((i * 7919) % 1000, i) OVER (ORDER BY i ROWS BETWEEN 4000 PRECEDING AND 10 PRECEDING) AS r2
	       FROM s)
	 SELECT i, slope, r2 FROM w WHERE i % 250 = 0`,
	// table-valued function
	`SELECT * FROM correlogram_rows`,
	`SELECT * FROM correlogram_rows('x')`,
	`SELECT * FROM correlogram_rows(42)`,
	`SELECT count(*) FROM correlogram_rows(NULL)`,
	`SELECT count(*) FROM correlogram_rows('{"lags": []}')`,
	`SELECT * FROM correlogram_rows('{"band": 0.5, "lags": [{"lag": 1, "acf": 0.25, "acvf": null}]}')`,
	`SELECT lag, acf, correlogram_json IS NOT NULL FROM correlogram_rows WHERE correlogram_json = '{"lags": [{"lag": 2}]}'`,
}

func TestMisuseAsInBinary(t *testing.T) {
	f := setup(t)
	need(t, "Debian's python3 with sqlite3 extension loading", pythonCanLoad())
	_, shellErr := exec.LookPath("sqlite3")
	need(t, "the sqlite3 shell (Debian: apt-get install sqlite3)", shellErr)
	py := viaPython(t, f.lib, ":memory:", misuse)
	for i, sql := range misuse {
		want := viaBinary(t, f, sql)
		sh := viaShell(t, f.lib, ":memory:", sql)
		for _, h := range []struct {
			name string
			got  result
		}{{"Python's sqlite3", py[i]}, {"the sqlite3 shell", sh}} {
			if d := compare(want, h.got); d != "" {
				t.Errorf("through %s: %s\n%s", h.name, d, sql)
			}
		}
		if want.err == "" {
			continue
		}
		// The same message: Python reports SQLite's error text as is; the
		// binary and the shell wrap it.
		if py[i].err == "" || !strings.Contains(want.err, py[i].err) {
			t.Errorf("error through Python's sqlite3 is %q; the binary says %q\n%s", py[i].err, want.err, sql)
		}
		if py[i].err != "" && !strings.Contains(sh.err, py[i].err) {
			t.Errorf("error through the sqlite3 shell is %q, want it to contain %q\n%s", sh.err, py[i].err, sql)
		}
	}
}

// The documented worked example of sqlfuncs/trend.go (exact arithmetic:
// readings one year of 365.25 d apart, slope 1.25 per year, r2 = 75/76).
const yearExample = `WITH v(t, y) AS (VALUES (0, 1.0), (31557600, 2.0), (63115200, 3.5)) SELECT trend_slope(t, y), trend_fit(t, y) ->> 'r2' FROM v`

// reloadScript loads the library into several connections of one Python
// process, twice into one of them, closes them all (SQLite then closes the
// library) and loads it again, running the example after every step.
const reloadScript = `
import json, sqlite3, sys
lib, q = sys.argv[1], sys.argv[2]
def load(c):
    c.enable_load_extension(True)
    c.load_extension(lib)
    c.enable_load_extension(False)
out = []
c1 = sqlite3.connect(':memory:'); load(c1); out.append(c1.execute(q).fetchall())
load(c1); out.append(c1.execute(q).fetchall())
c2 = sqlite3.connect(':memory:'); load(c2); out.append(c2.execute(q).fetchall())
c1.close(); c2.close()
c3 = sqlite3.connect(':memory:'); load(c3); out.append(c3.execute(q).fetchall())
c4 = sqlite3.connect(':memory:')
try:
    c4.execute(q)
    out.append("functions present without loading")
except sqlite3.OperationalError as e:
    out.append(str(e))
print(json.dumps(out))
`

func TestLoadTwiceAndReload(t *testing.T) {
	f := setup(t)
	need(t, "Debian's python3 with sqlite3 extension loading", pythonCanLoad())
	out, err := run(".", nil, python, "-c", reloadScript, f.lib, yearExample)
	if err != nil {
		t.Fatal(err)
	}
	var got []json.RawMessage
	if err := json.Unmarshal([]byte(out), &got); err != nil || len(got) != 5 {
		t.Fatalf("reload script output %q: %v", out, err)
	}
	for i, r := range got[:4] {
		var rows [][]float64
		if err := json.Unmarshal(r, &rows); err != nil || len(rows) != 1 || len(rows[0]) != 2 {
			t.Fatalf("step %d: %s", i+1, r)
		}
		if rows[0][0] != 1.25 || math.Abs(rows[0][1]-75.0/76) > 1e-15 {
			t.Errorf("step %d: slope, r2 = %v, want 1.25, 75/76", i+1, rows[0])
		}
	}
	if !strings.Contains(string(got[4]), "no such function: trend_slope") {
		t.Errorf("a connection that did not load the extension: %s", got[4])
	}
	if _, err := exec.LookPath("sqlite3"); err == nil {
		lib := strings.TrimSuffix(f.lib, ".so")
		cmd := exec.Command("sqlite3", ":memory:")
		cmd.Stdin = strings.NewReader(".load " + lib + "\n.load " + lib + "\n" + yearExample + ";\n")
		b, err := cmd.CombinedOutput()
		if err != nil || strings.TrimSpace(string(b)) != "1.25|0.986842105263158" {
			t.Errorf("sqlite3 shell after loading twice: %q, %v", b, err)
		}
	}
}

// The comparison itself must notice a difference.
func TestCompareNoticesDifferences(t *testing.T) {
	num := func(s string) any { return json.Number(s) }
	base := result{cols: []string{"a", "b"}, rows: [][]any{{num("1.5"), `{"n": 3, "x": [0.25, null]}`}}}
	same := result{cols: []string{"a", "b"}, rows: [][]any{{num("1.5000000000000004"), `{"x":[0.25,null],"n":3}`}}}
	if d := compare(base, same); d != "" {
		t.Errorf("equal results reported as different: %s", d)
	}
	for _, other := range []result{
		{cols: []string{"a", "b"}, rows: [][]any{{num("1.5000001"), `{"n": 3, "x": [0.25, null]}`}}},
		{cols: []string{"a", "b"}, rows: [][]any{{num("1.5"), `{"n": 4, "x": [0.25, null]}`}}},
		{cols: []string{"a", "b"}, rows: [][]any{{num("1.5"), `{"n": 3, "x": [0.25, 0]}`}}},
		{cols: []string{"a", "c"}, rows: [][]any{{num("1.5"), `{"n": 3, "x": [0.25, null]}`}}},
		{cols: []string{"a", "b"}, rows: [][]any{{"1.5", `{"n": 3, "x": [0.25, null]}`}}},
		{cols: []string{"a", "b"}, rows: [][]any{{nil, `{"n": 3, "x": [0.25, null]}`}}},
		{cols: []string{"a", "b"}},
		{err: "boom"},
	} {
		if d := compare(base, other); d == "" {
			t.Errorf("%v reported equal to %v", other, base)
		}
	}
	if d := compare(result{cols: []string{"n"}, rows: [][]any{{num("5349")}}}, result{cols: []string{"n"}, rows: [][]any{{num("5350")}}}); d == "" {
		t.Error("counts 5349 and 5350 reported equal")
	}
}

// An SQLite older than 3.25.0 (no window functions) is refused at load
// time with a message naming both versions; the host's API is stood in for
// by testdata/oldsqlite.c.
func TestRefusesOldSQLite(t *testing.T) {
	f := setup(t)
	cc := os.Getenv("CC")
	if cc == "" {
		cc = "gcc"
	}
	prog := filepath.Join(f.dir, "oldsqlite")
	if _, err := run(".", nil, cc, "-o", prog, "testdata/oldsqlite.c", "-ldl"); err != nil {
		t.Fatal(err)
	}
	out, err := run(".", nil, prog, f.lib)
	if err != nil {
		t.Fatal(err)
	}
	want := "1 trendsql: this SQLite is 3.24.0; the extension needs 3.25.0 or later (window functions)"
	if strings.TrimSpace(out) != want {
		t.Errorf("loading into SQLite 3.24.0: %q, want %q", strings.TrimSpace(out), want)
	}
}
