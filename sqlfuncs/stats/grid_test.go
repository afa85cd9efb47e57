package stats

import (
	"errors"
	"math"
	"strings"
	"testing"

	"trendsql/sqlfuncs/timefmt"
)

func TestInferStep(t *testing.T) {
	h := 3600.0
	cases := []struct {
		name string
		t    []float64
		want float64
		ok   bool
	}{
		{"empty", nil, 0, false},
		{"one", []float64{5}, 0, false},
		{"hourly with gap", []float64{0, h, 2 * h, 5 * h, 6 * h}, h, true},
		{"tie takes smaller", []float64{0, h, 2 * h, 4 * h, 6 * h}, h, true},
		{"tie takes smaller 2", []float64{0, 2 * h, 3 * h}, h, true},
		{"large offset", []float64{1.7e9, 1.7e9 + 900, 1.7e9 + 1800, 1.7e9 + 2700}, 900, true},
	}
	for _, c := range cases {
		got, ok := InferStep(c.t)
		if ok != c.ok || got != c.want {
			t.Errorf("%s: InferStep = %v, %v; want %v, %v", c.name, got, ok, c.want, c.ok)
		}
	}
	// Calendar months: 2021-01-01 .. 2022-01-01 (31, 28, 31, 30, ... days).
	months := []float64{1609459200, 1612137600, 1614556800, 1617235200, 1619827200, 1622505600, 1625097600, 1627776000, 1630454400, 1633046400, 1635724800, 1638316800, 1640995200}
	if got, ok := InferStep(months); !ok || got != MonthStep {
		t.Errorf("monthly: InferStep = %v, %v; want %v", got, ok, MonthStep)
	}
	g, err := PlaceOnGrid(months, MonthStep)
	if err != nil || g.NSlots != 13 || g.Missing != 0 {
		t.Errorf("monthly grid: %+v, %v", g, err)
	}
}

func TestPlaceOnGrid(t *testing.T) {
	h := 3600.0
	t0 := 1.7e9
	ts := []float64{t0, t0 + h + 60, t0 + 2*h - 30, t0 + 5*h, t0 + 6*h + 1}
	g, err := PlaceOnGrid(ts, h)
	if err != nil {
		t.Fatal(err)
	}
	wantSlots := []int{0, 1, 2, 5, 6}
	for i, k := range wantSlots {
		if g.Slot[i] != k {
			t.Fatalf("slots %v, want %v", g.Slot, wantSlots)
		}
	}
	if g.NSlots != 7 || g.Missing != 2 || g.T0 != t0 || g.Step != h {
		t.Fatalf("grid %+v", g)
	}
	y := g.Fill([]float64{1, 2, 3, 4, 5})
	if len(y) != 7 || y[0] != 1 || y[2] != 3 || !math.IsNaN(y[3]) || !math.IsNaN(y[4]) || y[6] != 5 {
		t.Fatalf("Fill = %v", y)
	}
	if g.SlotTime(5) != t0+5*h {
		t.Fatalf("SlotTime")
	}
}

func TestPlaceOnGridErrors(t *testing.T) {
	h := 3600.0
	t0 := 1.7e9
	// Exactly half-way: ambiguous.
	_, err := PlaceOnGrid([]float64{t0, t0 + h, t0 + 2.5*h}, h)
	var ge *GridError
	if !errors.As(err, &ge) || ge.Kind != "off-grid" || !strings.Contains(err.Error(), "2023-11-15T00:43:20Z") || !strings.Contains(err.Error(), "try step=30min") {
		t.Fatalf("half-way: %v", err)
	}
	// Collision: two readings rounding to one slot.
	_, err = PlaceOnGrid([]float64{t0, t0 + h, t0 + h + 600}, h)
	if !errors.As(err, &ge) || ge.Kind != "collision" || !strings.Contains(err.Error(), "try step=15min") {
		t.Fatalf("collision: %v", err)
	}
	// Tighter tolerance rejects a reading 20 min off an hourly slot.
	_, err = PlaceOnGridTol([]float64{t0, t0 + h, t0 + 2*h + 1200}, h, 0.25)
	if !errors.As(err, &ge) || ge.Kind != "off-grid" {
		t.Fatalf("tolerance: %v", err)
	}
	if _, err = PlaceOnGridTol([]float64{t0, t0 + h, t0 + 2*h + 1200}, h, 0.5); err != nil {
		t.Fatalf("within half a step: %v", err)
	}
	// Unsorted and bad step.
	if _, err = PlaceOnGrid([]float64{t0, t0 - h}, h); !errors.As(err, &ge) || ge.Kind != "unsorted" {
		t.Fatalf("unsorted: %v", err)
	}
	if _, err = PlaceOnGrid([]float64{t0}, 0); err == nil {
		t.Fatal("zero step accepted")
	}
	// Step far smaller than the span.
	if _, err = PlaceOnGrid([]float64{t0, t0 + 1e9}, 1); !errors.As(err, &ge) || ge.Kind != "too-many-slots" {
		t.Fatalf("too many slots: %v", err)
	}
}

