package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// guardStore creates a store with one station, series and reading through
// the command line and returns its path.
func guardStore(t *testing.T) string {
	t.Helper()
	db := filepath.Join(t.TempDir(), "g.db")
	var out, errw bytes.Buffer
	if code := Main([]string{"init", "--db", db}, strings.NewReader(""), &out, &errw); code != 0 {
		t.Fatalf("init: %s", errw.String())
	}
	sql := `INSERT INTO stations(id, name) VALUES ('S1', 'S1');
INSERT INTO series(station_id, variable) VALUES ('S1', 'level');
INSERT INTO readings(series_id, t, value) SELECT id, 1600000000, 1.5 FROM series;
SELECT count(*) FROM readings`
	if code := Main([]string{"query", "--write", "--db", db, sql}, strings.NewReader(""), &out, &errw); code != 0 {
		t.Fatalf("insert: %s", errw.String())
	}
	return db
}

func readingCount(t *testing.T, db string) string {
	t.Helper()
	var out, errw bytes.Buffer
	if code := Main([]string{"query", "--format", "csv", "--db", db, "SELECT count(*) AS n FROM readings"}, strings.NewReader(""), &out, &errw); code != 0 {
		t.Fatalf("count: %s", errw.String())
	}
	return strings.TrimSpace(out.String())
}

// TestQueryAndShellReadOnlyGuard: without --write neither query nor shell
// can delete readings through ATTACH or copy the store with VACUUM INTO;
// with --write, turning foreign keys off needs --allow-unsafe-pragmas.
func TestQueryAndShellReadOnlyGuard(t *testing.T) {
	db := guardStore(t)
	copyPath := filepath.Join(filepath.Dir(db), "copy.db")
	tricks := []string{
		"PRAGMA query_only=0; ATTACH DATABASE '" + db + "' AS w; DELETE FROM w.readings; SELECT 1",
		"PRAGMA query_only=0; VACUUM INTO '" + copyPath + "'",
	}
	for _, trick := range tricks {
		var out, errw bytes.Buffer
		code := Main([]string{"query", "--db", db, trick}, strings.NewReader(""), &out, &errw)
		if code != ExitFailed || !strings.Contains(errw.String(), "not authorized") || !strings.Contains(errw.String(), "--write") {
			t.Errorf("query %q: exit %d, stderr %q; want exit 1 naming the refusal and --write", trick, code, errw.String())
		}
		out.Reset()
		errw.Reset()
		code = Main([]string{"shell", "--db", db}, strings.NewReader(trick+";\n"), &out, &errw)
		if code != ExitFailed || !strings.Contains(errw.String(), "not authorized") {
			t.Errorf("shell %q: exit %d, stderr %q; want exit 1 naming the refusal", trick, code, errw.String())
		}
	}
	if n := readingCount(t, db); n != "n\n1" {
		t.Errorf("readings after the tricks: %q, want 1", n)
	}
	if _, err := os.Stat(copyPath); err == nil {
		t.Error("VACUUM INTO wrote a copy of the store")
	}

	var out, errw bytes.Buffer
	code := Main([]string{"query", "--write", "--db", db, "PRAGMA foreign_keys=OFF; DELETE FROM series; SELECT 1"}, strings.NewReader(""), &out, &errw)
	if code != ExitFailed || !strings.Contains(errw.String(), "--allow-unsafe-pragmas") {
		t.Errorf("foreign_keys=OFF with --write: exit %d, stderr %q; want a refusal naming --allow-unsafe-pragmas", code, errw.String())
	}
	errw.Reset()
	code = Main([]string{"query", "--write", "--db", db, "PRAGMA writable_schema=1"}, strings.NewReader(""), &out, &errw)
	if code != ExitFailed {
		t.Errorf("writable_schema with --write: exit %d, want 1", code)
	}
	errw.Reset()
	code = Main([]string{"query", "--db", db, "--allow-unsafe-pragmas", "SELECT 1"}, strings.NewReader(""), &out, &errw)
	if code != ExitUsage {
		t.Errorf("--allow-unsafe-pragmas without --write: exit %d, want %d", code, ExitUsage)
	}
	errw.Reset()
	code = Main([]string{"query", "--write", "--allow-unsafe-pragmas", "--db", db, "PRAGMA foreign_keys=OFF; SELECT 1"}, strings.NewReader(""), &out, &errw)
	if code != ExitOK {
		t.Errorf("foreign_keys=OFF with --allow-unsafe-pragmas: exit %d: %s", code, errw.String())
	}
	if n := readingCount(t, db); n != "n\n1" {
		t.Errorf("readings at the end: %q, want 1", n)
	}
}

// TestQueryAndShellCensoredRead: once the store holds a censored reading,
// query and shell refuse trend_fit on readings.value with the store's
// message (the count and the alternatives), not SQLite's bare "not
// authorized"; an explicit censored filter runs.
func TestQueryAndShellCensoredRead(t *testing.T) {
	db := guardStore(t)
	var out, errw bytes.Buffer
	add := `INSERT INTO readings(series_id, t, value, censored) SELECT id, 1600086400, 5, '<' FROM series;
INSERT INTO readings(series_id, t, value) SELECT id, 1600172800, 3.5 FROM series;
INSERT INTO readings(series_id, t, value) SELECT id, 1600259200, 4.5 FROM series`
	if code := Main([]string{"query", "--write", "--db", db, add}, strings.NewReader(""), &out, &errw); code != 0 {
		t.Fatalf("insert: %s", errw.String())
	}
	const refused = "SELECT trend_slope(t, value) FROM readings"
	const filtered = "SELECT trend_slope(t, value) AS s FROM readings WHERE censored IS NULL"
	for _, args := range [][]string{{"query", "--db", db, refused}, {"query", "--write", "--db", db, refused}} {
		out.Reset()
		errw.Reset()
		code := Main(args, strings.NewReader(""), &out, &errw)
		msg := errw.String()
		if code != ExitFailed || !strings.Contains(msg, "trend_slope does not handle censoring") || !strings.Contains(msg, "1 censored readings") ||
			!strings.Contains(msg, "censored_sen_slope") || strings.Contains(msg, "not authorized") {
			t.Errorf("%v: exit %d, stderr %q; want the censoring refusal", args, code, msg)
		}
	}
	out.Reset()
	errw.Reset()
	code := Main([]string{"shell", "--db", db}, strings.NewReader(refused+";\n"), &out, &errw)
	if code != ExitFailed || !strings.Contains(errw.String(), "trend_slope does not handle censoring") {
		t.Errorf("shell: exit %d, stderr %q; want the censoring refusal", code, errw.String())
	}
	out.Reset()
	errw.Reset()
	// Uncensored readings 1.5, 3.5, 4.5 on days 0, 2, 3 lie on 1.5 + day:
	// slope 1 per day = 365.25 per year (1 y = 365.25 d).
	if code := Main([]string{"query", "--format", "csv", "--db", db, filtered}, strings.NewReader(""), &out, &errw); code != 0 || strings.TrimSpace(out.String()) != "s\n365.25" {
		t.Errorf("filtered: exit %d, stdout %q, stderr %q; want s = 365.25", code, out.String(), errw.String())
	}
}
