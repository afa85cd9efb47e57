package stats

import (
	"math"
	"math/rand/v2"
	"runtime"
	"testing"
)

// TestLongSeriesHeapBound checks the bound RELIABILITY.md documents under
// "Known limits" (memory for one long series): on a series longer than
// 2^18 points (the long-series settings of the Sen selection), the Go heap
// allocated by each rank test, in the calls the SQL function makes, stays
// within the bytes per point given here. Allocation (runtime.MemStats
// TotalAlloc) bounds the heap the call can hold at any moment, whatever
// the collector does; it is a count of bytes, not a time. The series
// itself (16 bytes per point) is allocated before the measurement.
func TestLongSeriesHeapBound(t *testing.T) {
	const n = bigSen + 37856 // 300,000 points
	rng := rand.New(rand.NewPCG(7, 11))
	tt := make([]float64, n)
	y := make([]float64, n)
	e := 0.0
	for i := range tt { // hourly, yearly cycle, AR(1) noise, 3 decimals
		tt[i] = 1.5e9 + 3600*float64(i)
		e = 0.7*e + 0.1*rng.NormFloat64()
		y[i] = math.Round((30+2*math.Sin(2*math.Pi*float64(i)/8766)+1e-5*float64(i)+e)*1000) / 1000
	}
	const year = 365.25 * 86400
	season := func(i int) int { return SeasonOf(tt[i], year, 12) }
	cell := func(i int) (int, int) { return season(i), int(math.Floor(tt[i] / year)) }
	for _, c := range []struct {
		name  string
		bound float64 // bytes per point (RELIABILITY.md, Known limits)
		run   func() error
	}{
		{"sen_slope", 105, func() error { // sqlfuncs senSlopeValue
			mk, err := MannKendall(y)
			if err != nil {
				return err
			}
			ys, _ := UnitScale(y)
			_, err = SenSlopeWithVar(tt, ys, 0.95, mk.VarS)
			return err
		}},
		{"mann_kendall(correct=hamed-rao)", 230, func() error { // sqlfuncs kendall.go
			mk, err := MannKendall(y)
			if err != nil {
				return err
			}
			_, err = HamedRaoWith(tt, y, mk, HamedRaoOptions{}, nil)
			return err
		}},
		{"seasonal_kendall", 120, func() error { // sqlfuncs seasonalKendallValue
			res, err := SeasonalKendallBy(tt, y, season, 12, 0.95)
			if err != nil {
				return err
			}
			SeasonalDependentBy(y, cell, 12, res.S) // an error (cells hold many values) is part of the result
			return nil
		}},
	} {
		runtime.GC()
		runtime.GC() // empties the scratch pools
		var m0, m1 runtime.MemStats
		runtime.ReadMemStats(&m0)
		if err := c.run(); err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		runtime.ReadMemStats(&m1)
		perPoint := float64(m1.TotalAlloc-m0.TotalAlloc) / n
		t.Logf("%s: %.1f bytes allocated per point (bound %.0f)", c.name, perPoint, c.bound)
		if perPoint > c.bound {
			t.Errorf("%s allocated %.1f bytes per point on %d points, above the documented bound of %.0f (RELIABILITY.md, Known limits)", c.name, perPoint, n, c.bound)
		}
	}
}