func TestRegularize(t *testing.T) {
	g, y, err := Regularize([]float64{10}, []float64{3}, 0)
	if err != nil || g.NSlots != 1 || len(y) != 1 || y[0] != 3 {
		t.Fatalf("one reading: %+v %v %v", g, y, err)
	}
	g, y, err = Regularize([]float64{0, 60, 180}, []float64{1, 2, 3}, 0)
	if err != nil || g.Step != 60 || g.NSlots != 4 || g.Missing != 1 || !math.IsNaN(y[2]) {
		t.Fatalf("inferred: %+v %v %v", g, y, err)
	}
	g, y, err = Regularize(nil, nil, 0)
	if err != nil || g.NSlots != 0 || len(y) != 0 {
		t.Fatalf("empty: %+v %v %v", g, y, err)
	}
}

func TestFormatStep(t *testing.T) {
	for _, c := range []struct {
		s    float64
		want string
	}{{YearStep, "1y"}, {QuarterStep, "0.25y"}, {MonthStep, "30.4375d"}, {86400, "1d"}, {7 * 86400, "1w"}, {3600, "1h"}, {900, "15min"}, {90, "1.5min"}, {1, "1s"}, {0.5, "0.5s"}} {
		got := FormatStep(c.s)
		if got != c.want {
			t.Errorf("FormatStep(%v) = %q, want %q", c.s, got, c.want)
		}
		if back, err := timefmt.ParseDuration(got); err != nil || back != c.s {
			t.Errorf("ParseDuration(%q) = %v, %v; want %v", got, back, err, c.s)
		}
	}
}

// Rows with a missing value mark grid slots: 1, NULL, 2, NULL, 3 at unit
// spacing is a step of 1 with two missing slots (common practice: an
// explicit missing reading is a slot without a value).
func TestRegularizeWithMissingRows(t *testing.T) {
	g, x, err := RegularizeWithMissing([]float64{0, 2, 4}, []float64{1, 2, 3}, []float64{1, 3}, 0)
	if err != nil {
		t.Fatal(err)
	}
	if g.Step != 1 || g.NSlots != 5 || g.Missing != 2 || len(x) != 5 || x[0] != 1 || !math.IsNaN(x[1]) || x[4] != 3 {
		t.Fatalf("grid %+v values %v", g, x)
	}
	// Without the missing rows the readings alone say step 2.
	g, _, _ = RegularizeWithMissing([]float64{0, 2, 4}, []float64{1, 2, 3}, nil, 0)
	if g.Step != 2 {
		t.Fatalf("step %v without missing rows", g.Step)
	}
	// A given step wins; one reading with missing rows gets the rows' step.
	g, _, _ = RegularizeWithMissing([]float64{0, 2, 4}, []float64{1, 2, 3}, []float64{1, 3}, 2)
	if g.Step != 2 || g.NSlots != 3 {
		t.Fatalf("given step: %+v", g)
	}
	g, _, err = RegularizeWithMissing([]float64{10}, []float64{1}, []float64{0, 5, 15}, 0)
	if err != nil || g.Step != 5 || g.NSlots != 1 {
		t.Fatalf("one reading: %+v %v", g, err)
	}
}

// A grid error never proposes the step that has just failed.
func TestGridErrorNeverSuggestsFailedStep(t *testing.T) {
	const t0, h, d = 1600000000.0, 3600.0, 86400.0
	// Hourly readings with a gap longer than MaxGridSlots hours: the
	// inferred step (1h) needs too many slots, and no larger shared step
	// fits the readings.
	times := []float64{t0, t0 + h, t0 + 2*h, t0 + (MaxGridSlots+10)*h}
	_, _, err := Regularize(times, []float64{1, 2, 3, 4}, 0)
	var ge *GridError
	if !errors.As(err, &ge) || ge.Kind != "too-many-slots" {
		t.Fatalf("want too-many-slots, got %v", err)
	}
	if msg := err.Error(); strings.Contains(msg, "step=1h") || !strings.Contains(msg, "shorter periods") {
		t.Errorf("too many slots: %s", msg)
	}
	// A step far too small for daily readings: the daily step fits and is
	// suggested.
	daily := []float64{t0, t0 + d, t0 + 2*d, t0 + 3*d}
	if _, err := PlaceOnGrid(daily, 0.01); err == nil || !strings.Contains(err.Error(), "try step=1d") {
		t.Errorf("small step: %v", err)
	}
	// Two readings in one slot of the daily grid, which is also the most
	// common spacing: a smaller step is suggested, and aggregating keeps
	// the step that failed rather than proposing it again.
	coll := []float64{t0, t0 + d, t0 + 1.3*d, t0 + 2*d, t0 + 3*d, t0 + 4*d}
	_, err = PlaceOnGrid(coll, d)
	if !errors.As(err, &ge) || ge.Kind != "collision" {
		t.Fatalf("want collision, got %v", err)
	}
	msg := err.Error()
	if strings.Contains(msg, "step=1d") || !strings.Contains(msg, "try step=12h") || !strings.Contains(msg, "which this step then fits") {
		t.Errorf("collision: %s", msg)
	}
}
