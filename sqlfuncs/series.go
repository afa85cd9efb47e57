package sqlfuncs

// Aggregate plumbing shared by every function.
//
// Two shapes exist:
//
//   - defineStream: running-sum aggregates whose state is a few numbers
//     (regr_*, covar_*, corr). WindowInverse undoes one row, so sliding
//     frames cost O(1) per row.
//   - defineSeries: aggregates over a time series. Each group keeps one
//     compact buffer of (t, value) pairs; the value is computed when SQLite
//     asks for it. Rows may arrive in any order: the buffer is checked for
//     sortedness in one linear pass and sorted by t only when needed. Two
//     rows with the same t are an error naming the function and the time.
//     Rows whose value is NULL are missing observations: their values are
//     skipped, their times kept apart (Rows.MissingT) because they still
//     mark a slot of the time grid; a NULL time is an error. WindowInverse removes the oldest buffered row (SQLite
//     removes rows in the order it added them), so every series aggregate is
//     also a window function with any frame.
//
// Trailing option arguments (a lag, a spec string...) must be the same on
// every row of a group.

import (
	"database/sql/driver"
	"errors"
	"fmt"
	"slices"
	"sort"
	"strconv"
	"sync"

	"modernc.org/sqlite"

	"trendsql/sqlfuncs/timefmt"
)

// Rows is one group's series, sorted by T with distinct T. X is set only for
// two-value functions such as (t, x, y); a row is kept only if every value
// is non-NULL.
type Rows struct {
	T []float64
	X []float64
	Y []float64
	// MissingT holds, sorted, the times of the frame's rows that have a
	// NULL value (explicit missing readings); they may repeat a time of T.
	MissingT []float64
}

// Len is the number of rows.
func (r Rows) Len() int { return len(r.T) }

type seriesSpec struct {
	doc        Doc
	argNames   []string // names of all arguments, for error messages: t, y, lag...
	values     int      // number of value columns after t: 1 (t, y) or 2 (t, x, y)
	minOptions int      // option arguments after the values
	maxOptions int
	// compute is called with the sorted rows of the frame and the option
	// arguments of the group. It returns nil for SQL NULL.
	compute func(r Rows, opts []driver.Value) (driver.Value, error)
}

// defineSeries registers a series aggregate.
func defineSeries(s seriesSpec) {
	spec := s
	define(s.doc, &sqlite.FunctionImpl{
		NArgs:         -1,
		Deterministic: true,
		MakeAggregate: func(ctx sqlite.FunctionContext) (sqlite.AggregateFunction, error) {
			return &seriesAgg{spec: &spec}, nil
		},
	})
}

type seriesAgg struct {
	spec    *seriesSpec
	t, x, y []float64
	head    int
	// nullT holds the times of rows with a NULL value, oldest first, from
	// nullHead on (WindowInverse removes them in the order they came).
	nullT    []float64
	nullHead int
	opts     []driver.Value
	stepped  bool
	sorted   bool // rows head.. are in strictly increasing t order so far
	// censored counts rows whose value was a reported censored value
	// ('<5'); they are not buffered and make the value an error.
	censored        int
	censoredExample string
	scratch         Rows
	perm            []int
}

func (a *seriesAgg) name() string { return a.spec.doc.Name }

func (a *seriesAgg) checkArgs(args []driver.Value) error {
	n := len(args) - 1 - a.spec.values
	if n < a.spec.minOptions || n > a.spec.maxOptions {
		return fmt.Errorf("%s: wrong number of arguments (%d); usage: %s", a.name(), len(args), a.spec.doc.Signature)
	}
	return nil
}

func (a *seriesAgg) argName(i int) string {
	if i < len(a.spec.argNames) {
		return a.spec.argNames[i]
	}
	return fmt.Sprintf("#%d", i+1)
}

// row converts one row's arguments; ok is false when a value is NULL.
func (a *seriesAgg) row(args []driver.Value) (t, x, y float64, ok bool, err error) {
	if err = a.checkArgs(args); err != nil {
		return
	}
	t, err = argTime(a.name(), a.argName(0), args[0])
	if err != nil {
		return
	}
	var okx, oky bool
	if a.spec.values == 2 {
		x, okx, err = argValue(a.name(), a.argName(1), args[1])
		if err != nil {
			return
		}
		y, oky, err = argValue(a.name(), a.argName(2), args[2])
		if err != nil {
			return
		}
		return t, x, y, okx && oky, nil
	}
	y, oky, err = argValue(a.name(), a.argName(1), args[1])
	return t, 0, y, oky, err
}

