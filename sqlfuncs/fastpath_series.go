package sqlfuncs

// Zero-allocation Step path for trend_slope(t, y) (the only series aggregate
// that uses it), on the same connection hook as the regr_slope adapter in
// fastpath.go, with the same version pin, checks and fallback.
//
// The public API boxes t and y into interfaces on every row (two heap
// allocations). Here SQLite calls plain callbacks: Step reads t and y with
// sqlite3_value_* and appends them to the group's buffer. The buffer is the
// public implementation's own seriesAgg (made by its MakeAggregate), so the
// value is computed by exactly the same code (sorting check, tie errors,
// stats.TrendSlope); only the per-row argument handling differs. The
// sqlite3_aggregate_context memory holds the index of that seriesAgg in
// liveSeries (an integer, no Go pointer). Window frames work: the inverse
// callback hands the removed row to seriesAgg.WindowInverse (boxing there,
// which only window queries pay). Calls with another argument count keep
// the public registration (SQLite picks the exact-arity function first).
//
// Step replicates seriesAgg.Step for a function without option arguments:
// TestFastSeriesMatchesPublic compares every result with the public path, so
// a change to seriesAgg.Step that this file does not follow fails loudly.

import (
	"database/sql/driver"
	"errors"
	"fmt"
	"math"
	"sync"
	"unsafe"

	"modernc.org/libc"
	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"
)

// fastSeriesNames are the series aggregates given the adapter.
var fastSeriesNames = []string{"trend_slope"}

var liveSeries struct {
	sync.RWMutex
	aggs []*seriesAgg
	free []int32
}

// fastSeriesSlot is what sqlite3_aggregate_context holds: slot+1 (0 = no
// aggregate yet).
type fastSeriesSlot struct{ id int32 }

type fastSeriesFactory struct {
	name string
	make func(sqlite.FunctionContext) (sqlite.AggregateFunction, error)
}

var fastSeriesFactories struct {
	sync.Mutex
	byName map[string]*fastSeriesFactory
	zNames map[string]uintptr
	list   []*fastSeriesFactory // index+1 is the pApp of the registration
}

// installFastSeries registers the adapter for fastSeriesNames on one
// connection (called by the hook after installFastPath succeeded).
func installFastSeries(h connHandle) error {
	fastSeriesFactories.Lock()
	defer fastSeriesFactories.Unlock()
	if fastSeriesFactories.byName == nil {
		fastSeriesFactories.byName = map[string]*fastSeriesFactory{}
		fastSeriesFactories.zNames = map[string]uintptr{}
		mu.Lock()
		for _, name := range fastSeriesNames {
			d, ok := definitions[name]
			if !ok || d.impl == nil || d.impl.MakeAggregate == nil {
				continue
			}
			agg, err := d.impl.MakeAggregate(sqlite.FunctionContext{})
			if _, isSeries := agg.(*seriesAgg); err != nil || !isSeries || agg.(*seriesAgg).spec.values != 1 || agg.(*seriesAgg).spec.maxOptions != 0 {
				continue
			}
			f := &fastSeriesFactory{name: name, make: d.impl.MakeAggregate}
			fastSeriesFactories.byName[name] = f
			fastSeriesFactories.list = append(fastSeriesFactories.list, f)
			z, err := libc.CString(name)
			if err != nil {
				mu.Unlock()
				return err
			}
			fastSeriesFactories.zNames[name] = z
		}
		mu.Unlock()
	}
	for i, f := range fastSeriesFactories.list {
		rc := sqlite3.Xsqlite3_create_window_function(h.tls, h.db, fastSeriesFactories.zNames[f.name], 2,
			sqlite3.SQLITE_UTF8|sqlite3.SQLITE_DETERMINISTIC, uintptr(i+1),
			cFunc(fastSeriesStep), cFunc(fastSeriesFinal), cFunc(fastSeriesValue), cFunc(fastSeriesInverse), 0)
		if rc != sqlite3.SQLITE_OK {
			return fmt.Errorf("sqlite3_create_window_function(%s) returned %d", f.name, rc)
		}
	}
	return nil
}

