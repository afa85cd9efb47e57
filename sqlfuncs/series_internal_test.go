package sqlfuncs

import (
	"runtime"
	"testing"
)

// TestFloatFreeList: finished groups' buffers come back to the next group
// (even across a garbage collection, which a sync.Pool would not survive),
// the list never holds more than floatFreeMax float64s, and a buffer above
// half of that is left to the collector.
func TestFloatFreeList(t *testing.T) {
	// Empty the list first (other tests in the package use it).
	for getFloats() != nil {
	}
	a := make([]float64, 100, 1000)
	putFloats(a)
	runtime.GC()
	runtime.GC()
	b := getFloats()
	if cap(b) != 1000 || len(b) != 0 || &b[:1][0] != &a[0] {
		t.Fatalf("got cap %d len %d, want the same buffer back emptied", cap(b), len(b))
	}
	if getFloats() != nil {
		t.Fatal("list should be empty")
	}
	putFloats(make([]float64, 0, floatFreeMax/2+1))
	if getFloats() != nil {
		t.Fatal("an oversize buffer was kept")
	}
	for i := 0; i < 10; i++ {
		putFloats(make([]float64, 0, floatFreeMax/4))
		floatFree.Lock()
		total, n := floatFree.total, len(floatFree.bufs)
		floatFree.Unlock()
		if total > floatFreeMax || n > 4 {
			t.Fatalf("after %d puts: %d float64s in %d buffers, cap %d", i+1, total, n, floatFreeMax)
		}
	}
	for getFloats() != nil {
	}
	floatFree.Lock()
	defer floatFree.Unlock()
	if floatFree.total != 0 {
		t.Fatalf("total %d after emptying", floatFree.total)
	}
}
