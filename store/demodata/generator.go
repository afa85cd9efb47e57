package demodata

import (
	"math"
	"math/rand/v2"
	"time"
)

// demoSeries is one generated series.
type demoSeries struct {
	variable, unit string
	readings       []demoReading
}

type demoReading struct {
	t int64
	v float64
	q *string
}

// generator holds one station's random stream.
type generator struct {
	rng *rand.Rand
	st  *demoStation
	opt Options
}

func (g *generator) norm() float64 { return g.rng.NormFloat64() }

// poisson draws a Poisson count (Knuth's method; lambda is small here).
func (g *generator) poisson(lambda float64) int {
	if lambda <= 0 {
		return 0
	}
	l, k, p := math.Exp(-lambda), 0, 1.0
	for {
		p *= g.rng.Float64()
		if p <= l {
			return k
		}
		k++
	}
}

// yearFrac is the position within the year in [0, 1), on a 365.25-day year.
func yearFrac(t int64) float64 {
	f := math.Mod(float64(t)/yearSec, 1)
	if f < 0 {
		f++
	}
	return f
}

// seasonal is a two-harmonic annual cycle peaking near peakDOY.
func seasonal(t int64, amp, peakDOY float64) float64 {
	x := 2 * math.Pi * (yearFrac(t) - peakDOY/daysPerYear)
	return amp * (math.Cos(x) + 0.25*math.Cos(2*x+0.7))
}

// span returns the first time and the number of steps of a record.
func (g *generator) span(step int64) (int64, int) {
	start := time.Date(g.st.startYear, 1, 1, 0, 0, 0, 0, time.UTC).Unix()
	// Stagger starts within the first quarter so records do not all begin on 1 January.
	start += int64(g.rng.IntN(90)) * daySec
	if g.opt.MaxYears > 0 {
		if min := demoEnd - int64(g.opt.MaxYears*yearSec); start < min {
			start = min
		}
	}
	start -= start % step
	n := int((demoEnd-start)/step) + 1
	return start, n
}

// gapMask marks outages: count ~ Poisson(rate·years), lengths log-uniform.
func (g *generator) gapMask(n int, stepsPerYear, rate, minSteps, maxSteps float64) []bool {
	mask := make([]bool, n)
	k := g.poisson(rate * float64(n) / stepsPerYear)
	for range k {
		start := g.rng.IntN(n)
		length := int(math.Exp(math.Log(minSteps) + g.rng.Float64()*(math.Log(maxSteps)-math.Log(minSteps))))
		for i := start; i < start+length && i < n; i++ {
			mask[i] = true
		}
	}
	return mask
}

func round(v, unit float64) float64 { return math.Round(v/unit) * unit }

// trendAt is the deterministic trend component at t.
func (s *demoStation) trendAt(t, start int64) float64 {
	from := start
	if s.trendFrom != 0 {
		from = time.Date(s.trendFrom, 4, 1, 0, 0, 0, 0, time.UTC).Unix()
	}
	if t <= from {
		return 0
	}
	return s.trend * float64(t-from) / yearSec
}

// hourly generates a river stage or lake level record.
func (g *generator) hourly() demoSeries {
	s := g.st
	start, n := g.span(hourSec)
	gaps := g.gapMask(n, hoursPerYear, 0.6, 3, 24*45)
	if s.id == "VOR-G06" { // the gauge washed out in a flood and was rebuilt
		k := n / 3
		for i := k; i < k+24*150 && i < n; i++ {
			gaps[i] = true
		}
	}
	base := 0.35 + 0.6*g.rng.Float64()
	if s.kind == kindLake {
		base = s.elev
	}
	unit, variable := "m", "stage"
	if s.kind == kindLake {
		variable = "lake_level"
	}
	sdE := s.noiseSD * math.Sqrt(1-s.phi*s.phi)
	ar := s.noiseSD * g.norm()
	var pending, storm float64
	decay := math.Exp(-1 / s.recession)
	rise := 4 + 4*g.rng.Float64()
	// Ice periods (upland gauges): whole winter spans read as estimated.
	ice := make([]bool, n)
	if s.kind == kindGauge && s.elev > 250 {
		for y := s.startYear; y <= 2025; y++ {
			if g.rng.Float64() < 0.6 {
				d0 := time.Date(y, 12, 1, 0, 0, 0, 0, time.UTC).Unix() + int64(g.rng.IntN(70))*daySec
				i0 := int((d0 - start) / hourSec)
				for i := max(i0, 0); i < i0+24*(3+g.rng.IntN(10)) && i < n; i++ {
					ice[i] = true
				}
			}
		}
	}
	provisionalFrom := demoEnd - 60*daySec
	out := demoSeries{variable: variable, unit: unit, readings: make([]demoReading, 0, n)}
	for i := range n {
		t := start + int64(i)*hourSec
		ar = s.phi*ar + sdE*g.norm()
		// Storms are twice as likely in the wet half of the year.
		wet := 1 + math.Cos(2*math.Pi*(yearFrac(t)-s.peakDOY/daysPerYear))
		if g.rng.Float64() < s.events/hoursPerYear*wet {
			pending += s.eventSize * g.rng.ExpFloat64()
		}
		in := pending / rise
		pending -= in
		storm = storm*decay + in
		v := base + seasonal(t, s.amp, s.peakDOY) + s.trendAt(t, start) + ar + storm
		if s.kind == kindGauge && v < 0.02 {
			v = 0.02
		}
		if gaps[i] {
			continue
		}
		var q *string
		switch {
		case ice[i]:
			v = base + seasonal(t, s.amp, s.peakDOY) + s.trendAt(t, start)
			q = &qEstimated
		case s.kind == kindGauge && t >= provisionalFrom:
			q = &qProvisional
		}
		out.readings = append(out.readings, demoReading{t: t, v: round(v, 0.001), q: q})
	}
	return out
}

