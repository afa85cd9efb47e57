package main

import (
	"bytes"
	"strings"
	"testing"
)

func TestSplitStatements(t *testing.T) {
	cases := []struct {
		in   string
		want []string
	}{
		{"SELECT 1", []string{"SELECT 1"}},
		{"SELECT 1; SELECT 2;", []string{"SELECT 1", "SELECT 2"}},
		{"SELECT ';' AS a; SELECT \"x;y\" FROM t", []string{"SELECT ';' AS a", "SELECT \"x;y\" FROM t"}},
		{"SELECT 'it''s; fine'; SELECT 2", []string{"SELECT 'it''s; fine'", "SELECT 2"}},
		{"SELECT [a;b], `c;d` FROM t;", []string{"SELECT [a;b], `c;d` FROM t"}},
		{"-- only a comment;\nSELECT 1; /* block; */ ;", []string{"-- only a comment;\nSELECT 1"}},
		{"  ;  ; SELECT 3 ;", []string{"SELECT 3"}},
		{"CREATE TRIGGER tr AFTER INSERT ON a BEGIN INSERT INTO b VALUES (1); DELETE FROM c; END; SELECT 1",
			[]string{"CREATE TRIGGER tr AFTER INSERT ON a BEGIN INSERT INTO b VALUES (1); DELETE FROM c; END", "SELECT 1"}},
		{"create temp trigger tr after delete on a begin select 1; end;", []string{"create temp trigger tr after delete on a begin select 1; end"}},
	}
	for _, c := range cases {
		var got []string
		for _, st := range splitStatements(c.in) {
			got = append(got, st.text)
			if c.in[st.offset:st.offset+len(st.text)] != st.text {
				t.Errorf("%q: offset %d does not point at %q", c.in, st.offset, st.text)
			}
		}
		if strings.Join(got, "|") != strings.Join(c.want, "|") {
			t.Errorf("splitStatements(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

func TestStatementComplete(t *testing.T) {
	cases := map[string]bool{
		"SELECT 1;":            true,
		"SELECT 1":             false,
		"SELECT 1;  -- done\n": true,
		"SELECT 1; /* done */": true,
		"SELECT ';":            false,
		"SELECT ';';":          true,
		"SELECT 1 /* ; ":       false,
		"SELECT 1 -- ;":        false,
		"SELECT 1; SELECT 2":   false,
		"SELECT \"a;\n":        false,
		"CREATE TRIGGER t AFTER INSERT ON a BEGIN\n  SELECT 1;":       false,
		"CREATE TRIGGER t AFTER INSERT ON a BEGIN\n  SELECT 1;\nEND;": true,
		"":                   false,
		"-- just a comment;": false,
	}
	for in, want := range cases {
		if got := statementComplete(in); got != want {
			t.Errorf("statementComplete(%q) = %v, want %v", in, got, want)
		}
	}
}

// TestMainUsageErrors runs the CLI in-process: bad flags and arguments exit 2.
func TestMainUsageErrors(t *testing.T) {
	t.Setenv("TRENDSQL_DB", t.TempDir()+"/never-created.db")
	cases := [][]string{
		{"query"},
		{"query", "SELECT 1", "SELECT 2"},
		{"query", "--format", "xml", "SELECT 1"},
		{"--no-such-flag"},
		{"demo", "extra-argument"},
		{"demo", "--seed", "not-a-number"},
		{"shell", "--format", "yaml"},
		{"shell", "extra-argument"},
		{"functions", "--format", "xml"},
		{"functions", "--out", "list.unknown-extension"},
		{"query", "--file", "q.sql", "SELECT 1"},
		{"version", "extra"},
		{"no-such-command"},
		{"querry", "SELECT 1"},
	}
	for _, args := range cases {
		var out, errw bytes.Buffer
		code := Main(args, strings.NewReader(""), &out, &errw)
		if code != ExitUsage {
			t.Errorf("trendsql %q: exit %d, want %d (stderr %q)", args, code, ExitUsage, errw.String())
		}
		if !strings.HasPrefix(errw.String(), "trendsql: ") || strings.Count(strings.TrimSpace(errw.String()), "\n") != 0 {
			t.Errorf("trendsql %q: want a one-line error, got %q", args, errw.String())
		}
		if strings.Count(errw.String(), "trendsql:") != 1 || strings.HasPrefix(errw.String(), "trendsql: trendsql") {
			t.Errorf("trendsql %q: the program name is repeated in %q", args, errw.String())
		}
	}
	// A mistyped command gets the suggestion on the same line.
	var out, errw bytes.Buffer
	Main([]string{"querry", "SELECT 1"}, strings.NewReader(""), &out, &errw)
	if want := "trendsql: unknown command \"querry\" (did you mean query?); see `trendsql --help`\n"; errw.String() != want {
		t.Errorf("mistyped command: %q, want %q", errw.String(), want)
	}
}

// TestShellInProcess drives the shell through Main with a non-terminal input.
func TestShellInProcess(t *testing.T) {
	db := t.TempDir() + "/p.db"
	var out, errw bytes.Buffer
	if code := Main([]string{"init", "--db", db}, strings.NewReader(""), &out, &errw); code != 0 {
		t.Fatalf("init: %s", errw.String())
	}
	out.Reset()
	errw.Reset()
	in := ":help\n:format json\nSELECT 1 AS one,\n NULL AS none;\n:format\n:format xml\n:columns nowhere\n:columns temp.stations\n:quit\nSELECT 'not reached';\n"
	code := Main([]string{"shell", "--db", db}, strings.NewReader(in), &out, &errw)
	if code != ExitFailed {
		t.Errorf("exit %d, want %d (three commands failed)", code, ExitFailed)
	}
	o := out.String()
	for _, want := range []string{":columns NAME", `{"one": 1, "none": null}`, "format: json"} {
		if !strings.Contains(o, want) {
			t.Errorf("output lacks %q:\n%s", want, o)
		}
	}
	if strings.Contains(o, "not reached") {
		t.Error(":quit did not stop the shell")
	}
	for _, want := range []string{`expected table, csv, json or fields, got "xml"`, `no table or view named "nowhere"`, `no table or view named "stations" in schema "temp"`} {
		if !strings.Contains(errw.String(), want) {
			t.Errorf("stderr lacks %q:\n%s", want, errw.String())
		}
	}
}

// TestSplitQualified: schema-qualified names for :columns, with SQL's
// quoting styles (a dot inside quotes belongs to the name).
func TestSplitQualified(t *testing.T) {
	for in, want := range map[string][2]string{
		"readings":          {"", "readings"},
		"main.readings":     {"main", "readings"},
		`"main"."odd.name"`: {"main", "odd.name"},
		"[aux].[t]":         {"aux", "t"},
		"`x`":               {"", "x"},
		`"a.b"`:             {"", "a.b"},
	} {
		s, n := splitQualified(in)
		if s != want[0] || n != want[1] {
			t.Errorf("splitQualified(%q) = %q, %q; want %q, %q", in, s, n, want[0], want[1])
		}
	}
}
