package csvimport

import (
	"math"
	"sort"
)

// timeSet remembers the times of one series seen so far in an import file,
// with the line each came from, to find duplicates within the file.
//
// While the times arrive in one direction (ascending, or descending as in
// newest-first exports) they are kept as runs of equally spaced times on
// equally spaced lines, so a regular series costs a few bytes per gap
// instead of per row; a lookup is a binary search over the runs. When a
// new time arrives against the direction, the set moves into a map.
type timeSet struct {
	runs  []timeRun
	dir   int // +1 ascending, -1 descending, 0 not yet known
	last  int64
	lastL int64
	n     int
	m     map[int64]int32
}

// timeRun holds the times t0 + k*dt from lines l0 + k*dl, k = 0..n-1.
type timeRun struct {
	t0, dt, l0, dl, n int64
}

func (r *timeRun) find(t int64) (line int64, ok bool) {
	if r.n == 1 || r.dt == 0 {
		if t == r.t0 {
			return r.l0, true
		}
		return 0, false
	}
	d := t - r.t0
	if d%r.dt != 0 {
		return 0, false
	}
	k := d / r.dt
	if k < 0 || k >= r.n {
		return 0, false
	}
	return r.l0 + k*r.dl, true
}

// add records t from line and returns the line of an earlier equal time,
// or 0 if t is new (then it is recorded).
func (s *timeSet) add(t int64, line int) int {
	l := int64(line)
	if s.m == nil && (t > maxRunTime || t < -maxRunTime) {
		s.toMap() // keep the run arithmetic far from overflow
	}
	if s.m != nil {
		if prev, ok := s.m[t]; ok {
			return int(prev)
		}
		s.m[t] = clampLine(l)
		s.n++
		return 0
	}
	if s.n == 0 {
		s.runs = append(s.runs, timeRun{t0: t, l0: l, n: 1})
		s.last, s.lastL, s.n = t, l, 1
		return 0
	}
	if t == s.last {
		return int(s.lastL)
	}
	d := 1
	if t < s.last {
		d = -1
	}
	if s.dir == 0 {
		s.dir = d
	}
	if d == s.dir {
		r := &s.runs[len(s.runs)-1]
		switch {
		case r.n == 1:
			r.dt, r.dl, r.n = t-r.t0, l-r.l0, 2
		case t-s.last == r.dt && l-s.lastL == r.dl:
			r.n++
		default:
			s.runs = append(s.runs, timeRun{t0: t, l0: l, n: 1})
		}
		s.last, s.lastL = t, l
		s.n++
		return 0
	}
	if prev, ok := s.lookup(t); ok {
		return int(prev)
	}
	// Out of order and new: switch to a map.
	s.toMap()
	s.m[t] = clampLine(l)
	s.n++
	return 0
}

// maxRunTime bounds the times kept in runs (about 73 billion years).
const maxRunTime = 1 << 61

func (s *timeSet) toMap() {
	s.m = make(map[int64]int32, s.n+1)
	for _, r := range s.runs {
		for k := int64(0); k < r.n; k++ {
			s.m[r.t0+k*r.dt] = clampLine(r.l0 + k*r.dl)
		}
	}
	s.runs = nil
}

// lookup searches the runs, which are ordered by t0 in direction dir.
func (s *timeSet) lookup(t int64) (int64, bool) {
	// i = number of runs whose start is not past t in the direction.
	i := sort.Search(len(s.runs), func(i int) bool {
		if s.dir >= 0 {
			return s.runs[i].t0 > t
		}
		return s.runs[i].t0 < t
	})
	if i == 0 {
		return 0, false
	}
	return s.runs[i-1].find(t)
}

func clampLine(l int64) int32 {
	if l > math.MaxInt32 {
		return math.MaxInt32
	}
	return int32(l)
}
