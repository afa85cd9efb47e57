//go:build cgo && trendsqlext

package main

// The Go side of the extension: registration, scalar calls, aggregate values
// from the row log that ext.c keeps, and the rows of the table-valued
// functions. Every entry point recovers panics and reports them as SQL
// errors naming the function; nothing here computes a statistic — that is
// sqlfuncs.HostFunction's job, the code the binary runs.

/*
#cgo CFLAGS: -O2
#include "ext.h"
*/
import "C"

import (
	"database/sql/driver"
	"encoding/binary"
	"fmt"
	"math"
	"runtime"
	"runtime/cgo"
	"runtime/debug"
	"strings"
	"sync"

	"trendsql/sqlfuncs"
)

func main() {}

// The function list and its C registration tables are built once per
// process: a Go shared library stays loaded after SQLite's dlclose, and a
// later load (another connection, or a reload) reuses them.
var lib struct {
	once   sync.Once
	err    error
	funcs  []sqlfuncs.HostFunction
	names  []*C.char
	cfuncs *C.ext_func
	tables map[int]*C.ext_table
}

func prepare() error {
	lib.once.Do(func() {
		defer func() {
			if r := recover(); r != nil {
				lib.err = fmt.Errorf("trendsql: internal error while preparing the functions: %v", r)
			}
		}()
		funcs, err := sqlfuncs.HostFunctions()
		if err != nil {
			lib.err = fmt.Errorf("trendsql: %w", err)
			return
		}
		lib.funcs = funcs
		lib.cfuncs = C.ext_funcs_new(C.int(len(funcs)))
		lib.tables = map[int]*C.ext_table{}
		if lib.cfuncs == nil {
			lib.err = fmt.Errorf("trendsql: out of memory")
			return
		}
		for i, f := range funcs {
			lib.names = append(lib.names, C.CString(f.Doc.Name))
			C.ext_func_set(lib.cfuncs, C.int(i), C.int(i), C.int(f.Numbers), cBool(f.FirstRowBoxed))
			if f.Shape == sqlfuncs.HostTable {
				t := C.ext_table_new(C.int(i), C.int(f.TableCols), C.int(f.TableArgs), C.CString(f.TableSchema))
				if t == nil {
					lib.err = fmt.Errorf("trendsql: out of memory")
					return
				}
				lib.tables[i] = t
			}
		}
	})
	return lib.err
}

func cBool(b bool) C.int {
	if b {
		return 1
	}
	return 0
}

//export trendsqlGoRegister
func trendsqlGoRegister(db *C.sqlite3, pzErrMsg **C.char) (rc C.int) {
	defer func() {
		if r := recover(); r != nil {
			C.ext_set_errmsg_owned(pzErrMsg, C.CString(fmt.Sprintf("trendsql: internal error while registering: %v", r)))
			rc = C.SQLITE_ERROR
		}
	}()
	if err := prepare(); err != nil {
		C.ext_set_errmsg_owned(pzErrMsg, C.CString(err.Error()))
		return C.SQLITE_ERROR
	}
	for i, f := range lib.funcs {
		var r C.int
		switch f.Shape {
		case sqlfuncs.HostScalar:
			r = C.ext_register_scalar(db, lib.names[i], C.int(f.NArgs), lib.cfuncs, C.int(i))
		case sqlfuncs.HostAggregate:
			r = C.ext_register_aggregate(db, lib.names[i], C.int(f.NArgs), lib.cfuncs, C.int(i))
		case sqlfuncs.HostTable:
			r = C.ext_register_table(db, lib.names[i], lib.tables[i])
		}
		if r != C.SQLITE_OK {
			msg := fmt.Sprintf("trendsql: cannot register %s: %s", f.Doc.Name, C.GoString(C.ext_db_errmsg(db)))
			C.ext_set_errmsg_owned(pzErrMsg, C.CString(msg))
			return r
		}
	}
	return C.SQLITE_OK
}

// functionAt returns the function at index i of the registration list.
func functionAt(i C.int) *sqlfuncs.HostFunction { return &lib.funcs[int(i)] }

// recoverResult turns a panic into the SQL error of the call.
func recoverResult(ctx *C.sqlite3_context, name string) {
	if r := recover(); r != nil {
		resultError(ctx, fmt.Errorf("%s: internal error: %v (please report; stack: %s)", name, r, firstFrames(debug.Stack())))
	}
}

