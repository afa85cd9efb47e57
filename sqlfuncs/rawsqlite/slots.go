package rawsqlite

import (
	"errors"
	"sync"
	"unsafe"

	sqlite3 "modernc.org/sqlite/lib"
)

// Slots keeps the Go state objects of the open groups of C-level
// aggregates alive while SQLite holds only a small slot in each group's
// sqlite3_aggregate_context memory: the object's index in the table and
// its address. The table's reference keeps the object alive (Go's collector
// does not move heap objects), so Get reads the address without taking the
// table's lock; the lock is taken only when a group's object is created or
// released. The zero value is ready to use.
type Slots[T any] struct {
	mu   sync.Mutex
	objs []*T
	free []int32
}

// slot is what sqlite3_aggregate_context holds: index+1 in the table
// (0 = no state yet) and the address of the object. It contains no Go
// pointer, so memory SQLite allocated may hold it.
type slot struct {
	id  int32
	obj uintptr
}

// Get returns the group's object. When the group has none yet and create
// is set, it makes one with mk; when create is not set it returns nil and
// no error. It fails only when SQLite cannot allocate the slot or mk fails.
func (s *Slots[T]) Get(c Context, create bool, mk func() (*T, error)) (*T, error) {
	n := int32(0)
	if create {
		n = int32(unsafe.Sizeof(slot{}))
	}
	p := sqlite3.Xsqlite3_aggregate_context(c.tls, c.ctx, n)
	if p == 0 {
		if create {
			return nil, errors.New(c.Name() + ": out of memory for the aggregate state")
		}
		return nil, nil
	}
	sl := cMemory[slot](p)
	if sl.id > 0 {
		return cMemory[T](sl.obj), nil
	}
	if !create {
		return nil, nil
	}
	obj, err := mk()
	if err != nil {
		return nil, err
	}
	s.mu.Lock()
	if k := len(s.free); k > 0 {
		sl.id = s.free[k-1] + 1
		s.free = s.free[:k-1]
		s.objs[sl.id-1] = obj
	} else {
		s.objs = append(s.objs, obj)
		sl.id = int32(len(s.objs))
	}
	s.mu.Unlock()
	sl.obj = uintptr(unsafe.Pointer(obj))
	return obj, nil
}

// Release drops the group's object (after its final value); SQLite frees
// the slot itself.
func (s *Slots[T]) Release(c Context) {
	p := sqlite3.Xsqlite3_aggregate_context(c.tls, c.ctx, 0)
	if p == 0 {
		return
	}
	sl := cMemory[slot](p)
	if sl.id == 0 {
		return
	}
	s.mu.Lock()
	s.objs[sl.id-1] = nil
	s.free = append(s.free, sl.id-1)
	s.mu.Unlock()
	sl.id, sl.obj = 0, 0
}

// Live counts the objects still held (for tests that check nothing leaks).
func (s *Slots[T]) Live() int {
	s.mu.Lock()
	defer s.mu.Unlock()
	n := 0
	for _, o := range s.objs {
		if o != nil {
			n++
		}
	}
	return n
}
