package sqlfuncs

// Zero-allocation Step path for the series aggregates of (t, y [, options])
// (trend_slope, trend_fit, sample_acf, correlogram, ljung_box, mann_kendall,
// sen_slope, ... — every defineSeries function with one value column), on
// the same connection hook as the regr_slope adapter in fastpath.go, with the
// same version pin, checks and fallback.
//
// The public API boxes every argument of every row into an interface (one
// heap allocation per number). Here SQLite calls plain callbacks for each
// valid argument count. The group's state is the public implementation's own
// seriesAgg (made by its MakeAggregate), so values are computed by exactly
// the same code; the sqlite3_aggregate_context memory holds the index of
// that seriesAgg in liveSeries and its address (see fastSeriesSlot).
//
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
//
// TestFastSeriesMatchesPublic drives the public aggregate directly and
// compares values and errors; every SQL test of these functions also runs
// through this adapter, so a change to seriesAgg.Step that this file does not
// follow fails loudly.

import (
	"database/sql/driver"
	"errors"
	"fmt"
	"math"
	"sort"
	"sync"
	"unsafe"

	"modernc.org/libc"
	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"
)

// liveSeries keeps the series aggregates of open groups alive.
var liveSeries liveTable[seriesAgg]

// liveTable keeps the Go state objects of open aggregate groups alive while
// SQLite holds only their index and address (see fastSeriesSlot).
type liveTable[T any] struct {
	sync.Mutex
	objs []*T
	free []int32
}

// state returns the group's object and its slot, creating the object with
// mk on first use when create is set (nil, without error, when the group
// has none and create is not set).
func (lt *liveTable[T]) state(tls *libc.TLS, ctx uintptr, create bool, mk func() (*T, error)) (*T, *fastSeriesSlot, error) {
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
		return at[T](slot.obj), slot, nil
	}
	if !create {
		return nil, slot, nil
	}
	obj, err := mk()
	if err != nil {
		return nil, nil, err
	}
	lt.Lock()
	if k := len(lt.free); k > 0 {
		slot.id = lt.free[k-1] + 1
		lt.free = lt.free[:k-1]
		lt.objs[slot.id-1] = obj
	} else {
		lt.objs = append(lt.objs, obj)
		slot.id = int32(len(lt.objs))
	}
	lt.Unlock()
	slot.obj = uintptr(unsafe.Pointer(obj))
	return obj, slot, nil
}

// release drops the group's object (after its final value).
func (lt *liveTable[T]) release(slot *fastSeriesSlot) {
	if slot == nil || slot.id == 0 {
		return
	}
	lt.Lock()
	lt.objs[slot.id-1] = nil
	lt.free = append(lt.free, slot.id-1)
	lt.Unlock()
	slot.id, slot.obj = 0, 0
}

// live counts the objects still held.
func (lt *liveTable[T]) live() int {
	lt.Lock()
	defer lt.Unlock()
	n := 0
	for _, o := range lt.objs {
		if o != nil {
			n++
		}
	}
	return n
}

// fastSeriesSlot is what sqlite3_aggregate_context holds: slot+1 in the
// live table (0 = no state yet) and the address of the state object. The
// live table's reference keeps the object alive (Go's collector does not
// move heap objects), so Step reads the address without taking the table's
// lock: with several connections stepping at once, a shared lock's counter
// bounced between cores on every row.
type fastSeriesSlot struct {
	id  int32
	obj uintptr
}

type fastSeriesFactory struct {
	name             string
	make             func(sqlite.FunctionContext) (sqlite.AggregateFunction, error)
	minArgs, maxArgs int
}