func (a *seriesAgg) Step(ctx *sqlite.FunctionContext, args []driver.Value) (err error) {
	defer recoverInto(a.name(), &err)
	t, x, y, ok, err := a.row(args)
	var cens *censoredValueError
	if errors.As(err, &cens) {
		a.censored++
		if a.censoredExample == "" {
			a.censoredExample = cens.text
		}
		ok, err = false, nil
	}
	if err != nil {
		return err
	}
	opts := args[1+a.spec.values:]
	if !a.stepped {
		a.opts = append([]driver.Value(nil), opts...)
		a.stepped = true
		a.sorted = true
		a.t, a.y = getFloats(), getFloats()
		if a.spec.values == 2 {
			a.x = getFloats()
		}
	} else if !sameOpts(a.opts, opts) {
		return fmt.Errorf("%s: option arguments must be the same on every row of a group (got %v, then %v)", a.name(), a.opts, opts)
	}
	if !ok {
		if cens == nil {
			a.addMissing(t)
		}
		return nil
	}
	if n := len(a.t); n > a.head && t <= a.t[n-1] {
		a.sorted = false
	}
	a.t = appendFloat(a.t, t)
	a.y = appendFloat(a.y, y)
	if a.spec.values == 2 {
		a.x = appendFloat(a.x, x)
	}
	return nil
}

// appendFloat appends v to a group's buffer, doubling its capacity when it
// is full: append's own growth of large slices (about 1.25× at a time)
// allocates about five times a long series' final size in all, doubling
// about twice.
func appendFloat(s []float64, v float64) []float64 {
	if len(s) == cap(s) {
		s = growFloats(s)
	}
	return append(s, v)
}

func growFloats(s []float64) []float64 {
	ns := make([]float64, len(s), max(2*cap(s), 64))
	copy(ns, s)
	return ns
}

func sameOpts(a, b []driver.Value) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if !sameValue(a[i], b[i]) && fmt.Sprint(a[i]) != fmt.Sprint(b[i]) {
			return false
		}
	}
	return true
}

// sameValue is the allocation-free fast path of sameOpts for the usual
// option types; false means "compare as text".
func sameValue(a, b driver.Value) bool {
	switch x := a.(type) {
	case nil:
		return b == nil
	case int64:
		y, ok := b.(int64)
		return ok && x == y
	case float64:
		y, ok := b.(float64)
		return ok && x == y
	case string:
		y, ok := b.(string)
		return ok && x == y
	}
	return false
}

// addMissing records the time of a row whose value is NULL.
func (a *seriesAgg) addMissing(t float64) {
	a.nullT = append(a.nullT, t)
}

func (a *seriesAgg) WindowInverse(ctx *sqlite.FunctionContext, args []driver.Value) (err error) {
	defer recoverInto(a.name(), &err)
	_, _, _, ok, err := a.row(args)
	var cens *censoredValueError
	if errors.As(err, &cens) {
		a.censored--
		return nil
	}
	if err != nil {
		return err
	}
	if !ok {
		if a.nullHead < len(a.nullT) {
			a.nullHead++
		}
		if a.nullHead == len(a.nullT) {
			a.nullT, a.nullHead = a.nullT[:0], 0
		}
		return nil
	}
	if a.head >= len(a.t) {
		return fmt.Errorf("%s: internal error: window removed more rows than it added", a.name())
	}
	a.head++
	if a.head > 1024 && a.head*2 > len(a.t) {
		n := copy(a.t, a.t[a.head:])
		a.t = a.t[:n]
		copy(a.y, a.y[a.head:])
		a.y = a.y[:n]
		if a.spec.values == 2 {
			copy(a.x, a.x[a.head:])
			a.x = a.x[:n]
		}
		a.head = 0
	}
	// Removing rows cannot unsort the rest, but a.sorted may be stale-false;
	// recheck lazily in frame().
	return nil
}

// frame returns the current rows sorted by t, or an error for tied times.
func (a *seriesAgg) frame() (Rows, error) {
	t, y := a.t[a.head:], a.y[a.head:]
	var x []float64
	if a.spec.values == 2 {
		x = a.x[a.head:]
	}
	if !a.sorted {
		inOrder := true
		for i := 1; i < len(t); i++ {
			if t[i] <= t[i-1] {
				inOrder = false
				break
			}
		}
		if !inOrder {
			n := len(t)
			a.perm = a.perm[:0]
			for i := 0; i < n; i++ {
				a.perm = append(a.perm, i)
			}
			sort.SliceStable(a.perm, func(i, j int) bool { return t[a.perm[i]] < t[a.perm[j]] })
			a.scratch.T = slices.Grow(a.scratch.T[:0], n)[:n]
			a.scratch.Y = slices.Grow(a.scratch.Y[:0], n)[:n]
			for i, p := range a.perm {
				a.scratch.T[i] = t[p]
				a.scratch.Y[i] = y[p]
			}
			t, y = a.scratch.T, a.scratch.Y
			if x != nil {
				a.scratch.X = slices.Grow(a.scratch.X[:0], n)[:n]
				for i, p := range a.perm {
					a.scratch.X[i] = x[p]
				}
				x = a.scratch.X
			}
		}
	}
	// Times kept in strictly increasing order (a.sorted) hold no tie.
	if !a.sorted {
		for i := 1; i < len(t); i++ {
			if t[i] == t[i-1] {
				return Rows{}, fmt.Errorf("%s: two rows have the same time %s (t = %s); each time may appear once per group, so a group holds one series", a.name(), timefmt.FormatUTC(int64(t[i])), strconv.FormatFloat(t[i], 'f', -1, 64))
			}
		}
	}
	var missing []float64
	if a.nullHead < len(a.nullT) {
		missing = a.nullT[a.nullHead:]
		if !slices.IsSorted(missing) {
			missing = slices.Clone(missing)
			slices.Sort(missing)
		}
	}
	return Rows{T: t, X: x, Y: y, MissingT: missing}, nil
}

