package sqlfuncs

// Every SQL function, independent of the driver, for hosts other than the
// binary's own SQLite driver — the loadable extension of cmd/trendsqlext.
//
// A host registers each HostFunction under its name and hands it SQL values
// converted as the driver converts them: INTEGER → int64, REAL → float64,
// TEXT → string, BLOB → []byte, NULL → nil. Each call runs the code the
// binary's driver runs — the same argument checks, conversions, sorting,
// tie and NULL rules, option parsing, JSON and error messages — because it
// is that code: scalars call the registered scalar, aggregates drive the
// same aggregate object (made by the same constructor) the driver's
// callbacks drive, and the
// table-valued functions call the same row producer.
//
// Aggregates. A host may buffer a group's rows and hand them over only when
// a value is needed (HostGroup.Step/Inverse in the order SQLite delivered
// them, then Value). Rows that the host has already recognised as plain
// numbers may go through StepNumbers/StepColumns/InverseNumbers, which skip
// the boxing of the arguments (StepColumns takes them column by column); the
// conditions are documented at each method and are
// those of the driver's own zero-allocation adapter (fastpath*.go).

import (
	"database/sql/driver"
	"fmt"
	"slices"
	"sort"
	"sync"

	"modernc.org/sqlite"
)

// HostShape says how a host calls a function.
type HostShape int

const (
	// HostScalar: one call per row (HostFunction.Call).
	HostScalar HostShape = iota
	// HostAggregate: an aggregate and window function (HostFunction.NewGroup).
	HostAggregate
	// HostTable: a table-valued function (HostFunction.TableRows).
	HostTable
)

// HostFunction is one SQL function as a host registers it.
type HostFunction struct {
	Doc   Doc
	Shape HostShape
	// NArgs is the argument count to register (-1: any count; the function
	// checks the count itself and reports a usage error).
	NArgs int
	// Numbers is the number of leading arguments that StepNumbers and
	// InverseNumbers take as float64 (0: those methods are not available):
	// (t, y) or (t, x, y) for the series aggregates, (y, x) for the
	// regression aggregates.
	Numbers int
	// FirstRowBoxed is set when the first row of each group must go
	// through Step (it fixes the group's option arguments); the trailing
	// arguments of any row given to StepNumbers must then equal, in SQL
	// type and value, those of that first row.
	FirstRowBoxed bool
	// Table-valued functions: the CREATE TABLE statement to declare (the
	// arguments are the last, HIDDEN columns), the number of visible
	// columns and of arguments.
	TableSchema string
	TableCols   int
	TableArgs   int

	impl  *sqlite.FunctionImpl
	table *tableDef
}

// HostFunctions returns every function the binary registers (including the
// Internal ones its own commands use), sorted by name.
func HostFunctions() ([]HostFunction, error) {
	registryMu.Lock()
	defer registryMu.Unlock()
	out := make([]HostFunction, 0, len(definitions)+len(tables))
	for _, d := range definitions {
		f := HostFunction{Doc: d.doc, NArgs: int(d.impl.NArgs), impl: d.impl}
		switch {
		case d.impl.Scalar != nil:
			f.Shape = HostScalar
		case d.impl.MakeAggregate != nil:
			f.Shape = HostAggregate
			agg, err := d.impl.MakeAggregate(sqlite.FunctionContext{})
			if err != nil {
				return nil, fmt.Errorf("%s: %w", d.doc.Name, err)
			}
			switch a := agg.(type) {
			case *seriesAgg:
				f.Numbers = 1 + a.spec.values
				f.FirstRowBoxed = true
			case *streamAgg:
				if _, ok := a.st.(*regrFunc); ok {
					f.Numbers = 2
				}
			}
			agg.Final(nil)
		default:
			return nil, fmt.Errorf("%s: neither scalar nor aggregate", d.doc.Name)
		}
		out = append(out, f)
	}
	for _, t := range tables {
		t := t
		out = append(out, HostFunction{Doc: t.doc, Shape: HostTable, NArgs: t.nargs,
			TableSchema: t.schema, TableCols: t.ncols, TableArgs: t.nargs, table: &t})
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Doc.Name < out[j].Doc.Name })
	return out, nil
}