// FastSeriesFunctions lists the series aggregates the adapter serves (empty
// until the first connection has been opened).
func FastSeriesFunctions() []string {
	fastSeriesFactories.Lock()
	defer fastSeriesFactories.Unlock()
	out := make([]string, 0, len(fastSeriesFactories.list))
	for _, f := range fastSeriesFactories.list {
		out = append(out, f.name)
	}
	return out
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
		names := make([]string, 0, len(definitions))
		for name := range definitions {
			names = append(names, name)
		}
		sort.Strings(names)
		for _, name := range names {
			d := definitions[name]
			if d.impl == nil || d.impl.MakeAggregate == nil {
				continue
			}
			agg, err := d.impl.MakeAggregate(sqlite.FunctionContext{})
			sa, isSeries := agg.(*seriesAgg)
			if err != nil || !isSeries || sa.spec.values != 1 || sa.spec.maxOptions > 4 || sa.spec.minOptions < 0 {
				continue
			}
			z, err := libc.CString(name)
			if err != nil {
				mu.Unlock()
				return err
			}
			f := &fastSeriesFactory{name: name, make: d.impl.MakeAggregate,
				minArgs: 2 + sa.spec.minOptions, maxArgs: 2 + sa.spec.maxOptions}
			fastSeriesFactories.byName[name] = f
			fastSeriesFactories.list = append(fastSeriesFactories.list, f)
			fastSeriesFactories.zNames[name] = z
		}
		mu.Unlock()
	}
	for i, f := range fastSeriesFactories.list {
		for n := f.minArgs; n <= f.maxArgs; n++ {
			rc := sqlite3.Xsqlite3_create_window_function(h.tls, h.db, fastSeriesFactories.zNames[f.name], int32(n),
				sqlite3.SQLITE_UTF8|sqlite3.SQLITE_DETERMINISTIC, uintptr(i+1),
				cFunc(fastSeriesStep), cFunc(fastSeriesFinal), cFunc(fastSeriesValue), cFunc(fastSeriesInverse), 0)
			if rc != sqlite3.SQLITE_OK {
				return fmt.Errorf("sqlite3_create_window_function(%s, %d) returned %d", f.name, n, rc)
			}
		}
	}
	return nil
}

// fastSeriesAgg returns the group's seriesAgg, creating it on first use
// when create is set (nil when there is none).
func fastSeriesAgg(tls *libc.TLS, ctx uintptr, create bool) (*seriesAgg, *fastSeriesSlot, error) {
	return liveSeries.state(tls, ctx, create, func() (*seriesAgg, error) {
		i := int(sqlite3.Xsqlite3_user_data(tls, ctx)) - 1
		fastSeriesFactories.Lock()
		f := fastSeriesFactories.list[i]
		fastSeriesFactories.Unlock()
		agg, err := f.make(sqlite.FunctionContext{})
		if err != nil {
			return nil, err
		}
		return agg.(*seriesAgg), nil
	})
}

// fastNumber reads a finite INTEGER or REAL value; ok is false for anything
// else (the caller then takes the public path).
func fastNumber(tls *libc.TLS, v uintptr) (x float64, null, ok bool) {
	switch sqlite3.Xsqlite3_value_type(tls, v) {
	case sqlite3.SQLITE_INTEGER:
		return float64(sqlite3.Xsqlite3_value_int64(tls, v)), false, true
	case sqlite3.SQLITE_FLOAT:
		x = sqlite3.Xsqlite3_value_double(tls, v)
		return x, false, !math.IsNaN(x) && !math.IsInf(x, 0)
	case sqlite3.SQLITE_NULL:
		return 0, true, false
	}
	return 0, false, false
}

// sameOption says whether an option argument equals, in type and value, the
// one stored from the group's first row (anything else takes the public
// path, which decides).
func sameOption(tls *libc.TLS, v uintptr, stored driver.Value) bool {
	switch sqlite3.Xsqlite3_value_type(tls, v) {
	case sqlite3.SQLITE_INTEGER:
		s, ok := stored.(int64)
		return ok && s == sqlite3.Xsqlite3_value_int64(tls, v)
	case sqlite3.SQLITE_FLOAT:
		s, ok := stored.(float64)
		return ok && s == sqlite3.Xsqlite3_value_double(tls, v)
	case sqlite3.SQLITE_TEXT:
		s, ok := stored.(string)
		if !ok {
			return false
		}
		p := sqlite3.Xsqlite3_value_text(tls, v)
		n := int(sqlite3.Xsqlite3_value_bytes(tls, v))
		if n != len(s) {
			return false
		}
		return n == 0 || unsafe.String(at[byte](p), n) == s
	case sqlite3.SQLITE_NULL:
		return stored == nil
	}
	return false
}