// daily generates a logged groundwater level (m above sea level).
func (g *generator) daily() demoSeries {
	s := g.st
	start, n := g.span(daySec)
	start += 6 * hourSec // loggers report at 06:00 UTC
	gaps := g.gapMask(n, daysPerYear, 0.35, 4, 150)
	sdE := s.noiseSD * math.Sqrt(1-s.phi*s.phi)
	ar := s.noiseSD * g.norm()
	var recharge float64
	decay := 0.0
	if s.recession > 0 {
		decay = math.Exp(-1 / s.recession)
	}
	step := int64(0)
	if s.stepDate != "" {
		d, _ := time.Parse("2006-01-02", s.stepDate)
		step = d.Unix()
	}
	top := s.elev - s.depth
	out := demoSeries{variable: "groundwater_level", unit: "m a.s.l.", readings: make([]demoReading, 0, n)}
	// A few days after an outage the logger clock is reconstructed: estimated.
	estimated := 0
	for i := range n {
		t := start + int64(i)*daySec
		ar = s.phi*ar + sdE*g.norm()
		if s.events > 0 {
			wet := 1 + math.Cos(2*math.Pi*(yearFrac(t)-s.peakDOY/daysPerYear))
			if g.rng.Float64() < s.events/daysPerYear*wet {
				recharge += s.eventSize * g.rng.ExpFloat64()
			}
			recharge *= decay
		}
		v := top + seasonal(t, s.amp, s.peakDOY) + s.trendAt(t, start) + ar + recharge + 0.005*g.norm()
		if step != 0 && t >= step {
			v += s.stepSize
		}
		spike := g.rng.Float64() < 1.0/900
		if gaps[i] {
			estimated = 3
			continue
		}
		var q *string
		switch {
		case spike:
			v += 0.5 + 1.5*g.rng.Float64()
			q = &qSuspect
		case estimated > 0:
			estimated--
			q = &qEstimated
		}
		out.readings = append(out.readings, demoReading{t: t, v: round(v, 0.001), q: q})
	}
	return out
}

// manual generates monthly dip readings at irregular times, and nitrate
// samples taken on the same visits when the well is sampled.
func (g *generator) manual() []demoSeries {
	s := g.st
	first := time.Date(s.startYear, 1, 1, 0, 0, 0, 0, time.UTC)
	if g.opt.MaxYears > 0 {
		if min := time.Unix(demoEnd-int64(g.opt.MaxYears*yearSec), 0).UTC(); first.Before(min) {
			first = time.Date(min.Year(), min.Month(), 1, 0, 0, 0, 0, time.UTC)
		}
	}
	level := demoSeries{variable: "groundwater_level", unit: "m a.s.l."}
	nitrate := demoSeries{variable: "nitrate_n", unit: "mg/L"}
	top := s.elev - s.depth
	ar := s.noiseSD * g.norm()
	sdE := s.noiseSD * math.Sqrt(1-s.phi*s.phi)
	const detectionLimit = 0.2
	start := first.Unix()
	for m := first; m.Unix() <= demoEnd; m = m.AddDate(0, 1, 0) {
		ar = s.phi*ar + sdE*g.norm()
		if g.rng.Float64() < 0.08 { // visit missed
			continue
		}
		// Visits fall on a working-hours time somewhere in the month.
		visit := m.AddDate(0, 0, 2+g.rng.IntN(24)).Add(time.Duration(7*60+g.rng.IntN(9*60)) * time.Minute)
		t := visit.Unix()
		if t > demoEnd {
			break
		}
		v := top + seasonal(t, s.amp, s.peakDOY) + s.trendAt(t, start) + ar + 0.01*g.norm()
		level.readings = append(level.readings, demoReading{t: t, v: round(v, 0.01)})
		if s.nitrate > 0 && g.rng.Float64() < 0.85 {
			c := s.nitrate*math.Exp(0.45*g.norm()+0.3*math.Cos(2*math.Pi*(yearFrac(t)-0.1))) +
				s.nitrateTrend*float64(t-start)/yearSec
			var q *string
			if c < detectionLimit {
				c, q = detectionLimit, &qBelowDL
			}
			nitrate.readings = append(nitrate.readings, demoReading{t: t, v: round(c, 0.01), q: q})
		}
	}
	out := []demoSeries{level}
	if len(nitrate.readings) > 0 {
		out = append(out, nitrate)
	}
	return out
}

func (g *generator) series() []demoSeries {
	switch g.st.kind {
	case kindGauge, kindLake:
		return []demoSeries{g.hourly()}
	case kindWell:
		return []demoSeries{g.daily()}
	case kindQuality:
		return nil // Build adds their phosphorus series (waterquality.go)
	default:
		return g.manual()
	}
}