// Call runs a scalar function on one row's arguments.
func (f *HostFunction) Call(args []driver.Value) (v driver.Value, err error) {
	defer recoverInto(f.Doc.Name, &err)
	if f.Shape != HostScalar {
		return nil, fmt.Errorf("%s: internal error: not a scalar function", f.Doc.Name)
	}
	return f.impl.Scalar(nil, args)
}

// TableRows runs a table-valued function: given is the number of argument
// columns the query constrained with "=" (all must be), args their values in
// column order. The rows hold the visible columns only.
func (f *HostFunction) TableRows(given int, args []driver.Value) (rows [][]driver.Value, err error) {
	defer recoverInto(f.Doc.Name, &err)
	if f.Shape != HostTable {
		return nil, fmt.Errorf("%s: internal error: not a table-valued function", f.Doc.Name)
	}
	if given != f.table.nargs || len(args) != f.table.nargs {
		return nil, tableArgsMissing(*f.table)
	}
	return f.table.rows(args)
}

// tableArgsMissing is the error of a table-valued function called without
// all of its arguments.
func tableArgsMissing(t tableDef) error {
	return fmt.Errorf("%s: every argument must be given, as in %s", t.doc.Name, t.doc.Signature)
}

// HostGroup is the state of one group (or window partition) of an
// aggregate. It is not safe for concurrent use; SQLite drives one group
// from one thread at a time.
type HostGroup struct {
	name   string
	agg    sqlite.AggregateFunction
	series *seriesAgg // agg, when it is a series aggregate
	regr   *regrFunc  // agg's state, when it is a regression aggregate
	boxed  []driver.Value
}

// hostScratch holds a regression aggregate's columns during StepColumns.
var hostScratch = sync.Pool{New: func() any { return new([]float64) }}

// NewGroup starts an empty group of an aggregate.
func (f *HostFunction) NewGroup() (g *HostGroup, err error) {
	defer recoverInto(f.Doc.Name, &err)
	if f.Shape != HostAggregate {
		return nil, fmt.Errorf("%s: internal error: not an aggregate", f.Doc.Name)
	}
	agg, err := f.impl.MakeAggregate(sqlite.FunctionContext{})
	if err != nil {
		return nil, err
	}
	g = &HostGroup{name: f.Doc.Name, agg: agg}
	switch a := agg.(type) {
	case *seriesAgg:
		g.series = a
	case *streamAgg:
		g.regr, _ = a.st.(*regrFunc)
	}
	return g, nil
}

// Step adds one row, as the driver's xStep does.
func (g *HostGroup) Step(args []driver.Value) (err error) {
	defer recoverInto(g.name, &err)
	return g.agg.Step(nil, args)
}

// Inverse removes the oldest row of a window frame, as the driver's
// xInverse does; args are that row's arguments.
func (g *HostGroup) Inverse(args []driver.Value) (err error) {
	defer recoverInto(g.name, &err)
	return g.agg.WindowInverse(nil, args)
}

// StepNumbers adds a row whose first Numbers arguments are the finite
// numbers v (an INTEGER argument converted to float64) and none of them
// NULL. For a series aggregate the group must have had its first row
// through Step, and this row's remaining arguments must be equal in type and
// value to that row's; otherwise use Step. A row with a NULL among those
// arguments (and the others finite numbers) is skipped by the regression
// aggregates, so a host may drop it without calling anything; a series
// aggregate records the time of such a row (it marks a slot of the time
// grid), so give it to Step.
//
// v may hold several such rows one after the other (Numbers values each),
// which are added in order.
func (g *HostGroup) StepNumbers(v []float64) (err error) {
	defer recoverInto(g.name, &err)
	switch {
	case g.series != nil:
		a := g.series
		k := 1 + a.spec.values
		if !a.stepped || len(v)%k != 0 {
			return fmt.Errorf("%s: internal error: numbers before the group's first row", g.name)
		}
		rows := len(v) / k
		n0 := len(a.t)
		a.t = slices.Grow(a.t, rows)[:n0+rows]
		a.y = slices.Grow(a.y, rows)[:n0+rows]
		if k == 3 {
			a.x = slices.Grow(a.x, rows)[:n0+rows]
		}
		t, y := a.t[n0:], a.y[n0:]
		for i := range t {
			t[i], y[i] = v[i*k], v[i*k+k-1]
		}
		if k == 3 {
			x := a.x[n0:]
			for i := range x {
				x[i] = v[i*k+1]
			}
		}
		// The rows head.. stay in strictly increasing time order only if
		// the new ones continue it.
		a.sorted = a.sorted && increasingFrom(a.t, max(n0, a.head+1))
	case g.regr != nil && len(v)%2 == 0:
		for ; len(v) >= 2; v = v[2:] {
			g.regr.AddPair(v[0], v[1])
		}
	default:
		return fmt.Errorf("%s: internal error: no numeric rows", g.name)
	}
	return nil
}

