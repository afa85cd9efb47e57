package stats

// Regular time grids for lag statistics.
//
// Lag statistics (sample ACVF/ACF, PACF, Ljung–Box, cross-correlation) need a
// sampling step: lag h means "h steps apart". Readings carry their own times,
// which may be irregular or have gaps, so they are first placed on a regular
// grid anchored at the first reading:
//
//	slot(t) = round((t − t₀) / step),  t₀ = the first (earliest) time
//
// Slots with no reading are missing values. Two rules reject readings that do
// not fit the grid, with an error that names the times and suggests a step:
//
//   - off grid: a reading whose distance from its slot centre t₀ + slot·step
//     exceeds tol·step (PlaceOnGrid uses tol = 1/2, the widest tolerance; a
//     reading exactly half-way between two slots is ambiguous and also
//     rejected). PlaceOnGridTol accepts a tighter tolerance.
//   - collision: two readings in the same slot.
//
// The step is either given by the caller or inferred by InferStep from the
// times of every row, including rows whose value is missing
// (RegularizeWithMissing).

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"trendsql/sqlfuncs/timefmt"
)

// Calendar steps recognised by InferStep.
const (
	// MonthStep is one twelfth of the 365.25-day year used throughout
	// (30.4375 d). Calendar-monthly readings lie within ±2 d of a grid with
	// this step anchored at the first reading.
	MonthStep = timefmt.SecondsPerYear / 12
	// QuarterStep is a quarter of the 365.25-day year (91.3125 d).
	QuarterStep = timefmt.SecondsPerYear / 4
	// YearStep is 365.25 d.
	YearStep = timefmt.SecondsPerYear
)

// MaxGridSlots bounds the grid size PlaceOnGrid will build: at most
// max(MaxGridSlots, 100·n) slots for n readings. A larger grid means the step
// is far smaller than the typical spacing and is reported as an error.
const MaxGridSlots = 1 << 22

// spacingClass maps a spacing (seconds) to the value it is counted as by
// InferStep: spacings of 28–31 days count as one calendar month (MonthStep),
// 89–92 days as one quarter (QuarterStep), 365–366 days as one year
// (YearStep), anything else is rounded to the nearest millisecond.
func spacingClass(d float64) float64 {
	const day = 86400.0
	switch {
	case d >= 28*day && d <= 31*day:
		return MonthStep
	case d >= 89*day && d <= 92*day:
		return QuarterStep
	case d >= 365*day && d <= 366*day:
		return YearStep
	}
	return math.Round(d*1000) / 1000
}

// InferStep returns the most common spacing between consecutive times of a
// sorted series t (seconds). Spacings are counted by class: 28–31 days count
// as one calendar month (MonthStep = 30.4375 d), 89–92 days as one quarter
// (QuarterStep = 91.3125 d), 365–366 days as one year
// (YearStep = 365.25 d), and all others are rounded to the nearest
// millisecond. When several classes are equally common the smallest spacing
// wins (tie-break). ok is false when t has fewer than two times or no
// positive spacing.
func InferStep(t []float64) (step float64, ok bool) {
	if len(t) < 2 {
		return 0, false
	}
	// Regular series repeat one spacing for long runs: count a run in
	// local variables and touch the map only when the spacing changes.
	counts := map[float64]int{}
	lastD, lastClass, run := math.NaN(), 0.0, 0
	for i := 1; i < len(t); i++ {
		d := t[i] - t[i-1]
		if !(d > 0) {
			continue
		}
		if d != lastD {
			if run > 0 {
				counts[lastClass] += run
			}
			lastD, lastClass, run = d, spacingClass(d), 0
		}
		run++
	}
	if run > 0 {
		counts[lastClass] += run
	}
	best, bestN := 0.0, 0
	for s, c := range counts {
		if s <= 0 {
			continue
		}
		if c > bestN || (c == bestN && s < best) {
			best, bestN = s, c
		}
	}
	if bestN == 0 {
		return 0, false
	}
	return best, true
}