func (a *seriesAgg) WindowValue(ctx *sqlite.FunctionContext) (v driver.Value, err error) {
	defer recoverInto(a.name(), &err)
	if !a.stepped {
		return nil, nil
	}
	if a.censored > 0 {
		return nil, censoredRowsError(a.name(), a.censored, a.censored+len(a.t)-a.head, a.censoredExample)
	}
	r, err := a.frame()
	if err != nil {
		return nil, err
	}
	v, err = a.spec.compute(r, a.opts)
	return checkResult(a.name(), v, err)
}

// Final hands the group's buffers back for the next group (the value has
// been computed by then).
func (a *seriesAgg) Final(ctx *sqlite.FunctionContext) { a.recycle() }

// Buffers of finished groups are reused by the next ones: consecutive
// groups of one query usually have similar lengths, so a reused buffer
// rarely grows, and a scan over many series allocates (and collects) almost
// nothing per row. The free list holds them strongly: a sync.Pool drops its
// contents at every garbage collection, which with long series can come
// about once per group, so the next group would grow its buffers afresh.
var floatFree struct {
	sync.Mutex
	bufs  [][]float64
	total int // float64s held
}

// floatFreeMax caps what the free list holds, in float64s (16 MiB); a
// buffer larger than half of it is left to the collector.
const floatFreeMax = 1 << 21

func getFloats() []float64 {
	floatFree.Lock()
	defer floatFree.Unlock()
	k := len(floatFree.bufs)
	if k == 0 {
		return nil
	}
	b := floatFree.bufs[k-1]
	floatFree.bufs[k-1] = nil
	floatFree.bufs = floatFree.bufs[:k-1]
	floatFree.total -= cap(b)
	return b[:0]
}

func putFloats(s []float64) {
	c := cap(s)
	if c == 0 || c > floatFreeMax/2 {
		return
	}
	floatFree.Lock()
	defer floatFree.Unlock()
	// Make room by dropping the oldest buffers.
	for floatFree.total+c > floatFreeMax && len(floatFree.bufs) > 0 {
		floatFree.total -= cap(floatFree.bufs[0])
		floatFree.bufs[0] = nil
		floatFree.bufs = floatFree.bufs[1:]
	}
	floatFree.bufs = append(floatFree.bufs, s[:0])
	floatFree.total += c
}

// recycle releases the group's row buffers; the aggregate must not be used
// afterwards.
func (a *seriesAgg) recycle() {
	putFloats(a.t)
	putFloats(a.y)
	putFloats(a.x)
	a.t, a.y, a.x = nil, nil, nil
}

// streamState is the running state of a streaming aggregate.
type streamState interface {
	add(args []driver.Value) error
	remove(args []driver.Value) error
	value() (driver.Value, error)
}

type streamSpec struct {
	doc   Doc
	nargs int32
	make  func() streamState
}

// defineStream registers a running-sum aggregate.
func defineStream(s streamSpec) {
	spec := s
	define(s.doc, &sqlite.FunctionImpl{
		NArgs:         s.nargs,
		Deterministic: true,
		MakeAggregate: func(ctx sqlite.FunctionContext) (sqlite.AggregateFunction, error) {
			return &streamAgg{name: spec.doc.Name, st: spec.make()}, nil
		},
	})
}

type streamAgg struct {
	name string
	st   streamState
}

func (a *streamAgg) Step(ctx *sqlite.FunctionContext, args []driver.Value) (err error) {
	defer recoverInto(a.name, &err)
	return a.st.add(args)
}

func (a *streamAgg) WindowInverse(ctx *sqlite.FunctionContext, args []driver.Value) (err error) {
	defer recoverInto(a.name, &err)
	return a.st.remove(args)
}

func (a *streamAgg) WindowValue(ctx *sqlite.FunctionContext) (v driver.Value, err error) {
	defer recoverInto(a.name, &err)
	v, err = a.st.value()
	return checkResult(a.name, v, err)
}

func (a *streamAgg) Final(ctx *sqlite.FunctionContext) {}

// defineScalar registers a deterministic scalar function with panic safety.
func defineScalar(doc Doc, nargs int32, fn func(args []driver.Value) (driver.Value, error)) {
	name := doc.Name
	define(doc, &sqlite.FunctionImpl{
		NArgs:         nargs,
		Deterministic: true,
		Scalar: func(ctx *sqlite.FunctionContext, args []driver.Value) (v driver.Value, err error) {
			defer recoverInto(name, &err)
			v, err = fn(args)
			return checkResult(name, v, err)
		},
	})
}
