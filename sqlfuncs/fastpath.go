package sqlfuncs

// Zero-allocation adapter for the SQL:2003 regression aggregates (regr_*,
// covar_*, corr of regr.go) and, in fastpath_series.go, for the series
// aggregates.
//
// Why. The driver's public aggregate API (sqlite.FunctionImpl) hands every
// row's arguments to Go as []driver.Value; each int64 or float64 argument is
// boxed into an interface, one Go heap allocation per argument per row.
// Over millions of rows that costs more than the arithmetic. This file
// registers the functions directly with SQLite's C-level API
// (sqlite3_create_window_function), reads arguments with sqlite3_value_*
// and keeps the running state in sqlite3_aggregate_context memory, so the
// Step path allocates nothing.
//
// How. A connection hook (sqlite.RegisterConnectionHook) runs after the
// driver has registered the public-API functions on each new connection and
// re-registers them on that connection with the callbacks below. It needs
// the connection's sqlite3* handle and libc TLS, which the driver keeps in
// unexported fields; handleOf checks by reflection that the connection type,
// its field names, types and order are exactly what this adapter was written
// against before reading them.
//
// Safety net. If anything does not match — a different driver version than
// FastPathDriverVersion, a changed connection layout, TRENDSQL_FASTPATH=off
// in the environment, or a failing registration — the hook leaves the
// connection alone and every function keeps its public-API implementation
// (same arithmetic, same results, only slower). FastPathStatus says which
// path is in use and why; TestFastPathActive fails loudly when a driver
// upgrade disables the adapter, so the upgrade cannot go unnoticed. After
// upgrading modernc.org/sqlite: re-read conn.go (fields db, tls) and the
// aggregate trampolines in sqlite.go, then update FastPathDriverVersion.
//
// Semantics are those of regr.go: the state is regr.go's comoments, updated
// by its update method in the same steps as comoments.add/remove, and the
// value is computed by the public function's own result func (taken from the
// aggregate its MakeAggregate returns), so nothing is duplicated. Rows with a
// NULL argument are ignored; numeric TEXT is accepted and non-numeric text
// or a non-finite value is an error naming the function and argument (the
// public argValue decides those cases). TestFastPathMatchesPublic and
// TestFastRegrMatchesPublic check results bit for bit against the public
// path; if regr.go changes how add/remove drive the state, they fail until
// this file follows.

import (
	"database/sql/driver"
	"errors"
	"fmt"
	"math"
	"os"
	"reflect"
	"runtime/debug"
	"sort"
	"strings"
	"sync"
	"unsafe"

	"modernc.org/libc"
	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"
)

// FastPathDriverVersion is the modernc.org/sqlite version the adapter was
// checked against. When the binary's build information names another
// version, the adapter is disabled (public API fallback); test binaries carry
// no dependency versions, so TestFastPathDriverPinned compares this constant
// with go.mod instead.
const FastPathDriverVersion = "v1.62.0"

// FastPathEnv disables the adapter when set to "off".
const FastPathEnv = "TRENDSQL_FASTPATH"

var fastpath struct {
	sync.Mutex
	tried, active bool
	reason        string
}

// fastRegrFunc is one regression aggregate served by the adapter.
type fastRegrFunc struct {
	name   string
	zName  uintptr // name as a C string, kept for the process
	result func(c *comoments) driver.Value
}

// fastRegr lists them; index+1 is the pApp of the registration.
var fastRegr struct {
	sync.Mutex
	done bool
	list []fastRegrFunc
}

// FastRegrFunctions lists the regression aggregates the adapter serves
// (empty until the first connection has been opened).
func FastRegrFunctions() []string {
	fastRegr.Lock()
	defer fastRegr.Unlock()
	out := make([]string, 0, len(fastRegr.list))
	for _, f := range fastRegr.list {
		out = append(out, f.name)
	}
	return out
}

// FastPathStatus reports whether the connections opened so far use the
// zero-allocation adapter (false as soon as one could not), and why. Before
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

// fastpathHook installs the adapter on one new connection; it never fails
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
		fastpath.reason = fmt.Sprintf("%d regression and %d series aggregates use the C-level adapter (sqlfuncs/fastpath.go, fastpath_series.go)", len(fastRegr.list), len(fastSeriesFactories.list))
	}
	return nil
}

type connHandle struct {
	db  uintptr
	tls *libc.TLS
}

