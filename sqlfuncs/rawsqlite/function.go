package rawsqlite

import (
	"database/sql/driver"
	"fmt"
	"math"
	"sync"
	"sync/atomic"
	"unsafe"

	"modernc.org/libc"
	sqlite3 "modernc.org/sqlite/lib"
)

// Function is a window aggregate served at the C level. SQLite calls Step
// for each row entering a group or window frame, Inverse for each row
// leaving a frame, Value for the current value of a frame and Final for the
// group's last value (after which the group's state must be released). The
// callbacks report errors and results through the Context; a panic in one
// becomes the SQL error "<Name>: internal error: <panic value>".
type Function struct {
	Name             string
	MinArgs, MaxArgs int // registered once for each argument count in this range
	Step, Inverse    func(c Context, args Args)
	Value, Final     func(c Context)
}

// functions holds every Function registered so far, in registration order;
// a registration's user-data pointer is its index + 1. The slice is
// replaced, never changed in place, so callbacks read it without a lock.
var functions struct {
	sync.Mutex
	list  atomic.Pointer[[]registered]
	index map[*Function]int
}

type registered struct {
	fn    *Function
	zName uintptr // the name as a C string, kept for the process
}

// functionID returns f's index in functions, adding it on first use.
func functionID(f *Function) (int, error) {
	functions.Lock()
	defer functions.Unlock()
	if id, ok := functions.index[f]; ok {
		return id, nil
	}
	if f.Step == nil || f.Inverse == nil || f.Value == nil || f.Final == nil {
		return 0, fmt.Errorf("rawsqlite: function %s lacks a callback", f.Name)
	}
	z, err := libc.CString(f.Name)
	if err != nil {
		return 0, err
	}
	var list []registered
	if p := functions.list.Load(); p != nil {
		list = *p
	}
	list = append(list[:len(list):len(list)], registered{fn: f, zName: z})
	functions.list.Store(&list)
	if functions.index == nil {
		functions.index = map[*Function]int{}
	}
	functions.index[f] = len(list) - 1
	return len(list) - 1, nil
}

// CreateFunction registers f on the connection for each argument count
// from f.MinArgs to f.MaxArgs (sqlite3_create_window_function, UTF-8,
// deterministic). It replaces a function of the same name and argument
// count registered through the driver's public API on this connection;
// other argument counts keep their registrations.
func (c Conn) CreateFunction(f *Function) error {
	id, err := functionID(f)
	if err != nil {
		return err
	}
	z := (*functions.list.Load())[id].zName
	for n := f.MinArgs; n <= f.MaxArgs; n++ {
		rc := sqlite3.Xsqlite3_create_window_function(c.tls, c.db, z, int32(n),
			sqlite3.SQLITE_UTF8|sqlite3.SQLITE_DETERMINISTIC, uintptr(id+1),
			cFunc(xStep), cFunc(xFinal), cFunc(xValue), cFunc(xInverse), 0)
		if rc != sqlite3.SQLITE_OK {
			return fmt.Errorf("sqlite3_create_window_function(%s, %d) returned %d", f.Name, n, rc)
		}
	}
	return nil
}

// Context is the sqlite3_context of one callback.
type Context struct {
	tls *libc.TLS
	ctx uintptr
	fn  *Function
}

// contextOf finds the Function a callback serves.
func contextOf(tls *libc.TLS, ctx uintptr) Context {
	c := Context{tls: tls, ctx: ctx}
	i := int(sqlite3.Xsqlite3_user_data(tls, ctx)) - 1
	if p := functions.list.Load(); p != nil && i >= 0 && i < len(*p) {
		c.fn = (*p)[i].fn
	}
	return c
}

// Name is the SQL name of the function being called.
func (c Context) Name() string {
	if c.fn == nil {
		return "aggregate"
	}
	return c.fn.Name
}

// recoverPanic turns a panic of a callback into an SQL error.
func (c Context) recoverPanic() {
	if r := recover(); r != nil {
		c.Error(fmt.Errorf("%s: internal error: %v", c.Name(), r))
	}
}

func xStep(tls *libc.TLS, ctx uintptr, argc int32, argv uintptr) {
	c := contextOf(tls, ctx)
	defer c.recoverPanic()
	c.fn.Step(c, Args{tls: tls, argv: argv, n: int(argc)})
}

func xInverse(tls *libc.TLS, ctx uintptr, argc int32, argv uintptr) {
	c := contextOf(tls, ctx)
	defer c.recoverPanic()
	c.fn.Inverse(c, Args{tls: tls, argv: argv, n: int(argc)})
}

func xValue(tls *libc.TLS, ctx uintptr) {
	c := contextOf(tls, ctx)
	defer c.recoverPanic()
	c.fn.Value(c)
}

func xFinal(tls *libc.TLS, ctx uintptr) {
	c := contextOf(tls, ctx)
	defer c.recoverPanic()
	c.fn.Final(c)
}

// Error makes err the call's SQL error (SQLite copies the text).
func (c Context) Error(err error) {
	msg, cerr := libc.CString(err.Error())
	if cerr != nil {
		sqlite3.Xsqlite3_result_error_nomem(c.tls, c.ctx)
		return
	}
	sqlite3.Xsqlite3_result_error(c.tls, c.ctx, msg, -1)
	libc.Xfree(c.tls, msg)
}

