package main

// The README's SQL examples are checked against the demo store: every
// ```sql block that is followed by a ```text block is run (read-only, table
// format) on a freshly built demo store that has had the two summarize runs
// of the README's summaries section, and its output must equal the text block.
// Set TRENDSQL_UPDATE_README=1 to rewrite the text blocks from the real
// output after changing an example or the demo.

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"trendsql/sqlfuncs"
	"trendsql/store/storetest"
)

type readmeExample struct {
	sql              string
	outStart, outEnd int // line range of the text block body [start, end)
}

func readmeExamples(lines []string) []readmeExample {
	var out []readmeExample
	for i := 0; i < len(lines); i++ {
		if strings.TrimSpace(lines[i]) != "```sql" {
			continue
		}
		j := i + 1
		for j < len(lines) && strings.TrimSpace(lines[j]) != "```" {
			j++
		}
		sqlText := strings.Join(lines[i+1:j], "\n")
		k := j + 1
		for k < len(lines) && strings.TrimSpace(lines[k]) == "" {
			k++
		}
		if k >= len(lines) || strings.TrimSpace(lines[k]) != "```text" {
			i = j
			continue
		}
		e := k + 1
		for e < len(lines) && strings.TrimSpace(lines[e]) != "```" {
			e++
		}
		out = append(out, readmeExample{sql: sqlText, outStart: k + 1, outEnd: e})
		i = e
	}
	return out
}

func TestReadmeExamples(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the demo store")
	}
	readme := filepath.Join("..", "..", "README.md")
	raw, err := os.ReadFile(readme)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(raw), "\n")
	examples := readmeExamples(lines)
	if len(examples) < 10 {
		t.Fatalf("found only %d checked examples in README.md", len(examples))
	}
	// Every registered SQL function appears in at least one checked example.
	var allSQL strings.Builder
	for _, ex := range examples {
		allSQL.WriteString(ex.sql + "\n")
	}
	for _, d := range sqlfuncs.List() {
		if !strings.Contains(allSQL.String(), d.Name+"(") {
			t.Errorf("README.md has no checked example calling %s", d.Name)
		}
	}
	db := filepath.Join(t.TempDir(), "demo.db")
	var out, errw bytes.Buffer
	if code := Main([]string{"demo", "--db", db}, strings.NewReader(""), &out, &errw); code != 0 {
		t.Fatalf("demo: exit %d: %s", code, errw.String())
	}
	// The two runs of the README's summaries section.
	for _, args := range [][]string{
		{"summarize", "--db", db, "--period", "1y", "--until", "2024-12-31T23:59:59Z"},
		{"summarize", "--db", db, "--period", "1y"},
	} {
		if code := Main(args, strings.NewReader(""), &out, &errw); code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errw.String())
		}
	}
	s := storetest.View(t, db)
	update := os.Getenv("TRENDSQL_UPDATE_README") == "1"
	// Replace from the last example backwards so line numbers stay valid.
	for i := len(examples) - 1; i >= 0; i-- {
		ex := examples[i]
		var got bytes.Buffer
		if err := runStatements(context.Background(), s, ex.sql, &got, outputOptions{format: FormatTable}, nil); err != nil {
			t.Errorf("README example %d failed: %v\n%s", i+1, err, ex.sql)
			continue
		}
		gotLines := strings.Split(strings.TrimRight(got.String(), "\n"), "\n")
		want := strings.Join(lines[ex.outStart:ex.outEnd], "\n")
		if update {
			lines = append(lines[:ex.outStart], append(gotLines, lines[ex.outEnd:]...)...)
			continue
		}
		if strings.Join(gotLines, "\n") != want {
			t.Errorf("README example %d output differs (rerun with TRENDSQL_UPDATE_README=1 after checking):\n%s\n--- got:\n%s\n--- README:\n%s", i+1, ex.sql, got.String(), want)
		}
	}
	if update {
		if err := os.WriteFile(readme, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := s.IntegrityCheck(context.Background()); err != nil {
		t.Fatal(err)
	}
}
