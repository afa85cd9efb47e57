package sqlfuncs

// Zero-allocation adapters: the regression aggregates (regr_*, covar_*,
// corr of regr.go), the series aggregates of (t, y [, options])
// (fastpath_series.go) and the qualifier counter of summarize
// (fastpath_qual.go) are served at SQLite's C level through package
// rawsqlite, so their per-row Step path allocates nothing.
//
// A connection hook runs after the driver has registered the public-API
// implementations on each new connection and re-registers these functions
// on that connection with rawsqlite callbacks. When rawsqlite refuses
// (TRENDSQL_FASTPATH=off, other driver or libc versions than the verified
// ones, a changed connection layout) or a registration fails, the hook
// leaves the connection alone and every function keeps its public-API
// implementation: same code, same results, only slower. FastPathStatus says
// which path is in use and why.
//
// The adapters share the public implementations' state types and code:
// the regression state is regr.go's comoments (stats.Comoments) updated by
// AddPair and RemovePair and read by the public result func; a series group is the
// public seriesAgg; the qualifier state is qualcount.go's qualCounts. Only
// rows whose conversion cannot fail are handled here; every other row is
// boxed and handed to the public Step, so checks and error messages are the
// public ones. The internal tests drive the public aggregates directly and
// compare values and errors with the adapters bit for bit.

import (
	"database/sql/driver"
	"fmt"
	"math"
	"sort"
	"sync"

	"modernc.org/sqlite"

	"trendsql/sqlfuncs/rawsqlite"
)

// FastPathEnv disables the adapters (and the store's C-level batch insert)
// when set to "off".
const FastPathEnv = rawsqlite.EnvVar

var fastpath struct {
	sync.Mutex
	tried, active bool
	reason        string
}

// FastPathStatus reports whether the connections opened so far use the
// zero-allocation adapters (false as soon as one could not), and why. Before
// any connection has been opened it reports inactive with the reason "no
// connection opened yet".
func FastPathStatus() (active bool, reason string) {
	fastpath.Lock()
	defer fastpath.Unlock()
	if !fastpath.tried {
		return false, "no connection opened yet"
	}
	return fastpath.active, fastpath.reason
}

func init() {
	sqlite.RegisterConnectionHook(fastpathHook)
}

// fastpathHook installs the adapters on one new connection; it never fails
// the connection.
func fastpathHook(c sqlite.ExecQuerierContext, _ string) error {
	err := installFastPath(c)
	fastpath.Lock()
	defer fastpath.Unlock()
	fastpath.tried = true
	if err != nil {
		fastpath.active = false
		fastpath.reason = "the regression and series aggregates use the public driver API: " + err.Error()
	} else if !fastpath.active {
		fastpath.active = true
		fns := fastFunctions()
		fastpath.reason = fmt.Sprintf("%d regression and %d series aggregates use the C-level adapter (sqlfuncs/rawsqlite)", len(fns.regr), len(fns.series))
	}
	return nil
}

// fastFunctionSet is what the adapters serve, derived once from the
// registry.
type fastFunctionSet struct {
	regr, series []*rawsqlite.Function
	qualifiers   *rawsqlite.Function
}

// fastFunctions lists the served functions in name order. It is called
// only from connection hooks, which run after Register has fixed the
// registry.
var fastFunctions = sync.OnceValue(func() fastFunctionSet {
	registryMu.Lock()
	defer registryMu.Unlock()
	names := make([]string, 0, len(definitions))
	for name := range definitions {
		names = append(names, name)
	}
	sort.Strings(names)
	var set fastFunctionSet
	for _, name := range names {
		d := definitions[name]
		if d.impl == nil || d.impl.MakeAggregate == nil {
			continue
		}
		agg, err := d.impl.MakeAggregate(sqlite.FunctionContext{})
		if err != nil {
			continue
		}
		switch a := agg.(type) {
		case *streamAgg:
			if rf, ok := a.st.(*regrFunc); ok && rf.result != nil && d.impl.NArgs == 2 {
				set.regr = append(set.regr, regrFunction(name, rf.result))
			}
		case *seriesAgg:
			if a.spec.values == 1 && a.spec.minOptions >= 0 && a.spec.maxOptions <= 4 {
				set.series = append(set.series, seriesFunction(name, d.impl.MakeAggregate, 2+a.spec.minOptions, 2+a.spec.maxOptions))
			}
		}
	}
	set.qualifiers = qualifierFunction()
	return set
})