// minSpacing returns the smallest positive spacing of a sorted series.
func minSpacing(t []float64) float64 {
	m := math.Inf(1)
	for i := 1; i < len(t); i++ {
		if d := t[i] - t[i-1]; d > 0 && d < m {
			m = d
		}
	}
	return m
}

// Grid is a series placed on a regular grid.
type Grid struct {
	Step    float64 // seconds between slots
	T0      float64 // time of slot 0 (the first reading)
	Slot    []int   // slot index of each reading, strictly increasing
	NSlots  int     // total number of slots: last slot + 1
	Missing int     // slots with no reading: NSlots − len(Slot)
}

// GridError explains why readings do not fit a grid. Its message names the
// offending time(s) in ISO 8601 UTC and suggests a step.
type GridError struct {
	Kind    string  // "off-grid", "collision", "too-many-slots", "bad-step" or "unsorted"
	Step    float64 // the step tried (seconds)
	T1, T2  float64 // offending times (T2 only for collisions)
	Offset  float64 // off grid: distance from the slot centre in steps
	Suggest float64 // a suggested step in seconds (0 if none)
	Common  float64 // the most common spacing (0 if unknown)
}

func fmtTime(t float64) string {
	s := timefmt.FormatUTC(int64(math.Floor(t)))
	if frac := t - math.Floor(t); frac != 0 {
		s = strings.TrimSuffix(s, "Z") + strings.TrimPrefix(fmt.Sprintf("%.3f", frac), "0") + "Z"
	}
	return s
}

func (e *GridError) suggestion() string {
	var parts []string
	if e.Suggest > 0 {
		parts = append(parts, fmt.Sprintf("try step=%s (slots with no reading count as missing)", FormatStep(e.Suggest)))
	}
	if e.Common > 0 && e.Common > e.Suggest && e.Kind != "too-many-slots" {
		hint := ""
		if e.Common == MonthStep {
			hint = ", e.g. one per calendar month timed at the 1st,"
		}
		use := "and use step=" + FormatStep(e.Common)
		if e.Common == e.Step {
			use = "which this step then fits"
		}
		parts = append(parts, fmt.Sprintf("or first aggregate the readings to one per %s (the most common spacing)%s %s", FormatStep(e.Common), hint, use))
	}
	if len(parts) == 0 {
		if e.Kind == "too-many-slots" {
			return "; no larger step shared by the readings fits them either: analyse shorter periods (e.g. WHERE t BETWEEN …) or readings aggregated to a coarser step"
		}
		return ""
	}
	if len(parts) == 1 && e.Suggest == 0 {
		parts[0] = strings.TrimPrefix(parts[0], "or ")
	}
	return "; " + strings.Join(parts, ", ")
}

func (e *GridError) Error() string { return e.message(e.suggestion()) }

// Diagnosis is the error without its suggestions (which name the step=
// option of the SQL lag functions), for contexts without that option.
func (e *GridError) Diagnosis() string { return e.message("") }

func (e *GridError) message(suggestion string) string {
	st := FormatStep(e.Step)
	switch e.Kind {
	case "off-grid":
		return fmt.Sprintf("reading at %s is %.3g steps from the nearest slot of the %s grid anchored at the first reading (more than allowed)%s",
			fmtTime(e.T1), e.Offset, st, suggestion)
	case "collision":
		return fmt.Sprintf("readings at %s and %s fall in the same slot of the %s grid anchored at the first reading%s",
			fmtTime(e.T1), fmtTime(e.T2), st, suggestion)
	case "too-many-slots":
		return fmt.Sprintf("step %s would need more than %d grid slots between %s and %s%s",
			st, MaxGridSlots, fmtTime(e.T1), fmtTime(e.T2), suggestion)
	case "unsorted":
		return fmt.Sprintf("times must be strictly increasing (at %s)", fmtTime(e.T1))
	default:
		return fmt.Sprintf("step %v s is not a positive finite duration", e.Step)
	}
}

