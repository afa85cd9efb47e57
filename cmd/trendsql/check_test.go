package main

import (
	"bytes"
	"strings"
	"testing"
)

// TestCheckCommand: a healthy store checks with exit 0 and a line per
// check; readings of no series make it exit 1 naming the problem.
func TestCheckCommand(t *testing.T) {
	db := guardStore(t)
	var out, errw bytes.Buffer
	if code := Main([]string{"check", "--db", db}, strings.NewReader(""), &out, &errw); code != ExitOK {
		t.Fatalf("healthy store: exit %d: %s%s", code, out.String(), errw.String())
	}
	for _, want := range []string{"integrity", "foreign keys", "orphan readings", "hard links", "schema version", "summary runs left running"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("output lacks %q:\n%s", want, out.String())
		}
	}
	out.Reset()
	errw.Reset()
	if code := Main([]string{"query", "--write", "--allow-unsafe-pragmas", "--db", db, "PRAGMA foreign_keys=OFF; DELETE FROM series; SELECT 1"}, strings.NewReader(""), &out, &errw); code != ExitOK {
		t.Fatalf("damage: %s", errw.String())
	}
	out.Reset()
	errw.Reset()
	code := Main([]string{"check", "--db", db}, strings.NewReader(""), &out, &errw)
	if code != ExitFailed || !strings.Contains(out.String(), "1 readings belong to no series") {
		t.Errorf("damaged store: exit %d:\n%s%s", code, out.String(), errw.String())
	}
}
