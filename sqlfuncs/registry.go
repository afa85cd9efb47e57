// Package sqlfuncs registers trendsql's SQL functions with the pure-Go SQLite
// driver and documents them.
//
// Every function is declared in a file of its own with an init() that calls
// define (scalars and aggregates) or defineTable (table-valued functions).
// Register installs them all on the driver once; every connection the
// binary opens afterwards has them. List returns the documentation shown by
// `trendsql functions` and the shell.
//
// The numerical work lives in the subpackage stats, which has no SQL imports;
// the files here only convert arguments, buffer rows and render results.
// The aggregates whose rows are many are also served at SQLite's C level
// through the subpackage rawsqlite (fastpath*.go), with the driver's public
// API as the fallback.
package sqlfuncs

import (
	"fmt"
	"sort"
	"sync"

	"modernc.org/sqlite"
)

// Kind says how a function is called from SQL.
type Kind string

const (
	Scalar    Kind = "scalar"
	Aggregate Kind = "aggregate/window"
	Table     Kind = "table-valued"
	// Internal functions serve the tool's own statements (e.g. summarize)
	// and are not listed for users.
	Internal Kind = "internal"
)

// Doc describes one SQL function for users.
type Doc struct {
	Name      string `json:"name"`
	Signature string `json:"signature"`
	Kind      Kind   `json:"kind"`
	Summary   string `json:"summary"`
}

type definition struct {
	doc  Doc
	impl *sqlite.FunctionImpl
}

var (
	registryMu   sync.Mutex
	definitions  = map[string]definition{}
	tables       = map[string]tableDef{}
	registered   bool
	registerErr  error
	registerOnce sync.Once
)

// define records a function for registration. It panics on a duplicate name:
// that is a programming error caught by any test run.
func define(doc Doc, impl *sqlite.FunctionImpl) {
	registryMu.Lock()
	defer registryMu.Unlock()
	if registered {
		panic("sqlfuncs: define after Register: " + doc.Name)
	}
	if _, dup := definitions[doc.Name]; dup {
		panic("sqlfuncs: duplicate function " + doc.Name)
	}
	if _, dup := tables[doc.Name]; dup {
		panic("sqlfuncs: duplicate function " + doc.Name)
	}
	definitions[doc.Name] = definition{doc: doc, impl: impl}
}

// Register installs every defined function on the "sqlite" driver. It is safe
// to call many times; only the first call does work. Connections opened
// before the first call do not have the functions.
func Register() error {
	registerOnce.Do(func() {
		registryMu.Lock()
		defer registryMu.Unlock()
		registered = true
		for name, d := range definitions {
			if err := sqlite.RegisterFunction(name, d.impl); err != nil {
				registerErr = fmt.Errorf("register SQL function %s: %w", name, err)
				return
			}
		}
		if err := registerTables(); err != nil {
			registerErr = err
		}
	})
	return registerErr
}

// List returns the documentation of every user-facing function, sorted by
// name (Internal ones are left out).
func List() []Doc {
	registryMu.Lock()
	defer registryMu.Unlock()
	out := make([]Doc, 0, len(definitions)+len(tables))
	for _, d := range definitions {
		if d.doc.Kind == Internal {
			continue
		}
		out = append(out, d.doc)
	}
	for _, t := range tables {
		out = append(out, t.doc)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Name < out[j].Name })
	return out
}