// PlaceOnGrid places the sorted, distinct times t on the grid
// slot = round((t − t[0]) / step) with the widest tolerance (a reading may
// lie anywhere strictly less than half a step from its slot centre). See
// PlaceOnGridTol.
func PlaceOnGrid(t []float64, step float64) (Grid, error) {
	return PlaceOnGridTol(t, step, 0.5)
}

// PlaceOnGridTol places the sorted, distinct times t on the grid
// slot = round((t − t[0]) / step). A reading whose distance from its slot
// centre is more than tol·step (tol in (0, 0.5]; the offset is measured in
// steps, with 1e-9 slack for rounding of the division), or exactly half a
// step (ambiguous), is an off-grid error; two readings in one slot are a
// collision error. Errors are *GridError values. An empty t gives an empty
// grid; one time gives one slot.
func PlaceOnGridTol(t []float64, step, tol float64) (Grid, error) {
	if !(step > 0) || math.IsInf(step, 0) {
		return Grid{}, &GridError{Kind: "bad-step", Step: step}
	}
	if !(tol > 0) || tol > 0.5 {
		tol = 0.5
	}
	g := Grid{Step: step}
	if len(t) == 0 {
		return g, nil
	}
	g.T0 = t[0]
	span := t[len(t)-1] - t[0]
	limit := MaxGridSlots
	if 100*len(t) > limit {
		limit = 100 * len(t)
	}
	if span/step >= float64(limit) {
		// Only a larger step that fits every reading is worth suggesting:
		// the step tried, or a smaller one, needs at least as many slots.
		common, _ := InferStep(t)
		if !(common > step) || !fitsGrid(t, common, tol) {
			common = 0
		}
		return Grid{}, &GridError{Kind: "too-many-slots", Step: step, T1: t[0], T2: t[len(t)-1], Suggest: common}
	}
	g.Slot = make([]int, len(t))
	suggest := func() (float64, float64) {
		common, _ := InferStep(t)
		return suggestStep(t, step, tol, common), common
	}
	prev := -1
	for i, ti := range t {
		if i > 0 && !(ti > t[i-1]) {
			return Grid{}, &GridError{Kind: "unsorted", Step: step, T1: ti}
		}
		u := (ti - g.T0) / step
		s := math.Round(u)
		off := math.Abs(u - s)
		if off > tol+1e-9 || off >= 0.5-1e-9 {
			sg, common := suggest()
			return Grid{}, &GridError{Kind: "off-grid", Step: step, T1: ti, Offset: off, Suggest: sg, Common: common}
		}
		k := int(s)
		if k == prev {
			sg, common := suggest()
			return Grid{}, &GridError{Kind: "collision", Step: step, T1: t[i-1], T2: ti, Suggest: sg, Common: common}
		}
		g.Slot[i] = k
		prev = k
	}
	g.NSlots = prev + 1
	g.Missing = g.NSlots - len(t)
	return g, nil
}

// suggestStep returns the largest step that places every time of t on a
// grid without error, among: the most common spacing, the smallest spacing,
// and step/k for k = 2..12; 0 if none does.
func suggestStep(t []float64, step, tol, common float64) float64 {
	cands := []float64{common, minSpacing(t)}
	for k := 2; k <= 12; k++ {
		cands = append(cands, step/float64(k))
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(cands)))
	for _, c := range cands {
		if !(c > 0) || c >= step || math.IsInf(c, 0) {
			continue
		}
		if fitsGrid(t, c, tol) {
			return c
		}
	}
	return 0
}

// fitsGrid reports whether every time of t fits the grid (no off-grid
// reading, no collision, not too many slots).
func fitsGrid(t []float64, step, tol float64) bool {
	limit := MaxGridSlots
	if 100*len(t) > limit {
		limit = 100 * len(t)
	}
	if (t[len(t)-1]-t[0])/step >= float64(limit) {
		return false
	}
	prev := -1
	for _, ti := range t {
		u := (ti - t[0]) / step
		s := math.Round(u)
		off := math.Abs(u - s)
		if off > tol+1e-9 || off >= 0.5-1e-9 || int(s) == prev {
			return false
		}
		prev = int(s)
	}
	return true
}