func firstFrames(stack []byte) string {
	lines := strings.Split(string(stack), "\n")
	if len(lines) > 12 {
		lines = lines[:12]
	}
	return strings.Join(lines, " | ")
}

func resultError(ctx *C.sqlite3_context, err error) {
	C.ext_result_error_owned(ctx, C.CString(err.Error()))
}

// setResult hands a function's value to SQLite.
func setResult(ctx *C.sqlite3_context, name string, v driver.Value) {
	switch x := v.(type) {
	case nil:
		C.ext_result_null(ctx)
	case int64:
		C.ext_result_int64(ctx, C.sqlite3_int64(x))
	case float64:
		C.ext_result_double(ctx, C.double(x))
	case string:
		if len(x) > math.MaxInt32 {
			resultError(ctx, fmt.Errorf("%s: result of %d bytes is too long for SQLite", name, len(x)))
			return
		}
		C.ext_result_text_owned(ctx, C.CString(x), C.int(len(x)))
	case []byte:
		if len(x) > math.MaxInt32 {
			resultError(ctx, fmt.Errorf("%s: result of %d bytes is too long for SQLite", name, len(x)))
			return
		}
		C.ext_result_blob_owned(ctx, C.CBytes(x), C.int(len(x)))
	default:
		resultError(ctx, fmt.Errorf("%s: internal error: result of type %T", name, v))
	}
}

// boxArgs converts SQL arguments as the binary's driver does.
func boxArgs(argc C.int, argv **C.sqlite3_value) []driver.Value {
	args := make([]driver.Value, int(argc))
	for i := range args {
		j := C.int(i)
		switch C.ext_arg_type(argv, j) {
		case C.SQLITE_INTEGER:
			args[i] = int64(C.ext_arg_int64(argv, j))
		case C.SQLITE_FLOAT:
			args[i] = float64(C.ext_arg_double(argv, j))
		case C.SQLITE_TEXT:
			var n C.int
			p := C.ext_arg_text(argv, j, &n)
			args[i] = C.GoStringN(p, n)
		case C.SQLITE_BLOB:
			var n C.int
			p := C.ext_arg_blob(argv, j, &n)
			args[i] = C.GoBytes(p, n)
		default:
			args[i] = nil
		}
	}
	return args
}

//export trendsqlGoScalar
func trendsqlGoScalar(ctx *C.sqlite3_context, index C.int, argc C.int, argv **C.sqlite3_value) {
	f := functionAt(index)
	defer recoverResult(ctx, f.Doc.Name)
	v, err := f.Call(boxArgs(argc, argv))
	if err != nil {
		resultError(ctx, err)
		return
	}
	setResult(ctx, f.Doc.Name, v)
}

// trendsqlGoAggResult replays the rows logged since the last call into the
// group's state and sets the aggregate's value; final also closes a group
// that has no log (no row was ever stepped). ext.c empties the log and, on
// final, releases the group afterwards.
//
//export trendsqlGoAggResult
func trendsqlGoAggResult(ctx *C.sqlite3_context, index C.int, a *C.ext_agg, final, yield C.int) {
	if yield != 0 {
		// See yield_due in ext.c.
		runtime.Gosched()
	}
	f := functionAt(index)
	defer recoverResult(ctx, f.Doc.Name)
	var g *sqlfuncs.HostGroup
	if a != nil && a.group != 0 {
		g = cgo.Handle(a.group).Value().(*sqlfuncs.HostGroup)
	} else {
		var err error
		if g, err = f.NewGroup(); err != nil {
			resultError(ctx, err)
			return
		}
		if a != nil {
			a.group = C.uintptr_t(cgo.NewHandle(g))
		} else {
			defer g.Close()
		}
	}
	if a != nil {
		if err := replay(g, f.Numbers, a); err != nil {
			resultError(ctx, err)
			return
		}
	}
	v, err := g.Value()
	if err != nil {
		resultError(ctx, err)
		return
	}
	setResult(ctx, f.Doc.Name, v)
}

//export trendsqlGoAggRelease
func trendsqlGoAggRelease(group C.uintptr_t) {
	defer func() { _ = recover() }()
	h := cgo.Handle(group)
	if g, ok := h.Value().(*sqlfuncs.HostGroup); ok {
		g.Close()
	}
	h.Delete()
}

