package main

import (
	"bytes"
	"context"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"trendsql/store"
	"trendsql/store/storetest"
)

// runMain runs the CLI in this process and returns stderr and the exit code.
func runMain(args ...string) (string, int) {
	var out, errw bytes.Buffer
	code := Main(args, strings.NewReader(""), &out, &errw)
	return errw.String(), code
}

// The store's typed errors reach the user worded with this program's
// commands and flags.
func TestStoreErrorsWordedWithFlags(t *testing.T) {
	dir := t.TempDir()

	// No store for a read-only command.
	missing := filepath.Join(dir, "none.db")
	errs, code := runMain("--db", missing, "query", "SELECT 1")
	if code != ExitFailed || !strings.Contains(errs, "open "+missing+": no store at this path (create one with `trendsql init` or `trendsql demo`)") {
		t.Errorf("query on a missing store: exit %d, stderr %q", code, errs)
	}

	// A store one migration behind, opened read-only.
	old := filepath.Join(dir, "old.db")
	s, err := store.Open(context.Background(), old, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	cur, latest, err := s.SchemaVersion(context.Background())
	if err != nil || cur != latest {
		t.Fatalf("fresh store at version %d of %d: %v", cur, latest, err)
	}
	if _, err := s.DB.Exec(`DELETE FROM schema_migrations WHERE version = ?`, latest); err != nil {
		t.Fatal(err)
	}
	s.Close()
	errs, code = runMain("--db", old, "query", "SELECT 1")
	want := "store schema is version " + strconv.Itoa(latest-1) + ", this trendsql needs " + strconv.Itoa(latest) + ": run `trendsql init --db " + old + "` to migrate"
	if code != ExitFailed || !strings.Contains(errs, want) {
		t.Errorf("query on an outdated store: exit %d, stderr %q, want %q", code, errs, want)
	}

	// A summary selection that is not valid SQL.
	db := storetest.Copy(t, demoStore(t))
	errs, code = runMain("--db", db, "summarize", "--where", "no_such_column = 1")
	if code != ExitFailed || !strings.Contains(errs, "summarize: select series (check --where): ") || !strings.Contains(errs, "no_such_column") {
		t.Errorf("summarize with a bad --where: exit %d, stderr %q", code, errs)
	}
}