// NoMemory reports an out-of-memory error.
func (c Context) NoMemory() { sqlite3.Xsqlite3_result_error_nomem(c.tls, c.ctx) }

// Result sets the call's result from a Go value of the driver's kinds: nil
// (NULL), int64, float64, string (TEXT) or []byte (BLOB). Any other type is
// an internal error naming the function.
func (c Context) Result(v driver.Value) {
	switch x := v.(type) {
	case nil:
		sqlite3.Xsqlite3_result_null(c.tls, c.ctx)
	case float64:
		sqlite3.Xsqlite3_result_double(c.tls, c.ctx, x)
	case int64:
		sqlite3.Xsqlite3_result_int64(c.tls, c.ctx, x)
	case string:
		c.resultBytes(x, sqlite3.SQLITE_TEXT)
	case []byte:
		c.resultBytes(string(x), sqlite3.SQLITE_BLOB)
	default:
		c.Error(fmt.Errorf("%s: internal error: result of type %T", c.Name(), v))
	}
}

// resultBytes sets a TEXT or BLOB result; SQLite copies the bytes
// (SQLITE_TRANSIENT) from a C buffer freed right after.
func (c Context) resultBytes(s string, kind int32) {
	if len(s) > math.MaxInt32 {
		sqlite3.Xsqlite3_result_error_toobig(c.tls, c.ctx)
		return
	}
	if kind == sqlite3.SQLITE_BLOB && len(s) == 0 {
		sqlite3.Xsqlite3_result_zeroblob(c.tls, c.ctx, 0)
		return
	}
	p := libc.Xmalloc(c.tls, libc.Tsize_t(len(s)+1))
	if p == 0 {
		sqlite3.Xsqlite3_result_error_nomem(c.tls, c.ctx)
		return
	}
	copy(cBytes(p, len(s)+1), s)
	*cMemory[byte](p + uintptr(len(s))) = 0
	if kind == sqlite3.SQLITE_TEXT {
		sqlite3.Xsqlite3_result_text(c.tls, c.ctx, p, int32(len(s)), sqlite3.SQLITE_TRANSIENT)
	} else {
		sqlite3.Xsqlite3_result_blob(c.tls, c.ctx, p, int32(len(s)), sqlite3.SQLITE_TRANSIENT)
	}
	libc.Xfree(c.tls, p)
}

// Args are the arguments of one Step or Inverse call.
type Args struct {
	tls  *libc.TLS
	argv uintptr
	n    int
}

// Len is the number of arguments.
func (a Args) Len() int { return a.n }

// At returns argument i (0-based, i < Len()).
func (a Args) At(i int) Value {
	if i < 0 || i >= a.n {
		panic(fmt.Sprintf("rawsqlite: argument %d of %d", i, a.n))
	}
	return Value{tls: a.tls, v: *cMemory[uintptr](a.argv + uintptr(i)*unsafe.Sizeof(uintptr(0)))}
}

// Boxed returns the arguments converted as the driver's public API converts
// them (Value.Boxed), for the rows an adapter hands to the public code.
func (a Args) Boxed() []driver.Value {
	out := make([]driver.Value, a.n)
	for i := range out {
		out[i] = a.At(i).Boxed()
	}
	return out
}

// Type is the storage class of a Value.
type Type int32

const (
	Integer Type = sqlite3.SQLITE_INTEGER
	Float   Type = sqlite3.SQLITE_FLOAT
	Text    Type = sqlite3.SQLITE_TEXT
	Blob    Type = sqlite3.SQLITE_BLOB
	Null    Type = sqlite3.SQLITE_NULL
)

// Value is one argument (an sqlite3_value*).
type Value struct {
	tls *libc.TLS
	v   uintptr
}

// Type returns the value's storage class.
func (v Value) Type() Type { return Type(sqlite3.Xsqlite3_value_type(v.tls, v.v)) }

// Int64 returns the value as an integer (sqlite3_value_int64).
func (v Value) Int64() int64 { return sqlite3.Xsqlite3_value_int64(v.tls, v.v) }

// Float64 returns the value as a double (sqlite3_value_double).
func (v Value) Float64() float64 { return sqlite3.Xsqlite3_value_double(v.tls, v.v) }

// Text returns the value's UTF-8 text in SQLite's memory (nil when empty).
// The bytes are valid only during the callback and must not be modified or
// kept; string(v.Text()) == s compares without allocating.
func (v Value) Text() []byte {
	p := sqlite3.Xsqlite3_value_text(v.tls, v.v)
	return cBytes(p, int(sqlite3.Xsqlite3_value_bytes(v.tls, v.v)))
}

// Boxed converts the value as the driver's public API does: int64, float64,
// string, []byte (a copy) or nil.
func (v Value) Boxed() driver.Value {
	switch v.Type() {
	case Integer:
		return v.Int64()
	case Float:
		return v.Float64()
	case Text:
		return libc.GoString(sqlite3.Xsqlite3_value_text(v.tls, v.v))
	case Blob:
		p := sqlite3.Xsqlite3_value_blob(v.tls, v.v)
		n := sqlite3.Xsqlite3_value_bytes(v.tls, v.v)
		b := make([]byte, n)
		copy(b, cBytes(p, int(n)))
		return b
	default:
		return nil
	}
}
