package main

// In-process tests of what the commands say: a store is created only by
// init and demo, selections name unknown stations and variables, the demo
// store is recognised, and read-only refusals say how to write.

import (
	"bytes"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/spf13/cobra"

	"trendsql/store/storetest"
)

// runIn runs the CLI in this process with stdin and returns stdout,
// stderr and the exit code.
func runIn(stdin string, args ...string) (string, string, int) {
	var out, errw bytes.Buffer
	code := Main(args, strings.NewReader(stdin), &out, &errw)
	return out.String(), errw.String(), code
}

func TestOnlyInitAndDemoCreateAStore(t *testing.T) {
	dir := t.TempDir()
	csvFile := filepath.Join(dir, "r.csv")
	if err := os.WriteFile(csvFile, []byte("station,time,value\nA,2021-01-01,1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	missing := filepath.Join(dir, "typo.db")
	for _, args := range [][]string{
		{"summarize"},
		{"import", "readings", "--variable", "x", csvFile},
		{"import", "stations", csvFile},
		{"query", "--write", "SELECT 1"},
		{"query", "SELECT 1"},
		{"shell", "--write"},
		{"shell"},
		{"report", "--out", filepath.Join(dir, "report")},
		{"check"},
	} {
		_, errs, code := runIn("", append([]string{"--db", missing}, args...)...)
		if code != ExitFailed || !strings.Contains(errs, missing) || !strings.Contains(errs, "trendsql init") {
			t.Errorf("%v on a missing store: exit %d, stderr %q; want exit 1 naming the path and init", args, code, errs)
		}
		if _, err := os.Stat(missing); err == nil {
			t.Fatalf("%v created %s", args, missing)
		}
	}
	if _, errs, code := runIn("", "--db", missing, "init"); code != 0 || !strings.Contains(errs, "ready") {
		t.Fatalf("init: exit %d, %q", code, errs)
	}
	if _, err := os.Stat(missing); err != nil {
		t.Errorf("init did not create the store: %v", err)
	}
}

func TestSummarizeUnknownSelectionIsUsageError(t *testing.T) {
	db := storetest.Copy(t, demoStore(t))
	_, errs, code := runIn("", "--db", db, "summarize", "--station", "VOR-W99")
	if code != ExitUsage || !strings.Contains(errs, "--station VOR-W99: no such station (closest: VOR-W09") {
		t.Errorf("unknown station: exit %d, stderr %q", code, errs)
	}
	_, errs, code = runIn("", "--db", db, "summarize", "--variable", "groundwater_levle", "--station", "VOR-W01")
	if code != ExitUsage || !strings.Contains(errs, "--variable groundwater_levle: no such variable (closest: groundwater_level)") {
		t.Errorf("misspelt variable: exit %d, stderr %q", code, errs)
	}
	if strings.Count(errs, "\n") != 1 {
		t.Errorf("want one line, got %q", errs)
	}
	// Known names that hold no series together are a typo too: the message
	// says what the station measures (the demo's gauge VOR-G01 has stage only).
	_, errs, code = runIn("", "--db", db, "summarize", "--variable", "nitrate_n", "--station", "VOR-G01")
	if code != ExitUsage || !strings.Contains(errs, "--station VOR-G01 --variable nitrate_n: no such series (VOR-G01 measures stage)") {
		t.Errorf("known names, no series: exit %d, stderr %q", code, errs)
	}
	// A --where that matches none of the series the other flags select is
	// a mistake in the condition too, not "nothing to do".
	_, errs, code = runIn("", "--db", db, "summarize", "--station", "VOR-G01", "--where", "st.id = 'VOR-G02'")
	if code != ExitUsage || !strings.Contains(errs, "summarize: --where matched no series (none of the 1 series --station/--variable select); no run is recorded") ||
		strings.Count(errs, "\n") != 1 {
		t.Errorf("--where matching nothing: exit %d, stderr %q", code, errs)
	}
	// The demo store has 49 series (its tour says so).
	_, errs, code = runIn("", "--db", db, "summarize", "--where", "st.metadata->>'aquifer' = 'no such aquifer'")
	if code != ExitUsage || !strings.Contains(errs, "summarize: --where matched no series (none of the store's 49 series)") {
		t.Errorf("--where matching nothing: exit %d, stderr %q", code, errs)
	}
	if n := queryInt(t, storetest.View(t, db).DB, `SELECT count(*) FROM summary_runs`); n != 0 {
		t.Errorf("refused selections recorded %d runs", n)
	}
}

// A store with no series yet has nothing to summarize, with --where or
// without: exit 3, as before the first import. Matched but unchanged stays
// exit 3 with a --where as well.
func TestSummarizeNothingToDoWithWhere(t *testing.T) {
	empty := filepath.Join(t.TempDir(), "empty.db")
	initStore(t, empty)
	for _, args := range [][]string{{"summarize"}, {"summarize", "--where", "st.id = 'X'"}} {
		_, errs, code := runIn("", append([]string{"--db", empty}, args...)...)
		if code != ExitNothing || !strings.Contains(errs, "summarize: nothing to do: no series match the selection") {
			t.Errorf("%v on a store without series: exit %d, stderr %q", args, code, errs)
		}
	}
	db := storetest.Copy(t, demoStore(t))
	args := []string{"--db", db, "summarize", "--changed-only", "--where", "st.id = 'VOR-G01'"}
	if _, errs, code := runIn("", args...); code != 0 {
		t.Fatalf("first run: exit %d, stderr %q", code, errs)
	}
	if _, errs, code := runIn("", args...); code != ExitNothing || !strings.Contains(errs, "nothing to do: 1 series selected, all 1 unchanged") {
		t.Errorf("second run with nothing new: exit %d, stderr %q", code, errs)
	}
}

func TestReportUnknownSelectionIsUsageError(t *testing.T) {
	db := storetest.Copy(t, demoStore(t))
	dir := filepath.Join(t.TempDir(), "rep")
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--station", "VOR-W99"}, "report: --station VOR-W99: no such station (closest: VOR-W09"},
		{[]string{"--variable", "stag"}, "report: --variable stag: no such variable (closest: stage)"},
		// The demo store has 49 series with ids 1 to 49 (its tour says 49 series).
		{[]string{"--series", "9999"}, "report: --series 9999: no such series (the store's 49 series have ids 1 to 49"},
		{[]string{"--station", "VOR-G01", "--variable", "nitrate_n"}, "no such series (VOR-G01 measures stage)"},
	} {
		_, errs, code := runIn("", append([]string{"--db", db, "report", "--out", dir}, c.args...)...)
		if code != ExitUsage || !strings.Contains(errs, c.want) {
			t.Errorf("report %v: exit %d, stderr %q; want exit 2 and %q", c.args, code, errs, c.want)
		}
	}
	if _, err := os.Stat(dir); err == nil {
		t.Errorf("a refused report created %s", dir)
	}
}

func TestDemoStoreIsMarkedAndRecognised(t *testing.T) {
	t.Setenv("TRENDSQL_DB", filepath.Join(t.TempDir(), "mine.db"))
	if p := (&env{}).demoPath(); p != DemoPath {
		t.Errorf("demo without --db builds %q, want %q whatever TRENDSQL_DB says", p, DemoPath)
	}
	db := storetest.Copy(t, demoStore(t))
	_, errs, code := runIn("", "--db", db, "init")
	if code != 0 || !strings.Contains(errs, "warning: "+db+" is the demo store") {
		t.Errorf("init on the demo store: exit %d, stderr %q; want a warning", code, errs)
	}
	// The last line does not contradict the warning: it names the demo
	// store and the command that creates a store for one's own data.
	lines := strings.Split(strings.TrimSuffix(errs, "\n"), "\n")
	if last := lines[len(lines)-1]; strings.Contains(last, "ready") || !strings.Contains(last, db+" is the demo store") ||
		!strings.Contains(last, "trendsql init --db FILE") {
		t.Errorf("init on the demo store: last line %q; want it to name the demo store and `trendsql init --db FILE`, not \"ready\"", last)
	}
	file := filepath.Join(t.TempDir(), "r.csv")
	if err := os.WriteFile(file, []byte("station,time,value\nMY-1,2021-01-01,1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, errs, code = runIn("", "--db", db, "import", "readings", "--variable", "stage", "--unit", "m", file)
	if code != 0 || !strings.Contains(errs, "is the demo store") {
		t.Errorf("import into the demo store: exit %d, stderr %q; want a warning", code, errs)
	}
	// A store of one's own draws no warning.
	own := filepath.Join(t.TempDir(), "own.db")
	if _, errs, _ := runIn("", "--db", own, "init"); strings.Contains(errs, "warning") {
		t.Errorf("init of a new store warns: %q", errs)
	}
	// The demo refuses a user's store before announcing a build.
	if _, errs, code := runIn("", "--db", own, "query", "--write", "INSERT INTO stations(id) VALUES ('MINE')"); code != 0 {
		t.Fatal(errs)
	}
	_, errs, code = runIn("", "--db", own, "demo", "--no-tour")
	if code != ExitFailed || strings.Contains(errs, "building") || !strings.Contains(errs, "refusing") {
		t.Errorf("demo over a user store: exit %d, stderr %q; want a refusal and no announcement", code, errs)
	}
}

func TestReadOnlyRefusalSaysWrite(t *testing.T) {
	db := filepath.Join(t.TempDir(), "ro.db")
	initStore(t, db)
	_, errs, code := runIn("", "--db", db, "query", "INSERT INTO stations(id) VALUES ('S1')")
	if code != ExitFailed || !strings.Contains(errs, "add --write") {
		t.Errorf("write without --write: exit %d, stderr %q", code, errs)
	}
	_, errs, _ = runIn("INSERT INTO stations(id) VALUES ('S1');\n", "--db", db, "shell")
	if !strings.Contains(errs, "add --write") {
		t.Errorf("shell write without --write: stderr %q", errs)
	}
}

func TestVersionFlag(t *testing.T) {
	byFlag, _, code := runIn("", "--version")
	byCmd, _, code2 := runIn("", "version")
	if code != 0 || code2 != 0 || byFlag != byCmd || !strings.HasPrefix(byFlag, "trendsql ") {
		t.Errorf("--version %q (exit %d), version %q (exit %d)", byFlag, code, byCmd, code2)
	}
	// The help lists --version as a flag without a value (pflag reads a
	// back-quoted word in the usage text as the value's name).
	help, _, _ := runIn("", "--help")
	for _, line := range strings.Split(help, "\n") {
		if f := strings.Fields(line); len(f) > 1 && f[0] == "--version" && f[1] != "print" {
			t.Errorf("help shows --version taking a value: %q", line)
		}
	}
}

func TestSQLErrorsReadAsWritten(t *testing.T) {
	db := filepath.Join(t.TempDir(), "e.db")
	initStore(t, db)
	if _, errs, code := runIn("", "--db", db, "query", "--write", "INSERT INTO stations(id) VALUES ('S1')"); code != 0 {
		t.Fatal(errs)
	}
	// SQLite's result code in parentheses and the generic text of the code
	// ("SQL logic error", "constraint failed") are the driver's framing,
	// not part of the message; the message itself keeps its own parentheses.
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"query", "SELECT trend_slope(1)"}, "trendsql: SQL error: trend_slope: wrong number of arguments (1); usage: trend_slope(t, y)\n"},
		{[]string{"query", "SELECT * FROM no_such_table"}, "trendsql: SQL error: no such table: no_such_table\n"},
		{[]string{"query", "--write", "INSERT INTO stations(id) VALUES ('S1')"}, "trendsql: SQL error: UNIQUE constraint failed: stations.id\n"},
		{[]string{"query", "INSERT INTO stations(id) VALUES ('S2')"}, "trendsql: SQL error: attempt to write a readonly database (the store is open read-only: add --write to change it)\n"},
		{[]string{"query", "SELEC 1"}, "trendsql: SQL error at line 1, column 1: near \"SELEC\": syntax error\n"},
		{[]string{"summarize", "--where", "st.no_such = 1"}, "trendsql: summarize: select series (check --where): no such column: st.no_such\n"},
		{[]string{"report", "--out", filepath.Join(t.TempDir(), "r"), "--where", "st.no_such = 1"}, "trendsql: report: selecting series: no such column: st.no_such\n"},
	} {
		if _, errs, code := runIn("", append([]string{"--db", db}, c.args...)...); code != ExitFailed || errs != c.want {
			t.Errorf("%v: exit %d, stderr %q; want %q", c.args, code, errs, c.want)
		}
	}
	_, errs, _ := runIn("SELECT trend_slope(1);\n", "--db", db, "shell")
	if !strings.Contains(errs, "SQL error: trend_slope: wrong number of arguments (1); usage: trend_slope(t, y)\n") {
		t.Errorf("shell: %q", errs)
	}
}

// A command that only groups subcommands (the program itself, import), run
// without one, is a usage error: its usage goes to stderr, not stdout, the
// exit code is 2 and the last line says what to type. Every such command in
// the tree is checked; --help still prints the help as a success.
func TestGroupWithoutSubcommandIsUsageError(t *testing.T) {
	var groups [][]string
	var walk func(c *cobra.Command, path []string)
	walk = func(c *cobra.Command, path []string) {
		if c.HasAvailableSubCommands() {
			groups = append(groups, path)
		}
		for _, sub := range c.Commands() {
			if sub.IsAvailableCommand() {
				walk(sub, append(slices.Clone(path), sub.Name()))
			}
		}
	}
	walk(newRootCmd(&env{}), nil)
	if len(groups) < 2 {
		t.Fatalf("found the groups %v; want at least the program and import", groups)
	}
	for _, args := range groups {
		out, errs, code := runIn("", args...)
		lines := strings.Split(strings.TrimSuffix(errs, "\n"), "\n")
		last := lines[len(lines)-1]
		if code != ExitUsage || out != "" || !strings.HasPrefix(errs, "Usage:\n") || !strings.Contains(errs, "Available Commands:") ||
			!strings.HasPrefix(last, "trendsql: ") || !strings.Contains(last, "no command given") {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want exit 2, the usage on stderr and a last line saying no command was given", args, code, out, errs)
		}
		if help, errs, code := runIn("", append(slices.Clone(args), "--help")...); code != 0 || !strings.Contains(help, "Available Commands:") || errs != "" {
			t.Errorf("%v --help: exit %d, stdout %q, stderr %q", args, code, help, errs)
		}
	}
	_, errs, _ := runIn("", "import")
	if !strings.Contains(errs, "`trendsql import stations FILE.csv` or `trendsql import readings FILE.csv`") {
		t.Errorf("import alone: stderr %q; want the two kinds named", errs)
	}
}
