package sqlfuncs

// Zero-allocation Step path for trendsql_qualifier_counts (qualcount.go), on
// the connection hook of fastpath.go. Most readings carry no qualifier, and
// the rest repeat a few codes, so Step reads the TEXT in place and compares
// it with the group's known qualifiers; only a qualifier new to the group is
// copied. The state is qualcount.go's qualCounts. Values that are not TEXT
// or NULL go through qualCounts' public conversion.

import "trendsql/sqlfuncs/rawsqlite"

// qualifierGroups holds the qualCounts of the open groups.
var qualifierGroups rawsqlite.Slots[qualCounts]

func newQualCounts() (*qualCounts, error) { return &qualCounts{}, nil }

// qualifierFunction serves trendsql_qualifier_counts(q).
func qualifierFunction() *rawsqlite.Function {
	row := func(c rawsqlite.Context, args rawsqlite.Args, delta int64) {
		v := args.At(0)
		typ := v.Type()
		if typ == rawsqlite.Null {
			return
		}
		q, err := qualifierGroups.Get(c, true, newQualCounts)
		if err != nil {
			c.Error(err)
			return
		}
		if typ != rawsqlite.Text {
			q.addValue(v.Boxed(), delta)
			return
		}
		if b := v.Text(); len(b) > 0 {
			q.addBytes(b, delta)
		}
	}
	value := func(c rawsqlite.Context, final bool) {
		if final {
			defer qualifierGroups.Release(c)
		}
		q, err := qualifierGroups.Get(c, false, nil)
		if err != nil {
			c.Error(err)
			return
		}
		if q == nil {
			c.Result(nil)
			return
		}
		v, err := q.value()
		if err != nil {
			c.Error(err)
			return
		}
		c.Result(v)
	}
	return &rawsqlite.Function{
		Name:    QualifierCountsFunction,
		MinArgs: 1, MaxArgs: 1,
		Step:    func(c rawsqlite.Context, args rawsqlite.Args) { row(c, args, 1) },
		Inverse: func(c rawsqlite.Context, args rawsqlite.Args) { row(c, args, -1) },
		Value:   func(c rawsqlite.Context) { value(c, false) },
		Final:   func(c rawsqlite.Context) { value(c, true) },
	}
}