// replay hands the logged rows to the group in the order SQLite delivered
// them; the first error stops it. A run of rows of plain numbers reaches the
// group in one call, its columns copied by C straight into the group's
// buffers; a row logged as values is copied, decoded and boxed as the driver boxes
// it. Every block read is freed.
func replay(g *sqlfuncs.HostGroup, k int, a *C.ext_agg) error {
	bufs := replayPool.Get().(*replayBuffers)
	defer replayPool.Put(bufs)
	for {
		var n C.int
		switch kind := C.ext_log_next(a, C.int(k), &n); kind {
		case 0:
			return nil
		case C.EXT_STEP_NUMBERS:
			err := g.StepColumns(int(n), func(cols [3][]float64) {
				var d [3]*C.double
				for j := range min(k, 3) {
					d[j] = (*C.double)(&cols[j][0])
				}
				C.ext_log_take_columns(a, C.int(k), d[0], d[1], d[2])
			})
			if err != nil {
				return err
			}
		case C.EXT_INVERSE_NUMBERS:
			if cap(bufs.nums) < k {
				bufs.nums = make([]float64, k)
			}
			nums := bufs.nums[:k]
			C.ext_log_take_numbers(a, C.int(k), (*C.double)(&nums[0]))
			if err := g.InverseNumbers(nums); err != nil {
				return err
			}
		case C.EXT_STEP_VALUES, C.EXT_INVERSE_VALUES:
			need := max(int(n), 1)
			if cap(bufs.block) < need {
				bufs.block = make([]byte, need)
			}
			data := bufs.block[:int(n)]
			C.ext_log_take_body(a, (*C.uchar)(&bufs.block[0]))
			argc := int(binary.NativeEndian.Uint32(data))
			off := 4
			bufs.args = bufs.args[:0]
			for j := 0; j < argc; j++ {
				var v driver.Value
				v, off = decodeValue(data, off)
				bufs.args = append(bufs.args, v)
			}
			var err error
			if kind == C.EXT_STEP_VALUES {
				err = g.Step(bufs.args)
			} else {
				err = g.Inverse(bufs.args)
			}
			clear(bufs.args)
			if err != nil {
				return err
			}
		default:
			return fmt.Errorf("internal error: unknown row record %d", int(kind))
		}
	}
}

// replayBuffers are the reusable buffers of replay.
type replayBuffers struct {
	block []byte
	nums  []float64
	args  []driver.Value
}

var replayPool = sync.Pool{New: func() any { return new(replayBuffers) }}

// decodeValue reads one logged value (see ext.h) starting at off.
func decodeValue(data []byte, off int) (driver.Value, int) {
	t := data[off]
	off++
	switch t {
	case C.SQLITE_INTEGER:
		return int64(binary.NativeEndian.Uint64(data[off:])), off + 8
	case C.SQLITE_FLOAT:
		return math.Float64frombits(binary.NativeEndian.Uint64(data[off:])), off + 8
	case C.SQLITE_TEXT, C.SQLITE_BLOB:
		n := int(binary.NativeEndian.Uint32(data[off:]))
		off += 4
		if t == C.SQLITE_TEXT {
			return string(data[off : off+n]), off + n
		}
		return append([]byte{}, data[off:off+n]...), off + n
	default:
		return nil, off
	}
}

// tableRows is what a table-valued function's cursor holds.
type tableRows struct {
	name string
	rows [][]driver.Value
}

//export trendsqlGoTableFilter
func trendsqlGoTableFilter(index C.int, given C.int, argc C.int, argv **C.sqlite3_value, rows *C.uintptr_t, nrows *C.int) (msg *C.char) {
	f := functionAt(index)
	defer func() {
		if r := recover(); r != nil {
			msg = C.CString(fmt.Sprintf("%s: internal error: %v (please report; stack: %s)", f.Doc.Name, r, firstFrames(debug.Stack())))
		}
	}()
	out, err := f.TableRows(int(given), boxArgs(argc, argv))
	if err != nil {
		return C.CString(err.Error())
	}
	*rows = C.uintptr_t(cgo.NewHandle(&tableRows{name: f.Doc.Name, rows: out}))
	*nrows = C.int(len(out))
	return nil
}

//export trendsqlGoTableColumn
func trendsqlGoTableColumn(ctx *C.sqlite3_context, rows C.uintptr_t, row C.int, col C.int) {
	defer recoverResult(ctx, "table-valued function")
	t := cgo.Handle(rows).Value().(*tableRows)
	setResult(ctx, t.name, t.rows[int(row)][int(col)])
}

//export trendsqlGoTableRelease
func trendsqlGoTableRelease(rows C.uintptr_t) {
	defer func() { _ = recover() }()
	cgo.Handle(rows).Delete()
}
