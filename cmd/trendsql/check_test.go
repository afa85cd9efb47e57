package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
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

// TestCheckFindsPhysicalDamage: copies of a store with bytes overwritten in
// the header, the schema or a whole page, and copies cut short, make
// check exit 1 with a line saying the file is damaged or cut short (or what SQLite's
// integrity check found); check never panics and never reports them ok. A
// second hard link makes check exit 1 naming the number of names.
func TestCheckFindsPhysicalDamage(t *testing.T) {
	db := guardStore(t)
	var out, errw bytes.Buffer
	fill := `WITH RECURSIVE c(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM c WHERE i < 20000)
INSERT INTO readings(series_id, t, value) SELECT 1, 1600000000 + 3600 * i, i * 0.25 FROM c;
SELECT count(*) FROM readings`
	if code := Main([]string{"query", "--write", "--db", db, fill}, strings.NewReader(""), &out, &errw); code != ExitOK {
		t.Fatalf("fill: %s", errw.String())
	}
	good, err := os.ReadFile(db)
	if err != nil {
		t.Fatal(err)
	}
	if len(good) < 40*4096 {
		t.Fatalf("store has %d bytes; the damage offsets below need at least 40 pages", len(good))
	}
	dir := t.TempDir()
	damage := map[string][]byte{}
	// 256 bytes in the header and in the schema on page 1; whole pages
	// elsewhere (the store has no free pages, so each one is in use).
	for _, d := range []struct{ off, n int }{{0, 256}, {100, 256}, {4096, 4096}, {5 * 4096, 4096}, {20 * 4096, 4096}, {len(good) - 4096, 4096}} {
		b := bytes.Clone(good)
		copy(b[d.off:d.off+d.n], bytes.Repeat([]byte{0xde, 0xad, 0xbe, 0xef}, d.n/4))
		damage[fmt.Sprintf("%d bytes overwritten at offset %d", d.n, d.off)] = b
	}
	for _, n := range []int{50, 4096, len(good) / 2, len(good) - 1} {
		damage[fmt.Sprintf("cut to %d bytes", n)] = good[:n]
	}
	i := 0
	for what, b := range damage {
		i++
		path := filepath.Join(dir, fmt.Sprintf("damaged%d.db", i))
		if err := os.WriteFile(path, b, 0o644); err != nil {
			t.Fatal(err)
		}
		out.Reset()
		errw.Reset()
		code := Main([]string{"check", "--db", path}, strings.NewReader(""), &out, &errw)
		text := out.String() + errw.String()
		if code == ExitOK || !(strings.Contains(text, "the store file is damaged") || strings.Contains(text, "integrity check found") || strings.Contains(text, "(cut short")) {
			t.Errorf("%s: exit %d, want %d and a line saying the file is damaged:\n%s", what, code, ExitFailed, text)
		}
	}

	second := filepath.Join(dir, "second-name.db")
	if err := os.Link(db, second); err != nil {
		t.Skipf("no hard links here: %v", err)
	}
	out.Reset()
	errw.Reset()
	code := Main([]string{"check", "--db", db}, strings.NewReader(""), &out, &errw)
	if code != ExitFailed || !strings.Contains(out.String(), "the store file has 2 names (hard links)") {
		t.Errorf("store with a second hard link: exit %d, want %d and the number of names:\n%s%s", code, ExitFailed, out.String(), errw.String())
	}
}