// fastSeriesAgg returns the group's seriesAgg, creating it on first use
// when create is set (nil when there is none).
func fastSeriesAgg(tls *libc.TLS, ctx uintptr, create bool) (*seriesAgg, *fastSeriesSlot, error) {
	n := int32(0)
	if create {
		n = int32(unsafe.Sizeof(fastSeriesSlot{}))
	}
	p := sqlite3.Xsqlite3_aggregate_context(tls, ctx, n)
	if p == 0 {
		if create {
			return nil, nil, errors.New("out of memory for the aggregate state")
		}
		return nil, nil, nil
	}
	slot := at[fastSeriesSlot](p)
	if slot.id > 0 {
		liveSeries.RLock()
		a := liveSeries.aggs[slot.id-1]
		liveSeries.RUnlock()
		return a, slot, nil
	}
	if !create {
		return nil, slot, nil
	}
	i := int(sqlite3.Xsqlite3_user_data(tls, ctx)) - 1
	fastSeriesFactories.Lock()
	f := fastSeriesFactories.list[i]
	fastSeriesFactories.Unlock()
	agg, err := f.make(sqlite.FunctionContext{})
	if err != nil {
		return nil, nil, err
	}
	a := agg.(*seriesAgg)
	liveSeries.Lock()
	if k := len(liveSeries.free); k > 0 {
		slot.id = liveSeries.free[k-1] + 1
		liveSeries.free = liveSeries.free[:k-1]
		liveSeries.aggs[slot.id-1] = a
	} else {
		liveSeries.aggs = append(liveSeries.aggs, a)
		slot.id = int32(len(liveSeries.aggs))
	}
	liveSeries.Unlock()
	return a, slot, nil
}

func releaseSeriesSlot(slot *fastSeriesSlot) {
	if slot == nil || slot.id == 0 {
		return
	}
	liveSeries.Lock()
	liveSeries.aggs[slot.id-1] = nil
	liveSeries.free = append(liveSeries.free, slot.id-1)
	liveSeries.Unlock()
	slot.id = 0
}

// fastSeriesArgs reads (t, y) as seriesAgg.row would: t must be a finite
// number or a time text; y is a finite number, numeric text, or NULL.
func fastSeriesArgs(tls *libc.TLS, a *seriesAgg, argv uintptr) (t, y float64, ok bool, err error) {
	v := at[[2]uintptr](argv)
	name := a.name()
	switch sqlite3.Xsqlite3_value_type(tls, v[0]) {
	case sqlite3.SQLITE_INTEGER:
		t = float64(sqlite3.Xsqlite3_value_int64(tls, v[0]))
	case sqlite3.SQLITE_FLOAT:
		t = sqlite3.Xsqlite3_value_double(tls, v[0])
		if math.IsNaN(t) || math.IsInf(t, 0) {
			t, err = argTime(name, a.argName(0), t)
		}
	default:
		t, err = argTime(name, a.argName(0), fastBoxed(tls, v[0]))
	}
	if err != nil {
		return 0, 0, false, err
	}
	switch sqlite3.Xsqlite3_value_type(tls, v[1]) {
	case sqlite3.SQLITE_NULL:
		return t, 0, false, nil
	case sqlite3.SQLITE_INTEGER:
		return t, float64(sqlite3.Xsqlite3_value_int64(tls, v[1])), true, nil
	case sqlite3.SQLITE_FLOAT:
		y = sqlite3.Xsqlite3_value_double(tls, v[1])
		if !math.IsNaN(y) && !math.IsInf(y, 0) {
			return t, y, true, nil
		}
	}
	y, ok, err = argValue(name, a.argName(1), fastBoxed(tls, v[1]))
	return t, y, ok, err
}