// handleOf returns the sqlite3* handle and TLS of a driver connection after
// checking the layout this adapter depends on.
func handleOf(c any) (connHandle, error) {
	if v := os.Getenv(FastPathEnv); strings.EqualFold(v, "off") {
		return connHandle{}, errors.New(FastPathEnv + "=off")
	}
	if got := driverVersion(); got != "" && got != FastPathDriverVersion {
		return connHandle{}, fmt.Errorf("modernc.org/sqlite is %s; the adapter was checked against %s", got, FastPathDriverVersion)
	}
	v := reflect.ValueOf(c)
	if v.Kind() != reflect.Pointer || v.IsNil() || v.Elem().Kind() != reflect.Struct {
		return connHandle{}, fmt.Errorf("driver connection is %T, not a pointer to a struct", c)
	}
	t := v.Elem().Type()
	if t.PkgPath() != "modernc.org/sqlite" || t.Name() != "conn" || t.NumField() < 2 {
		return connHandle{}, fmt.Errorf("driver connection is %T, expected *sqlite.conn", c)
	}
	f0, f1 := t.Field(0), t.Field(1)
	if f0.Name != "db" || f0.Type != reflect.TypeOf(uintptr(0)) || f0.Offset != 0 ||
		f1.Name != "tls" || f1.Type != reflect.TypeOf((*libc.TLS)(nil)) || f1.Offset != unsafe.Offsetof(connHandle{}.tls) {
		return connHandle{}, fmt.Errorf("driver connection layout changed (first fields %s %s, %s %s)", f0.Name, f0.Type, f1.Name, f1.Type)
	}
	h := *(*connHandle)(v.UnsafePointer())
	if h.db == 0 || h.tls == nil {
		return connHandle{}, errors.New("driver connection has no open handle")
	}
	return h, nil
}

// driverVersion returns the driver's module version from the build
// information, or "" when the binary does not record it (test binaries).
func driverVersion() string {
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return ""
	}
	for _, d := range bi.Deps {
		if d.Path == "modernc.org/sqlite" {
			if d.Replace != nil {
				return d.Version + " replaced by " + d.Replace.Path + " " + d.Replace.Version
			}
			return d.Version
		}
	}
	return ""
}

func installFastPath(c any) error {
	h, err := handleOf(c)
	if err != nil {
		return err
	}
	fastRegr.Lock()
	if !fastRegr.done {
		fastRegr.done = true
		mu.Lock()
		names := make([]string, 0, len(definitions))
		for name := range definitions {
			names = append(names, name)
		}
		sort.Strings(names)
		for _, name := range names {
			d := definitions[name]
			if d.impl == nil || d.impl.MakeAggregate == nil || d.impl.NArgs != 2 {
				continue
			}
			agg, err := d.impl.MakeAggregate(sqlite.FunctionContext{})
			sa, ok := agg.(*streamAgg)
			if err != nil || !ok {
				continue
			}
			rf, ok := sa.st.(*regrFunc)
			if !ok || rf.result == nil {
				continue
			}
			z, err := libc.CString(name)
			if err != nil {
				mu.Unlock()
				fastRegr.Unlock()
				return err
			}
			fastRegr.list = append(fastRegr.list, fastRegrFunc{name: name, zName: z, result: rf.result})
		}
		mu.Unlock()
	}
	list := fastRegr.list
	fastRegr.Unlock()
	for i, f := range list {
		rc := sqlite3.Xsqlite3_create_window_function(h.tls, h.db, f.zName, 2,
			sqlite3.SQLITE_UTF8|sqlite3.SQLITE_DETERMINISTIC, uintptr(i+1),
			cFunc(fastRegrStep), cFunc(fastRegrFinal), cFunc(fastRegrValue), cFunc(fastRegrInverse), 0)
		if rc != sqlite3.SQLITE_OK {
			return fmt.Errorf("sqlite3_create_window_function(%s) returned %d", f.name, rc)
		}
	}
	if err := installFastSeries(h); err != nil {
		return err
	}
	return installFastQualifiers(h)
}

// fastRegrOf returns the function a callback serves.
func fastRegrOf(tls *libc.TLS, ctx uintptr) fastRegrFunc {
	i := int(sqlite3.Xsqlite3_user_data(tls, ctx)) - 1
	fastRegr.Lock()
	defer fastRegr.Unlock()
	if i < 0 || i >= len(fastRegr.list) {
		return fastRegrFunc{name: "regression aggregate", result: func(*comoments) driver.Value { return nil }}
	}
	return fastRegr.list[i]
}

// cFunc turns a top-level Go function into the function-pointer form the
// transpiled SQLite calls (a pointer to the function value, which for a
// top-level function lives in read-only data and never moves).
func cFunc[T any](f T) uintptr {
	return *(*uintptr)(unsafe.Pointer(&struct{ f T }{f}))
}

// The running state is regr.go's comoments itself, placed in
// sqlite3_aggregate_context memory (zeroed by SQLite on first use). Its only
// pointer field, the function name, is never set here and stays the empty
// string (a nil pointer), so that memory holds no Go pointer the collector
// would need to see. Step, inverse and the result call regr.go's update and
// finish, so the arithmetic (double-double shifted sums) is shared, not
// copied.
type fastMoments = comoments