// Fill returns the gridded series: a slice of NSlots values with y[i] in
// slot Slot[i] and NaN (the missing marker) in every empty slot. y must have
// one value per reading.
func (g Grid) Fill(y []float64) []float64 {
	out := make([]float64, g.NSlots)
	for i := range out {
		out[i] = math.NaN()
	}
	for i, k := range g.Slot {
		out[k] = y[i]
	}
	return out
}

// SlotTime returns the grid time of slot k: T0 + k·Step.
func (g Grid) SlotTime(k int) float64 { return g.T0 + float64(k)*g.Step }

// Regularize places a sorted series (t, y) on a grid: with the given step
// when step > 0, else with InferStep(t). It returns the grid and the gridded
// values with NaN in empty slots. A single reading gives one slot and step 0
// when no step is given; no readings give an empty grid.
func Regularize(t, y []float64, step float64) (Grid, []float64, error) {
	if len(t) != len(y) {
		return Grid{}, nil, fmt.Errorf("grid: %d times but %d values", len(t), len(y))
	}
	if step <= 0 {
		if len(t) < 2 {
			g := Grid{Slot: make([]int, len(t)), NSlots: len(t)}
			if len(t) == 1 {
				g.T0 = t[0]
			}
			return g, append([]float64(nil), y...), nil
		}
		s, ok := InferStep(t)
		if !ok {
			return Grid{}, nil, &GridError{Kind: "unsorted", T1: t[1]}
		}
		step = s
	}
	g, err := PlaceOnGrid(t, step)
	if err != nil {
		return Grid{}, nil, err
	}
	return g, g.Fill(y), nil
}

// RegularizeWithMissing is Regularize for a series whose rows include
// explicit missing readings: missing holds the times of rows without a value
// (sorted ascending; times equal to a reading's are allowed). Every row marks
// a slot, so when the step is inferred it is InferStep over the times of all
// rows, present or missing: 1, NULL, 2, NULL, 3 at unit spacing has step 1
// and two missing slots, not step 2. The grid still runs from the first to
// the last present reading.
func RegularizeWithMissing(t, y, missing []float64, step float64) (Grid, []float64, error) {
	if step <= 0 && len(missing) > 0 {
		all := make([]float64, 0, len(t)+len(missing))
		i, j := 0, 0
		for i < len(t) || j < len(missing) {
			if j == len(missing) || (i < len(t) && t[i] <= missing[j]) {
				all = append(all, t[i])
				i++
			} else {
				all = append(all, missing[j])
				j++
			}
		}
		if s, ok := InferStep(all); ok {
			step = s
		}
	}
	return Regularize(t, y, step)
}

// FormatStep renders a step in seconds as a duration text that
// timefmt.ParseDuration reads back exactly, in natural units: the first of
// y, w (at most four decimals), d, h, min (at most six decimals) giving a
// value ≥ 1 (or a whole number of quarters of a year), else seconds. E.g.
// 1y, 0.25y, 30.4375d, 1w, 15.21875d (not 365.25h), 1.5h, 15min.
func FormatStep(sec float64) string {
	units := []struct {
		name  string
		v     float64
		scale float64 // 10^decimals allowed
	}{{"y", YearStep, 1e4}, {"w", 7 * 86400, 1e4}, {"d", 86400, 1e6}, {"h", 3600, 1e6}, {"min", 60, 1e6}}
	for _, u := range units {
		v := sec / u.v
		r := math.Round(v * u.scale)
		if math.Abs(v*u.scale-r) > 1e-6 {
			continue
		}
		if v >= 1 || (u.name == "y" && math.Abs(v*4-math.Round(v*4)) < 1e-9 && v > 0) {
			return strconv.FormatFloat(r/u.scale, 'f', -1, 64) + u.name
		}
	}
	return strconv.FormatFloat(sec, 'f', -1, 64) + "s"
}
