package sqlfuncs

// Zero-allocation Step path for the series aggregates of (t, y [, options])
// (trend_slope, trend_fit, sample_acf, correlogram, ljung_box, mann_kendall,
// sen_slope, ... — every defineSeries function with one value column), on
// the connection hook of fastpath.go.
//
// The group's state is the public implementation's own seriesAgg (made by
// its MakeAggregate), so values are computed by exactly the same code.
// Step handles only the common case itself — t and y are finite INTEGER or
// REAL values (or y is NULL) and the option arguments are the same values,
// of the same type, as on the group's first row — by appending (t, y) to the
// buffer as seriesAgg.Step does. Every other row (the group's first, text
// times, numeric text, NULL times, changed options, ...) is boxed and handed
// to seriesAgg.Step itself, so conversions, checks and error messages are
// the public ones. Window frames work: the inverse callback hands the
// removed row to seriesAgg.WindowInverse (boxing there, which only window
// queries pay). Argument counts outside the function's range keep the
// public variadic registration (SQLite picks the exact-arity function first).

import (
	"database/sql/driver"

	"modernc.org/sqlite"

	"trendsql/sqlfuncs/rawsqlite"
)

// seriesGroups holds the seriesAgg of every open group of the series
// aggregates.
var seriesGroups rawsqlite.Slots[seriesAgg]

// sameOption says whether an option argument equals, in type and value, the
// one stored from the group's first row (anything else takes the public
// path, which decides).
func sameOption(v rawsqlite.Value, stored driver.Value) bool {
	switch v.Type() {
	case rawsqlite.Integer:
		s, ok := stored.(int64)
		return ok && s == v.Int64()
	case rawsqlite.Float:
		s, ok := stored.(float64)
		return ok && s == v.Float64()
	case rawsqlite.Text:
		s, ok := stored.(string)
		return ok && string(v.Text()) == s
	case rawsqlite.Null:
		return stored == nil
	}
	return false
}

// seriesFunction serves one series aggregate for minArgs..maxArgs
// arguments; newAgg is its public MakeAggregate.
func seriesFunction(name string, newAgg func(sqlite.FunctionContext) (sqlite.AggregateFunction, error), minArgs, maxArgs int) *rawsqlite.Function {
	newState := func() (*seriesAgg, error) {
		agg, err := newAgg(sqlite.FunctionContext{})
		if err != nil {
			return nil, err
		}
		return agg.(*seriesAgg), nil
	}
	step := func(c rawsqlite.Context, args rawsqlite.Args) {
		a, err := seriesGroups.Get(c, true, newState)
		if err != nil {
			c.Error(err)
			return
		}
		if a.stepped && args.Len() == 2+len(a.opts) {
			t, _, tok := finiteNumber(args.At(0))
			y, ynull, yok := finiteNumber(args.At(1))
			same := tok && (yok || ynull)
			for j := 2; same && j < args.Len(); j++ {
				same = sameOption(args.At(j), a.opts[j-2])
			}
			if same {
				// seriesAgg.Step for a row whose conversions cannot fail.
				if ynull {
					a.addMissing(t)
					return
				}
				if n := len(a.t); n > a.head && t <= a.t[n-1] {
					a.sorted = false
				}
				a.t = appendFloat(a.t, t)
				a.y = appendFloat(a.y, y)
				return
			}
		}
		// The public path: the group's first row and anything unusual.
		if err := a.Step(nil, args.Boxed()); err != nil {
			c.Error(err)
		}
	}
	inverse := func(c rawsqlite.Context, args rawsqlite.Args) {
		a, err := seriesGroups.Get(c, true, newState)
		if err != nil {
			c.Error(err)
			return
		}
		if err := a.WindowInverse(nil, args.Boxed()); err != nil {
			c.Error(err)
		}
	}
	value := func(c rawsqlite.Context, final bool) {
		if final {
			defer seriesGroups.Release(c)
		}
		a, err := seriesGroups.Get(c, false, nil)
		if err != nil {
			c.Error(err)
			return
		}
		if a == nil {
			c.Result(nil)
			return
		}
		v, err := a.WindowValue(nil)
		if final {
			a.recycle()
		}
		if err != nil {
			c.Error(err)
			return
		}
		c.Result(v)
	}
	return &rawsqlite.Function{
		Name:    name,
		MinArgs: minArgs, MaxArgs: maxArgs,
		Step:    step,
		Inverse: inverse,
		Value:   func(c rawsqlite.Context) { value(c, false) },
		Final:   func(c rawsqlite.Context) { value(c, true) },
	}
}
