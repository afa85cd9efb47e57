package csvimport

import (
	"math/rand/v2"
	"testing"
)

// TestTimeSetAgainstMap feeds timeSet sequences of several shapes and
// compares every answer with a plain map from time to first line.
func TestTimeSetAgainstMap(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	shapes := map[string]func(i int) int64{
		"ascending regular":   func(i int) int64 { return 1_600_000_000 + int64(i)*3600 },
		"descending regular":  func(i int) int64 { return 1_700_000_000 - int64(i)*900 },
		"ascending gaps":      func(i int) int64 { return int64(i)*60 + int64(i/50)*86400 },
		"irregular ascending": nil, // filled below
		"random small range":  func(int) int64 { return rng.Int64N(400) * 60 },
		"repeats then new":    func(i int) int64 { return int64(i%300) * 10 },
		"descending then up":  func(i int) int64 { return int64(impAbs(i-500)) * 7 },
		"huge values":         func(i int) int64 { return (1 << 62) - int64(i%50)*3 },
	}
	var acc int64
	shapes["irregular ascending"] = func(int) int64 { acc += 1 + rng.Int64N(5000); return acc }
	for name, gen := range shapes {
		var s timeSet
		ref := map[int64]int{}
		line := 2
		for i := 0; i < 1000; i++ {
			tm := gen(i)
			line += 1 + int(rng.Int64N(3)) // lines of other series in between
			got := s.add(tm, line)
			want, seen := ref[tm]
			if !seen {
				ref[tm] = line
			}
			if got != want {
				t.Fatalf("%s: step %d: add(%d, line %d) = %d, want %d", name, i, tm, line, got, want)
			}
		}
		if s.n != len(ref) {
			t.Errorf("%s: %d times kept, want %d", name, s.n, len(ref))
		}
	}
}

// A regular series is kept in one run whatever its length.
func TestTimeSetRegularIsCompact(t *testing.T) {
	var s timeSet
	for i := 0; i < 100000; i++ {
		if d := s.add(int64(i)*3600, 2+i*3); d != 0 {
			t.Fatalf("step %d: false duplicate of line %d", i, d)
		}
	}
	if len(s.runs) != 1 || s.m != nil {
		t.Errorf("%d runs, map %v; want 1 run", len(s.runs), s.m != nil)
	}
	if d := s.add(3600*500, 999999); d != 2+500*3 {
		t.Errorf("duplicate found on line %d, want %d", d, 2+500*3)
	}
}

func impAbs(i int) int {
	if i < 0 {
		return -i
	}
	return i
}
