// Package migrations holds the numbered schema migrations of a trendsql
// store as embedded SQL files.
//
// Files are named NNNN_description.sql and are applied in ascending order of
// NNNN by store.Migrate, each in its own transaction, and recorded in the
// schema_migrations table. A migration, once released, is never edited:
// changes to the schema go into a new file with the next number.
package migrations

import (
	"embed"
	"fmt"
	"io/fs"
	"sort"
	"strconv"
	"strings"
)

//go:embed *.sql
var files embed.FS

// Migration is one numbered schema change.
type Migration struct {
	Version int
	Name    string
	SQL     string
}

// All returns every embedded migration in ascending version order. It fails
// if two files share a version or a file name does not start with a number.
func All() ([]Migration, error) {
	entries, err := fs.ReadDir(files, ".")
	if err != nil {
		return nil, fmt.Errorf("read embedded migrations: %w", err)
	}
	var out []Migration
	seen := map[int]string{}
	for _, e := range entries {
		name := e.Name()
		if !strings.HasSuffix(name, ".sql") {
			continue
		}
		num, _, ok := strings.Cut(name, "_")
		if !ok {
			return nil, fmt.Errorf("migration %s: name must be NNNN_description.sql", name)
		}
		v, err := strconv.Atoi(num)
		if err != nil || v <= 0 {
			return nil, fmt.Errorf("migration %s: bad version number %q", name, num)
		}
		if prev, dup := seen[v]; dup {
			return nil, fmt.Errorf("migration %s: version %d already used by %s", name, v, prev)
		}
		seen[v] = name
		b, err := files.ReadFile(name)
		if err != nil {
			return nil, fmt.Errorf("read migration %s: %w", name, err)
		}
		out = append(out, Migration{Version: v, Name: name, SQL: string(b)})
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Version < out[j].Version })
	return out, nil
}
