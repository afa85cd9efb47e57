package sqlfuncs

// Zero-allocation Step path for trendsql_qualifier_counts (qualcount.go), on
// the connection hook of fastpath.go with its version pin, checks and
// fallback. Most readings carry no qualifier, and the rest repeat a few
// codes, so Step reads the TEXT in place and compares it with the group's
// known qualifiers; only a qualifier new to the group is copied. The state
// is qualcount.go's qualCounts, kept in liveQuals; sqlite3_aggregate_context
// holds its index (an integer, no Go pointer). Values that are not TEXT or
// NULL, and window removal, go through qualCounts' public methods.

import (
	"fmt"
	"sync"
	"unsafe"

	"modernc.org/libc"
	sqlite3 "modernc.org/sqlite/lib"
)

// liveQuals keeps the groups' states alive.
var liveQuals liveTable[qualCounts]

var fastQualName struct {
	sync.Once
	z   uintptr
	err error
}

func installFastQualifiers(h connHandle) error {
	fastQualName.Do(func() { fastQualName.z, fastQualName.err = libc.CString(QualifierCountsFunction) })
	if fastQualName.err != nil {
		return fastQualName.err
	}
	rc := sqlite3.Xsqlite3_create_window_function(h.tls, h.db, fastQualName.z, 1,
		sqlite3.SQLITE_UTF8|sqlite3.SQLITE_DETERMINISTIC, 0,
		cFunc(fastQualStep), cFunc(fastQualFinal), cFunc(fastQualValue), cFunc(fastQualInverse), 0)
	if rc != sqlite3.SQLITE_OK {
		return fmt.Errorf("sqlite3_create_window_function(%s) returned %d", QualifierCountsFunction, rc)
	}
	return nil
}

func newQualCounts() (*qualCounts, error) { return &qualCounts{}, nil }

func fastQualRecover(tls *libc.TLS, ctx uintptr) {
	if r := recover(); r != nil {
		fastError(tls, ctx, fmt.Errorf("%s: internal error: %v", QualifierCountsFunction, r))
	}
}

func fastQualRow(tls *libc.TLS, ctx uintptr, argc int32, argv uintptr, delta int64) {
	defer fastQualRecover(tls, ctx)
	if argc != 1 {
		fastError(tls, ctx, fmt.Errorf("%s: wrong number of arguments (%d); usage: %s(q)", QualifierCountsFunction, argc, QualifierCountsFunction))
		return
	}
	v := at[[1]uintptr](argv)[0]
	typ := sqlite3.Xsqlite3_value_type(tls, v)
	if typ == sqlite3.SQLITE_NULL {
		return
	}
	q, _, err := liveQuals.state(tls, ctx, true, newQualCounts)
	if err != nil {
		fastError(tls, ctx, err)
		return
	}
	if typ != sqlite3.SQLITE_TEXT {
		q.addValue(fastBoxed(tls, v), delta)
		return
	}
	p := sqlite3.Xsqlite3_value_text(tls, v)
	n := int(sqlite3.Xsqlite3_value_bytes(tls, v))
	if n == 0 || p == 0 {
		return
	}
	q.addBytes(unsafe.Slice(at[byte](p), n), delta)
}

func fastQualStep(tls *libc.TLS, ctx uintptr, argc int32, argv uintptr) {
	fastQualRow(tls, ctx, argc, argv, 1)
}

func fastQualInverse(tls *libc.TLS, ctx uintptr, argc int32, argv uintptr) {
	fastQualRow(tls, ctx, argc, argv, -1)
}

func fastQualResult(tls *libc.TLS, ctx uintptr, final bool) {
	defer fastQualRecover(tls, ctx)
	q, slot, err := liveQuals.state(tls, ctx, false, newQualCounts)
	if final {
		defer liveQuals.release(slot)
	}
	if err != nil {
		fastError(tls, ctx, err)
		return
	}
	if q == nil {
		sqlite3.Xsqlite3_result_null(tls, ctx)
		return
	}
	v, err := q.value()
	if err != nil {
		fastError(tls, ctx, err)
		return
	}
	fastResult(tls, ctx, QualifierCountsFunction, v)
}

func fastQualValue(tls *libc.TLS, ctx uintptr) { fastQualResult(tls, ctx, false) }
func fastQualFinal(tls *libc.TLS, ctx uintptr) { fastQualResult(tls, ctx, true) }