func installFastPath(dc any) error {
	conn, err := rawsqlite.ConnOf(dc)
	if err != nil {
		return err
	}
	fns := fastFunctions()
	for _, list := range [][]*rawsqlite.Function{fns.regr, fns.series, {fns.qualifiers}} {
		for _, f := range list {
			if err := conn.CreateFunction(f); err != nil {
				return err
			}
		}
	}
	return nil
}

// functionNames returns the SQL names of fns.
func functionNames(fns []*rawsqlite.Function) []string {
	out := make([]string, len(fns))
	for k, f := range fns {
		out[k] = f.Name
	}
	return out
}

// finiteNumber reads an INTEGER or a finite REAL value; ok is false for
// anything else, null reports SQL NULL.
func finiteNumber(v rawsqlite.Value) (x float64, null, ok bool) {
	switch v.Type() {
	case rawsqlite.Integer:
		return float64(v.Int64()), false, true
	case rawsqlite.Float:
		x = v.Float64()
		return x, false, !math.IsNaN(x) && !math.IsInf(x, 0)
	case rawsqlite.Null:
		return 0, true, false
	}
	return 0, false, false
}

// regrGroups holds the co-moments of the open groups of the regression
// aggregates.
var regrGroups rawsqlite.Slots[comoments]

// regrFunction serves one regression aggregate: rows go to comoments'
// AddPair and RemovePair, the value comes from the public result func.
func regrFunction(name string, result func(c *comoments) driver.Value) *rawsqlite.Function {
	newState := func() (*comoments, error) { return &comoments{fn: name}, nil }
	// argument reads one argument as regr.go's argValue would; anything
	// but NULL or a finite number goes to argValue itself.
	argument := func(v rawsqlite.Value, arg string) (float64, bool, error) {
		x, null, ok := finiteNumber(v)
		switch {
		case ok:
			return x, true, nil
		case null:
			return 0, false, nil
		}
		return argValue(name, arg, v.Boxed())
	}
	row := func(c rawsqlite.Context, args rawsqlite.Args, remove bool) {
		y, oky, err := argument(args.At(0), "y")
		if err != nil {
			c.Error(err)
			return
		}
		x, okx, err := argument(args.At(1), "x")
		if err != nil {
			c.Error(err)
			return
		}
		m, err := regrGroups.Get(c, true, newState)
		if err != nil {
			c.Error(err)
			return
		}
		switch {
		case !oky || !okx:
		case remove:
			m.RemovePair(y, x)
		default:
			m.AddPair(y, x)
		}
	}
	value := func(c rawsqlite.Context, final bool) {
		if final {
			defer regrGroups.Release(c)
		}
		m, err := regrGroups.Get(c, false, nil)
		if err != nil {
			c.Error(err)
			return
		}
		if m == nil {
			m = &comoments{fn: name} // no row was ever stepped: the empty set
		}
		m.Finish()
		v, err := checkResult(name, result(m), nil)
		if err != nil {
			c.Error(err)
			return
		}
		c.Result(v)
	}
	return &rawsqlite.Function{
		Name:    name,
		MinArgs: 2, MaxArgs: 2,
		Step:    func(c rawsqlite.Context, args rawsqlite.Args) { row(c, args, false) },
		Inverse: func(c rawsqlite.Context, args rawsqlite.Args) { row(c, args, true) },
		Value:   func(c rawsqlite.Context) { value(c, false) },
		Final:   func(c rawsqlite.Context) { value(c, true) },
	}
}