// at converts an address from SQLite into a Go pointer without a
// uintptr-to-pointer conversion expression (go vet's unsafeptr check).
func at[T any](p uintptr) *T {
	return *(**T)(unsafe.Pointer(&p))
}

func fastState(tls *libc.TLS, ctx uintptr, alloc bool) *fastMoments {
	n := int32(0)
	if alloc {
		n = int32(unsafe.Sizeof(fastMoments{}))
	}
	p := sqlite3.Xsqlite3_aggregate_context(tls, ctx, n)
	if p == 0 {
		return nil
	}
	return at[fastMoments](p)
}

func fastError(tls *libc.TLS, ctx uintptr, err error) {
	msg, cerr := libc.CString(err.Error())
	if cerr != nil {
		sqlite3.Xsqlite3_result_error_nomem(tls, ctx)
		return
	}
	sqlite3.Xsqlite3_result_error(tls, ctx, msg, -1) // SQLite copies the text
	libc.Xfree(tls, msg)
}

// fastArg reads argument i as regr.go's argValue would; anything but a
// finite INTEGER or REAL, or NULL, goes to argValue itself.
func fastArg(tls *libc.TLS, ctx uintptr, argv uintptr, i int, arg string) (float64, bool, error) {
	v := at[[2]uintptr](argv)[i]
	switch sqlite3.Xsqlite3_value_type(tls, v) {
	case sqlite3.SQLITE_NULL:
		return 0, false, nil
	case sqlite3.SQLITE_INTEGER:
		return float64(sqlite3.Xsqlite3_value_int64(tls, v)), true, nil
	case sqlite3.SQLITE_FLOAT:
		x := sqlite3.Xsqlite3_value_double(tls, v)
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			return x, true, nil
		}
	}
	return argValue(fastRegrOf(tls, ctx).name, arg, fastBoxed(tls, v))
}

func fastPair(tls *libc.TLS, ctx uintptr, argc int32, argv uintptr) (y, x float64, ok bool, err error) {
	if argc != 2 {
		name := fastRegrOf(tls, ctx).name
		return 0, 0, false, fmt.Errorf("%s: wrong number of arguments (%d); usage: %s(y, x)", name, argc, name)
	}
	y, oky, err := fastArg(tls, ctx, argv, 0, "y")
	if err != nil {
		return 0, 0, false, err
	}
	x, okx, err := fastArg(tls, ctx, argv, 1, "x")
	if err != nil {
		return 0, 0, false, err
	}
	return y, x, oky && okx, nil
}

func fastRecover(tls *libc.TLS, ctx uintptr) {
	if r := recover(); r != nil {
		fastError(tls, ctx, fmt.Errorf("%s: internal error: %v", fastRegrOf(tls, ctx).name, r))
	}
}

func fastRegrStep(tls *libc.TLS, ctx uintptr, argc int32, argv uintptr) {
	fastRegrRow(tls, ctx, argc, argv, false)
}

func fastRegrInverse(tls *libc.TLS, ctx uintptr, argc int32, argv uintptr) {
	fastRegrRow(tls, ctx, argc, argv, true)
}

// fastRegrRow adds one row to the group's co-moments (remove: takes the
// oldest row of a window frame out), with regr.go's update and without the
// argument boxing.
func fastRegrRow(tls *libc.TLS, ctx uintptr, argc int32, argv uintptr, remove bool) {
	defer fastRecover(tls, ctx)
	y, x, ok, err := fastPair(tls, ctx, argc, argv)
	if err != nil {
		fastError(tls, ctx, err)
		return
	}
	c := fastState(tls, ctx, true)
	if c == nil {
		sqlite3.Xsqlite3_result_error_nomem(tls, ctx)
		return
	}
	switch {
	case !ok:
	case remove:
		c.removePair(y, x)
	default:
		c.addPair(y, x)
	}
}

// fastRegrResult computes the value with the public function's result func
// (regrFunc.value: finish, then result).
func fastRegrResult(tls *libc.TLS, ctx uintptr) {
	defer fastRecover(tls, ctx)
	f := fastRegrOf(tls, ctx)
	c := fastState(tls, ctx, false)
	if c == nil {
		c = &comoments{} // no row was ever stepped: the empty set
	}
	c.finish()
	switch v := f.result(c).(type) {
	case nil:
		sqlite3.Xsqlite3_result_null(tls, ctx)
	case float64:
		sqlite3.Xsqlite3_result_double(tls, ctx, v)
	case int64:
		sqlite3.Xsqlite3_result_int64(tls, ctx, v)
	default:
		fastError(tls, ctx, fmt.Errorf("%s: internal error: result of type %T", f.name, v))
	}
}

func fastRegrValue(tls *libc.TLS, ctx uintptr) { fastRegrResult(tls, ctx) }
func fastRegrFinal(tls *libc.TLS, ctx uintptr) { fastRegrResult(tls, ctx) }