// fastRowArgs boxes the row's arguments as the driver would.
func fastRowArgs(tls *libc.TLS, argc int32, argv uintptr) []driver.Value {
	args := make([]driver.Value, argc)
	if argc == 0 {
		return args
	}
	for i, v := range unsafe.Slice(at[uintptr](argv), int(argc)) {
		args[i] = fastBoxed(tls, v)
	}
	return args
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
	if a.stepped && int(argc) == 2+len(a.opts) {
		v := unsafe.Slice(at[uintptr](argv), int(argc))
		t, _, tok := fastNumber(tls, v[0])
		y, ynull, yok := fastNumber(tls, v[1])
		same := tok && (yok || ynull)
		for j := 2; same && j < len(v); j++ {
			same = sameOption(tls, v[j], a.opts[j-2])
		}
		if same {
			// seriesAgg.Step for a row whose conversions cannot fail.
			if ynull {
				return
			}
			if n := len(a.t); n > a.head && t <= a.t[n-1] {
				a.sorted = false
			}
			a.t = append(a.t, t)
			a.y = append(a.y, y)
			return
		}
	}
	// The public path: the group's first row and anything unusual.
	if err := a.Step(nil, fastRowArgs(tls, argc, argv)); err != nil {
		fastError(tls, ctx, err)
	}
}

func fastSeriesInverse(tls *libc.TLS, ctx uintptr, argc int32, argv uintptr) {
	defer fastSeriesRecover(tls, ctx)
	a, _, err := fastSeriesAgg(tls, ctx, true)
	if err != nil {
		fastError(tls, ctx, err)
		return
	}
	if err := a.WindowInverse(nil, fastRowArgs(tls, argc, argv)); err != nil {
		fastError(tls, ctx, err)
	}
}

func fastSeriesResult(tls *libc.TLS, ctx uintptr, final bool) {
	defer fastSeriesRecover(tls, ctx)
	a, slot, err := fastSeriesAgg(tls, ctx, false)
	if final {
		defer liveSeries.release(slot)
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
	if final {
		a.recycle()
	}
	if err != nil {
		fastError(tls, ctx, err)
		return
	}
	fastResult(tls, ctx, a.name(), v)
}

// fastResult hands a Go value to SQLite as the function's result.
func fastResult(tls *libc.TLS, ctx uintptr, name string, v driver.Value) {
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
	case []byte:
		if len(x) == 0 || len(x) > math.MaxInt32 {
			if len(x) == 0 {
				sqlite3.Xsqlite3_result_zeroblob(tls, ctx, 0)
			} else {
				sqlite3.Xsqlite3_result_error_toobig(tls, ctx)
			}
			return
		}
		p := libc.Xmalloc(tls, libc.Tsize_t(len(x)))
		if p == 0 {
			sqlite3.Xsqlite3_result_error_nomem(tls, ctx)
			return
		}
		copy(unsafe.Slice(at[byte](p), len(x)), x)
		sqlite3.Xsqlite3_result_blob(tls, ctx, p, int32(len(x)), sqlite3.SQLITE_TRANSIENT)
		libc.Xfree(tls, p)
	default:
		fastError(tls, ctx, fmt.Errorf("%s: internal error: result of type %T", name, v))
	}
}

func fastSeriesValue(tls *libc.TLS, ctx uintptr) { fastSeriesResult(tls, ctx, false) }
func fastSeriesFinal(tls *libc.TLS, ctx uintptr) { fastSeriesResult(tls, ctx, true) }