// StepColumns adds rows rows of plain numbers given column by column, under
// the conditions of StepNumbers: fill must write column j (the j-th of the
// Numbers leading arguments) of every row into cols[j], whose length is
// rows. For a series aggregate the columns are the group's own buffers, so
// the rows are copied once.
func (g *HostGroup) StepColumns(rows int, fill func(cols [3][]float64)) (err error) {
	defer recoverInto(g.name, &err)
	var cols [3][]float64
	switch {
	case rows <= 0:
		return nil
	case g.series != nil:
		a := g.series
		k := 1 + a.spec.values
		if !a.stepped {
			return fmt.Errorf("%s: internal error: numbers before the group's first row", g.name)
		}
		n0 := len(a.t)
		a.t = slices.Grow(a.t, rows)[:n0+rows]
		a.y = slices.Grow(a.y, rows)[:n0+rows]
		cols[0], cols[k-1] = a.t[n0:], a.y[n0:]
		if k == 3 {
			a.x = slices.Grow(a.x, rows)[:n0+rows]
			cols[1] = a.x[n0:]
		}
		fill(cols)
		// The rows head.. stay in strictly increasing time order only if
		// the new ones continue it.
		a.sorted = a.sorted && increasingFrom(a.t, max(n0, a.head+1))
	case g.regr != nil:
		sp := hostScratch.Get().(*[]float64)
		defer hostScratch.Put(sp)
		*sp = slices.Grow((*sp)[:0], 2*rows)[:2*rows]
		cols[0], cols[1] = (*sp)[:rows], (*sp)[rows:]
		fill(cols)
		for i, y := range cols[0] {
			g.regr.AddPair(y, cols[1][i])
		}
	default:
		return fmt.Errorf("%s: internal error: no numeric rows", g.name)
	}
	return nil
}

// increasingFrom says whether t[i] > t[i-1] for every i ≥ from (from ≥ 1).
func increasingFrom(t []float64, from int) bool {
	for i := from; i < len(t); i++ {
		if !(t[i] > t[i-1]) {
			return false
		}
	}
	return true
}

// InverseNumbers removes the oldest row of a window frame given as
// StepNumbers took it (the same conditions apply).
func (g *HostGroup) InverseNumbers(v []float64) (err error) {
	defer recoverInto(g.name, &err)
	switch {
	case g.series != nil:
		a := g.series
		if !a.stepped || len(v) != 1+a.spec.values {
			return fmt.Errorf("%s: internal error: numbers before the group's first row", g.name)
		}
		g.boxed = g.boxed[:0]
		for _, x := range v {
			g.boxed = append(g.boxed, x)
		}
		g.boxed = append(g.boxed, a.opts...)
		return a.WindowInverse(nil, g.boxed)
	case g.regr != nil && len(v) == 2:
		g.regr.RemovePair(v[0], v[1])
	default:
		return fmt.Errorf("%s: internal error: no numeric rows", g.name)
	}
	return nil
}

// Value returns the aggregate's value over the rows added and not removed:
// nil (SQL NULL), int64, float64, string or []byte.
func (g *HostGroup) Value() (v driver.Value, err error) {
	defer recoverInto(g.name, &err)
	return g.agg.WindowValue(nil)
}

// Close ends the group as the driver's xFinal does (releasing its buffers);
// the group must not be used again.
func (g *HostGroup) Close() {
	defer func() { _ = recover() }()
	g.agg.Final(nil)
}