// fastBoxed converts a value the way the driver does (the slow path, for
// text, blobs, NULL and non-finite numbers only).
func fastBoxed(tls *libc.TLS, v uintptr) driver.Value {
	switch sqlite3.Xsqlite3_value_type(tls, v) {
	case sqlite3.SQLITE_INTEGER:
		return sqlite3.Xsqlite3_value_int64(tls, v)
	case sqlite3.SQLITE_FLOAT:
		return sqlite3.Xsqlite3_value_double(tls, v)
	case sqlite3.SQLITE_TEXT:
		return libc.GoString(sqlite3.Xsqlite3_value_text(tls, v))
	case sqlite3.SQLITE_BLOB:
		n := sqlite3.Xsqlite3_value_bytes(tls, v)
		b := make([]byte, n)
		if n > 0 {
			copy(b, unsafe.Slice(at[byte](sqlite3.Xsqlite3_value_blob(tls, v)), n))
		}
		return b
	default:
		return nil
	}
}

// fastSeriesRecover turns a panic into an SQL error naming the function.
func fastSeriesRecover(tls *libc.TLS, ctx uintptr) {
	if r := recover(); r != nil {
		name := "series aggregate"
		i := int(sqlite3.Xsqlite3_user_data(tls, ctx)) - 1
		fastSeriesFactories.Lock()
		if i >= 0 && i < len(fastSeriesFactories.list) {
			name = fastSeriesFactories.list[i].name
		}
		fastSeriesFactories.Unlock()
		fastError(tls, ctx, fmt.Errorf("%s: internal error: %v", name, r))
	}
}

func fastSeriesStep(tls *libc.TLS, ctx uintptr, argc int32, argv uintptr) {
	defer fastSeriesRecover(tls, ctx)
	a, _, err := fastSeriesAgg(tls, ctx, true)
	if err != nil {
		fastError(tls, ctx, err)
		return
	}
	t, y, ok, err := fastSeriesArgs(tls, a, argv)
	if err != nil {
		fastError(tls, ctx, err)
		return
	}
	// seriesAgg.Step for a function without option arguments.
	if !a.stepped {
		a.opts = nil
		a.stepped = true
		a.sorted = true
	}
	if !ok {
		return
	}
	if n := len(a.t); n > a.head && t <= a.t[n-1] {
		a.sorted = false
	}
	a.t = append(a.t, t)
	a.y = append(a.y, y)
}

func fastSeriesInverse(tls *libc.TLS, ctx uintptr, argc int32, argv uintptr) {
	defer fastSeriesRecover(tls, ctx)
	a, _, err := fastSeriesAgg(tls, ctx, true)
	if err != nil {
		fastError(tls, ctx, err)
		return
	}
	v := at[[2]uintptr](argv)
	if err := a.WindowInverse(nil, []driver.Value{fastBoxed(tls, v[0]), fastBoxed(tls, v[1])}); err != nil {
		fastError(tls, ctx, err)
	}
}

func fastSeriesResult(tls *libc.TLS, ctx uintptr, final bool) {
	defer fastSeriesRecover(tls, ctx)
	a, slot, err := fastSeriesAgg(tls, ctx, false)
	if final {
		defer releaseSeriesSlot(slot)
	}
	if err != nil {
		fastError(tls, ctx, err)
		return
	}
	if a == nil {
		sqlite3.Xsqlite3_result_null(tls, ctx)
		return
	}
	v, err := a.WindowValue(nil)
	if err != nil {
		fastError(tls, ctx, err)
		return
	}
	switch x := v.(type) {
	case nil:
		sqlite3.Xsqlite3_result_null(tls, ctx)
	case float64:
		sqlite3.Xsqlite3_result_double(tls, ctx, x)
	case int64:
		sqlite3.Xsqlite3_result_int64(tls, ctx, x)
	case string:
		p, cerr := libc.CString(x)
		if cerr != nil {
			sqlite3.Xsqlite3_result_error_nomem(tls, ctx)
			return
		}
		sqlite3.Xsqlite3_result_text(tls, ctx, p, int32(len(x)), sqlite3.SQLITE_TRANSIENT)
		libc.Xfree(tls, p)
	default:
		fastError(tls, ctx, fmt.Errorf("%s: internal error: result of type %T", a.name(), v))
	}
}

func fastSeriesValue(tls *libc.TLS, ctx uintptr) { fastSeriesResult(tls, ctx, false) }
func fastSeriesFinal(tls *libc.TLS, ctx uintptr) { fastSeriesResult(tls, ctx, true) }
