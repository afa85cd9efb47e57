package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestImportExitsNonZeroWhenNothingStored: a file whose every row is
// rejected exits 1 with the counted reasons; --max-reject-share fails an
// import above the share and accepts one within it.
func TestImportExitsNonZeroWhenNothingStored(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "r.db")
	run := func(args ...string) (int, string) {
		var out, errw bytes.Buffer
		code := Main(append(args, "--db", db), strings.NewReader(""), &out, &errw)
		return code, errw.String()
	}
	if code, msg := run("init"); code != 0 {
		t.Fatal(msg)
	}
	comma := filepath.Join(dir, "comma.csv")
	os.WriteFile(comma, []byte("station;time;value\nS1;1600000000;12,5\nS1;1600003600;13,5\nS1;1600007200;abc\n"), 0o644)
	code, msg := run("import", "readings", "--variable", "level", "--delimiter", ";", comma)
	if code != ExitFailed || !strings.Contains(msg, "nothing stored: all 3 rows were rejected") ||
		!strings.Contains(msg, "2 × value \"…\" is not a number (a decimal comma?") || !strings.Contains(msg, "--decimal-comma") {
		t.Errorf("all rejected: exit %d, stderr:\n%s", code, msg)
	}
	if code, msg := run("import", "readings", "--variable", "level", "--delimiter", ";", "--decimal-comma", comma); code != ExitOK {
		t.Errorf("the same file with --decimal-comma: exit %d: %s", code, msg)
	}

	mixed := filepath.Join(dir, "mixed.csv")
	os.WriteFile(mixed, []byte("station,time,value\nS2,1600000000,1\nS2,1600003600,2\nS2,1600007200,x\nS2,1600010800,4\n"), 0o644)
	if code, msg := run("import", "readings", "--variable", "level", "--max-reject-share", "10%", mixed); code != ExitFailed || !strings.Contains(msg, "more than the limit of 10%") {
		t.Errorf("over the limit: exit %d: %s", code, msg)
	}
	if code, msg := run("import", "readings", "--variable", "level", "--max-reject-share", "1.5", mixed); code != ExitUsage {
		t.Errorf("bad share: exit %d: %s", code, msg)
	}
	if code, msg := run("import", "readings", "--variable", "level", "--max-reject-share", "0.25", mixed); code != ExitOK {
		t.Errorf("within the limit: exit %d: %s", code, msg)
	}
}
