package store

// The demo store: an invented monitoring network in the invented Vorlen river
// basin, generated in code from a fixed seed. Nothing here describes a real
// place, gauge or well; the numbers only look like what monitoring networks
// record (seasonal cycles, persistent noise, storm hydrographs, pumping
// declines, a sensor replacement, outages and qualifier flags) so that every
// feature of trendsql has something realistic to work on.

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"time"
)

// DemoSeed is the fixed seed of the demo scenario: the same seed always gives
// the same stations, series and readings, bit for bit.
const DemoSeed uint64 = 20260417

// DemoSource is the import_batches.source recorded for the demo build.
const DemoSource = "demo:generated"

// DemoGenerator names the generator version recorded in the batch options;
// bump it when the scenario changes.
const DemoGenerator = "vorlen-1"

// DemoOptions controls BuildDemo.
type DemoOptions struct {
	// Seed of the scenario; 0 means DemoSeed.
	Seed uint64
	// Stations keeps only the first n stations of the catalogue (0 = all).
	// Each station draws from its own stream, so the kept stations are
	// identical to those of the full build.
	Stations int
	// MaxYears keeps only the last MaxYears years of each record (0 = all).
	MaxYears float64
}

// DemoSummary describes a built demo store.
type DemoSummary struct {
	Stations int
	Series   int
	Readings int64
	// StationsByType counts stations per metadata station_type.
	StationsByType map[string]int
	BatchID        int64
	// ReplacedDemo is set when an earlier, untouched demo store at the same
	// path was rebuilt (see CreateDemo).
	ReplacedDemo bool
}

// ErrStoreNotEmpty is returned by CreateDemo when the target already holds data.
var ErrStoreNotEmpty = errors.New("store already holds data")

// demoEnd is the last hour of every demo record: 2025-12-31T23:00:00Z.
var demoEnd = time.Date(2025, 12, 31, 23, 0, 0, 0, time.UTC).Unix()

const (
	hourSec = 3600
	daySec  = 86400
	yearSec = 31557600 // Julian year, 365.25 d: the project's "1y"
)

// Qualifier texts used by the demo, stored verbatim like a source's flags.
var (
	qEstimated   = "estimated"
	qProvisional = "provisional"
	qSuspect     = "suspect"
	qBelowDL     = "below detection limit"
)

type stationKind string

const (
	kindGauge  stationKind = "river_gauge"
	kindLake   stationKind = "lake_level"
	kindWell   stationKind = "groundwater_well"
	kindManual stationKind = "groundwater_well_manual"
)

// demoStation is one station of the catalogue with the parameters of its
// series. Levels are in metres; trends in metres per year.
type demoStation struct {
	id, name     string
	kind         stationKind
	sub          string // sub-catchment
	lat, lon     float64
	elev         float64
	startYear    int
	landUse      string
	aquifer      string
	sensor       string
	trend        float64 // m/yr
	trendFrom    int     // year the trend starts (0 = whole record)
	amp          float64 // seasonal amplitude
	peakDOY      float64 // day of year of the seasonal maximum
	noiseSD      float64 // stationary SD of the AR(1) part
	phi          float64 // AR(1) coefficient per time step
	events       float64 // storm / recharge events per year
	eventSize    float64 // mean event magnitude
	recession    float64 // event recession time constant (steps)
	depth        float64 // wells: depth to water at start (m below ground)
	stepDate     string  // sensor replacement date (one well)
	stepSize     float64 // offset of the new sensor (m)
	prevSensor   string
	nitrate      float64 // manual wells: median nitrate-N (mg/L), 0 = not sampled
	nitrateTrend float64 // mg/L per year
}

// demoCatalogue is the invented network: 11 river gauges, one lake gauge,
// 21 logged wells and 7 manually read wells.
func demoCatalogue() []demoStation {
	g := func(id, name, sub string, lat, lon, elev float64, start int, land, sensor string, trend, amp, events, size, rec float64) demoStation {
		return demoStation{id: id, name: name, kind: kindGauge, sub: sub, lat: lat, lon: lon, elev: elev,
			startYear: start, landUse: land, sensor: sensor, trend: trend, amp: amp, peakDOY: 40,
			noiseSD: 0.04, phi: 0.985, events: events, eventSize: size, recession: rec}
	}
	w := func(id, name, sub string, lat, lon, elev float64, start int, land, aquifer, sensor string, depth, trend, amp, peak, sd, phi float64) demoStation {
		return demoStation{id: id, name: name, kind: kindWell, sub: sub, lat: lat, lon: lon, elev: elev,
			startYear: start, landUse: land, aquifer: aquifer, sensor: sensor, depth: depth, trend: trend,
			amp: amp, peakDOY: peak, noiseSD: sd, phi: phi}
	}
	m := func(id, name, sub string, lat, lon, elev float64, start int, land, aquifer string, depth, trend, amp float64, nitrate, ntrend float64) demoStation {
		return demoStation{id: id, name: name, kind: kindManual, sub: sub, lat: lat, lon: lon, elev: elev,
			startYear: start, landUse: land, aquifer: aquifer, sensor: "manual dip meter", depth: depth, trend: trend,
			amp: amp, peakDOY: 100, noiseSD: 0.08, phi: 0.9, nitrate: nitrate, nitrateTrend: ntrend}
	}
	const radar, press, float = "RL-20 radar", "PT-400 vented pressure", "FE-7 float encoder"
	cat := []demoStation{
		g("VOR-G01", "Vorlen at Hessel Bridge", "Upper Vorlen", 46.912, 12.404, 412, 2012, "upland pasture", radar, 0, 0.22, 26, 0.55, 18),
		g("VOR-G02", "Skarra Beck at Tamsey Weir", "Skarra Beck", 46.874, 12.458, 356, 2014, "forest", press, 0, 0.18, 30, 0.45, 12),
		g("VOR-G03", "Vorlen at Orrow Mill", "Upper Vorlen", 46.851, 12.497, 301, 2016, "upland pasture", float, 0, 0.25, 24, 0.5, 22),
		g("VOR-G04", "Vorlen below Brandle gravel works", "Middle Vorlen", 46.823, 12.561, 244, 2013, "mixed farmland", radar, 0.012, 0.3, 22, 0.6, 30),
		g("VOR-G05", "Hollin Water at Keswin", "Hollin Water", 46.846, 12.602, 228, 2017, "mixed farmland", press, 0, 0.2, 28, 0.4, 16),
		g("VOR-G06", "Vorlen at Mardle Ford", "Middle Vorlen", 46.801, 12.633, 197, 2015, "irrigated cropland", radar, 0, 0.32, 20, 0.65, 36),
		g("VOR-G07", "Vorlen below Pellow dam", "Middle Vorlen", 46.779, 12.688, 172, 2018, "irrigated cropland", radar, -0.018, 0.15, 12, 0.3, 48),
		g("VOR-G08", "Surrow Brook at Quenby", "Surrow Brook", 46.755, 12.642, 158, 2019, "urban", press, 0, 0.16, 34, 0.35, 8),
		g("VOR-G09", "Vorlen at Adlow", "Lower Vorlen", 46.736, 12.742, 131, 2019, "irrigated cropland", radar, 0, 0.35, 18, 0.7, 44),
		g("VOR-G10", "Fennet Drain at Fennet Lock", "Lower Vorlen", 46.712, 12.781, 104, 2020, "drained wetland", float, 0.008, 0.12, 16, 0.2, 60),
		g("VOR-G11", "Vorlen at Tessing outfall", "Lower Vorlen", 46.694, 12.833, 86, 2020, "urban", radar, 0, 0.38, 18, 0.75, 52),
	}
	lake := demoStation{id: "VOR-L01", name: "Lake Quennet at east shore", kind: kindLake, sub: "Lake Quennet",
		lat: 46.792, lon: 12.601, elev: 212.4, startYear: 2016, landUse: "lake shore", sensor: press,
		trend: -0.006, amp: 0.35, peakDOY: 140, noiseSD: 0.08, phi: 0.9995, events: 6, eventSize: 0.08, recession: 240}
	cat = append(cat, lake)
	cat = append(cat,
		w("VOR-W01", "Hessel upland well", "Upper Vorlen", 46.905, 12.421, 398, 2011, "upland pasture", "sandstone", press, 14.2, 0, 0.6, 95, 0.12, 0.97),
		w("VOR-W02", "Tamsey forest well", "Skarra Beck", 46.869, 12.447, 341, 2012, "forest", "sandstone", press, 9.8, 0, 0.45, 100, 0.1, 0.975),
		w("VOR-W03", "Orrow irrigation well A", "Middle Vorlen", 46.833, 12.574, 236, 2012, "irrigated cropland", "alluvial", press, 6.5, -0.32, 0.9, 85, 0.15, 0.96),
		w("VOR-W04", "Orrow meadow well", "Middle Vorlen", 46.838, 12.551, 239, 2013, "pasture", "alluvial", press, 3.1, 0, 0.7, 80, 0.1, 0.95),
		w("VOR-W05", "Brandle wellfield obs 1", "Middle Vorlen", 46.818, 12.592, 221, 2011, "wellfield", "sandstone", press, 18.4, -0.18, 0.35, 110, 0.1, 0.98),
		w("VOR-W06", "Brandle wellfield obs 2", "Middle Vorlen", 46.815, 12.601, 219, 2011, "wellfield", "sandstone", press, 21.7, -0.41, 0.3, 115, 0.12, 0.98),
		w("VOR-W07", "Keswin village well", "Hollin Water", 46.849, 12.611, 231, 2014, "urban", "alluvial", press, 4.4, 0, 0.5, 75, 0.08, 0.95),
		w("VOR-W08", "Mardle riverside well", "Middle Vorlen", 46.803, 12.641, 195, 2013, "mixed farmland", "alluvial", press, 2.6, 0, 0.8, 50, 0.12, 0.93),
		w("VOR-W09", "Mardle terrace well", "Middle Vorlen", 46.797, 12.652, 203, 2014, "mixed farmland", "alluvial", "PT-420 vented pressure", 5.9, 0, 0.6, 80, 0.1, 0.96),
		w("VOR-W10", "Pellow reservoir toe well", "Middle Vorlen", 46.782, 12.679, 176, 2015, "grassland", "alluvial", press, 3.8, 0, 0.4, 70, 0.08, 0.96),
		w("VOR-W11", "Pellow irrigation well B", "Middle Vorlen", 46.771, 12.701, 169, 2013, "irrigated cropland", "alluvial", press, 7.2, -0.09, 1.1, 90, 0.18, 0.96),
		w("VOR-W12", "Quenby school well", "Surrow Brook", 46.752, 12.637, 161, 2016, "urban", "sandstone", press, 11.3, 0, 0.3, 105, 0.07, 0.98),
		w("VOR-W13", "Adlow flats well", "Lower Vorlen", 46.738, 12.751, 128, 2012, "irrigated cropland", "alluvial", press, 4.9, 0, 0.9, 85, 0.14, 0.95),
		w("VOR-W14", "Adlow new wellfield obs", "Lower Vorlen", 46.731, 12.766, 125, 2013, "wellfield", "sandstone", press, 16.1, -0.25, 0.35, 110, 0.1, 0.98),
		w("VOR-W15", "Fennet peat margin well", "Lower Vorlen", 46.716, 12.792, 103, 2015, "drained wetland", "alluvial", press, 1.4, 0, 0.35, 60, 0.06, 0.94),
		w("VOR-W16", "Skarra sink well", "Skarra Beck", 46.881, 12.471, 362, 2012, "forest", "karst", press, 27.5, 0, 2.8, 70, 0.6, 0.85),
		w("VOR-W17", "Hessel cave spring well", "Upper Vorlen", 46.898, 12.433, 388, 2014, "upland pasture", "karst", press, 19.2, 0, 3.4, 65, 0.7, 0.82),
		w("VOR-W18", "Orrow limestone well", "Upper Vorlen", 46.861, 12.482, 318, 2015, "upland pasture", "karst", press, 33.0, 0, 2.2, 75, 0.5, 0.86),
		w("VOR-W19", "Tamsey quarry well", "Skarra Beck", 46.877, 12.463, 349, 2016, "quarry", "karst", press, 24.4, -0.12, 2.6, 70, 0.55, 0.85),
		w("VOR-W20", "Keswin doline well", "Hollin Water", 46.858, 12.598, 262, 2017, "forest", "karst", press, 15.7, 0, 3.0, 60, 0.65, 0.83),
		w("VOR-W21", "Hollin ridge well", "Hollin Water", 46.866, 12.615, 284, 2018, "upland pasture", "karst", press, 29.8, 0, 2.5, 72, 0.6, 0.84),
		m("VOR-M01", "Hessel farm dip well", "Upper Vorlen", 46.909, 12.412, 405, 2011, "upland pasture", "sandstone", 12.1, 0, 0.5, 0.6, 0),
		m("VOR-M02", "Orrow old village well", "Middle Vorlen", 46.846, 12.531, 247, 2011, "mixed farmland", "alluvial", 4.2, 0, 0.8, 5.5, 0.12),
		m("VOR-M03", "Pellow orchard well", "Middle Vorlen", 46.774, 12.694, 171, 2012, "irrigated cropland", "alluvial", 6.8, -0.15, 1.0, 8.2, 0.2),
		m("VOR-M04", "Quenby churchyard well", "Surrow Brook", 46.758, 12.646, 163, 2013, "urban", "sandstone", 9.6, 0, 0.3, 0, 0),
		m("VOR-M05", "Adlow dairy well", "Lower Vorlen", 46.741, 12.759, 127, 2012, "pasture", "alluvial", 3.3, 0, 0.7, 3.1, 0),
		m("VOR-M06", "Fennet keeper's well", "Lower Vorlen", 46.719, 12.801, 102, 2014, "drained wetland", "alluvial", 1.9, 0, 0.4, 0, 0),
		m("VOR-M07", "Skarra shepherd's well", "Skarra Beck", 46.888, 12.452, 371, 2015, "forest", "karst", 21.0, 0, 2.5, 0.3, 0),
	)
	for i := range cat {
		s := &cat[i]
		switch s.id {
		case "VOR-W09":
			s.stepDate, s.stepSize, s.prevSensor = "2019-05-21", 0.23, "PT-400 vented pressure"
		case "VOR-W14":
			s.trendFrom = 2018 // the new wellfield starts pumping
		}
		if s.kind == kindWell && s.aquifer == "karst" {
			s.events, s.eventSize, s.recession = 9, 2.0, 6
		}
	}
	return cat
}

// metadata is the station's site metadata JSON.
func (s *demoStation) metadata() string {
	md := map[string]any{
		"basin":         "Vorlen",
		"sub_catchment": s.sub,
		"station_type":  string(s.kind),
		"land_use":      s.landUse,
		"sensor_model":  s.sensor,
		"install_date":  fmt.Sprintf("%d-%02d-%02d", s.startYear-1, 1+int(s.lon*1000)%12, 1+int(s.lat*1000)%28),
		"scenario":      "invented demo data",
	}
	switch s.kind {
	case kindWell, kindManual:
		md["aquifer"] = s.aquifer
		md["well_depth_m"] = math.Round((s.depth*2.2+8)*10) / 10
		if s.kind == kindManual {
			md["reading_method"] = "manual dip, monthly"
		} else {
			md["reading_method"] = "logger, daily"
		}
	case kindGauge:
		md["datum"] = "local gauge zero"
		md["reading_method"] = "logger, hourly"
	case kindLake:
		md["datum"] = "m above sea level"
		md["reading_method"] = "logger, hourly"
	}
	if s.stepDate != "" {
		md["sensor_model"] = s.sensor
		md["sensor_replaced"] = s.stepDate
		md["previous_sensor_model"] = s.prevSensor
	}
	b, _ := json.Marshal(md) // map keys are sorted: deterministic text
	return string(b)
}

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
	opt DemoOptions
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
	x := 2 * math.Pi * (yearFrac(t) - peakDOY/365.25)
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
	gaps := g.gapMask(n, 8766, 0.6, 3, 24*45)
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
		wet := 1 + math.Cos(2*math.Pi*(yearFrac(t)-s.peakDOY/365.25))
		if g.rng.Float64() < s.events/8766*wet {
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
	gaps := g.gapMask(n, 365.25, 0.35, 4, 150)
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
			wet := 1 + math.Cos(2*math.Pi*(yearFrac(t)-s.peakDOY/365.25))
			if g.rng.Float64() < s.events/365.25*wet {
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
	default:
		return g.manual()
	}
}

// BuildDemo writes the demo scenario into s (which should be empty) in one
// transaction, recording a stations batch and a readings batch with source
// DemoSource, and series_batches rows for every series.
func (s *Store) BuildDemo(ctx context.Context, opt DemoOptions) (DemoSummary, error) {
	if opt.Seed == 0 {
		opt.Seed = DemoSeed
	}
	cat := demoCatalogue()
	if opt.Stations > 0 && opt.Stations < len(cat) {
		cat = cat[:opt.Stations]
	}
	sum := DemoSummary{StationsByType: map[string]int{}}
	optJSON, _ := json.Marshal(map[string]any{"generator": DemoGenerator, "seed": opt.Seed, "stations": opt.Stations, "max_years": opt.MaxYears})
	now := func() string { return time.Now().UTC().Format(time.RFC3339) }

	rt, err := s.beginReadingsTx(ctx, ConflictError)
	if err != nil {
		return sum, fmt.Errorf("demo: begin: %w", err)
	}
	defer rt.end()
	tx, w := rt.tx, rt.w

	res, err := tx.ExecContext(ctx, `INSERT INTO import_batches(kind, source, started_at, options) VALUES ('stations', ?, ?, ?)`, DemoSource, now(), string(optJSON))
	if err != nil {
		return sum, fmt.Errorf("demo: record stations batch: %w", err)
	}
	stBatch, _ := res.LastInsertId()
	for i := range cat {
		st := &cat[i]
		if _, err := tx.ExecContext(ctx, `INSERT INTO stations(id, name, latitude, longitude, elevation_m, metadata) VALUES (?, ?, ?, ?, ?, ?)`,
			st.id, st.name, st.lat, st.lon, st.elev, st.metadata()); err != nil {
			return sum, fmt.Errorf("demo: station %s: %w", st.id, err)
		}
		sum.StationsByType[string(st.kind)]++
	}
	if _, err := tx.ExecContext(ctx, `UPDATE import_batches SET finished_at = ?, rows_read = ?, rows_stored = ? WHERE id = ?`,
		now(), len(cat), len(cat), stBatch); err != nil {
		return sum, fmt.Errorf("demo: finish stations batch: %w", err)
	}

	res, err = tx.ExecContext(ctx, `INSERT INTO import_batches(kind, source, started_at, options) VALUES ('readings', ?, ?, ?)`, DemoSource, now(), string(optJSON))
	if err != nil {
		return sum, fmt.Errorf("demo: record readings batch: %w", err)
	}
	batch, _ := res.LastInsertId()
	type counted struct {
		id   int64
		rows int
	}
	var perSeries []counted
	for i := range cat {
		st := &cat[i]
		g := &generator{rng: rand.New(rand.NewPCG(opt.Seed, uint64(i+1))), st: st, opt: opt}
		for _, ser := range g.series() {
			res, err := tx.ExecContext(ctx, `INSERT INTO series(station_id, variable, unit) VALUES (?, ?, ?)`, st.id, ser.variable, ser.unit)
			if err != nil {
				return sum, fmt.Errorf("demo: series %s/%s: %w", st.id, ser.variable, err)
			}
			sid, _ := res.LastInsertId()
			for _, r := range ser.readings {
				if err := w.Add(ctx, Reading{SeriesID: sid, T: r.t, Value: r.v, Qualifier: r.q}); err != nil {
					return sum, fmt.Errorf("demo: %s/%s: %w", st.id, ser.variable, err)
				}
			}
			perSeries = append(perSeries, counted{sid, len(ser.readings)})
			sum.Readings += int64(len(ser.readings))
		}
	}
	stored, err := w.Flush(ctx)
	if err != nil {
		return sum, err
	}
	if stored != sum.Readings {
		return sum, fmt.Errorf("demo: stored %d readings, generated %d", stored, sum.Readings)
	}
	for _, c := range perSeries {
		if _, err := tx.ExecContext(ctx, `INSERT INTO series_batches(series_id, batch_id, rows) VALUES (?, ?, ?)`, c.id, batch, c.rows); err != nil {
			return sum, fmt.Errorf("demo: series_batches: %w", err)
		}
	}
	if _, err := tx.ExecContext(ctx, `UPDATE import_batches SET finished_at = ?, rows_read = ?, rows_stored = ? WHERE id = ?`,
		now(), sum.Readings, stored, batch); err != nil {
		return sum, fmt.Errorf("demo: finish readings batch: %w", err)
	}
	if err := tx.Commit(); err != nil {
		return sum, fmt.Errorf("demo: commit: %w", err)
	}
	sum.Stations, sum.Series, sum.BatchID = len(cat), len(perSeries), batch
	return sum, nil
}

// CreateDemo builds the demo store at path. The store is built in a
// temporary file next to path and moved into place only when complete, so an
// interrupted build leaves path untouched. An existing store that holds any
// stations, readings or import batches is replaced only when force is set; a
// file that is not a trendsql store is never replaced.
func CreateDemo(ctx context.Context, path string, opt DemoOptions, force bool) (DemoSummary, error) {
	empty, err := storeIsEmpty(ctx, path)
	if err != nil {
		return DemoSummary{}, err
	}
	replacedDemo := false
	if !empty && !force {
		// An untouched demo store (only generated batches, no summary runs)
		// holds nothing a user made: rebuilding it is safe, so running the
		// README's first command twice works.
		if demoOnly, _ := storeIsUntouchedDemo(ctx, path); !demoOnly {
			return DemoSummary{}, fmt.Errorf("demo: %s: %w; refusing to overwrite it (use --force to replace it, or choose another --db)", path, ErrStoreNotEmpty)
		}
		replacedDemo = true
	}
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".demo-*")
	if err != nil {
		return DemoSummary{}, fmt.Errorf("demo: %w", err)
	}
	tmp := f.Name()
	f.Close()
	cleanup := func(p string) {
		for _, suffix := range []string{"", "-wal", "-shm", "-journal"} {
			os.Remove(p + suffix)
		}
	}
	ok := false
	defer func() {
		if !ok {
			cleanup(tmp)
		}
	}()
	s, err := Open(ctx, tmp, Options{})
	if err != nil {
		return DemoSummary{}, err
	}
	sum, err := s.BuildDemo(ctx, opt)
	if err == nil {
		// Fold the WAL into the main file so the single file can be moved.
		_, err = s.DB.ExecContext(ctx, `PRAGMA wal_checkpoint(TRUNCATE)`)
	}
	if cerr := s.Close(); err == nil && cerr != nil {
		err = cerr
	}
	if err != nil {
		return sum, err
	}
	os.Remove(tmp + "-wal")
	os.Remove(tmp + "-shm")
	// Side files of the replaced store must not be applied to the new one.
	os.Remove(path + "-wal")
	os.Remove(path + "-shm")
	if err := os.Rename(tmp, path); err != nil {
		return sum, fmt.Errorf("demo: move the built store into place: %w", err)
	}
	ok = true
	sum.ReplacedDemo = replacedDemo
	return sum, nil
}

// storeIsUntouchedDemo reports whether the store at path holds only what an
// earlier demo build wrote: every import batch has the demo's source and
// no summary run exists. Any error counts as "no".
func storeIsUntouchedDemo(ctx context.Context, path string) (bool, error) {
	db, err := sql.Open("sqlite", DSN(path, true))
	if err != nil {
		return false, err
	}
	defer db.Close()
	var batches, demoBatches, runs int
	err = db.QueryRowContext(ctx, `SELECT count(*), count(*) FILTER (WHERE source = ?) FROM import_batches`, DemoSource).Scan(&batches, &demoBatches)
	if err != nil {
		return false, err
	}
	if err := db.QueryRowContext(ctx, `SELECT count(*) FROM summary_runs`).Scan(&runs); err != nil {
		return false, err
	}
	return batches > 0 && batches == demoBatches && runs == 0, nil
}

// storeIsEmpty reports whether path is absent, an empty file, an SQLite file
// without tables, or a trendsql store without stations, readings or batches.
// A file that is anything else is an error: it is never replaced.
func storeIsEmpty(ctx context.Context, path string) (bool, error) {
	fi, err := os.Stat(path)
	if errors.Is(err, os.ErrNotExist) {
		return true, nil
	}
	if err != nil {
		return false, fmt.Errorf("demo: %w", err)
	}
	if fi.IsDir() {
		return false, fmt.Errorf("demo: %s is a directory, not a store file", path)
	}
	if fi.Size() == 0 {
		return true, nil
	}
	db, err := sql.Open("sqlite", DSN(path, true))
	if err != nil {
		return false, fmt.Errorf("demo: %s: %w", path, err)
	}
	defer db.Close()
	notStore := func(why string) error {
		return fmt.Errorf("demo: %s exists and is not a trendsql store (%s); refusing to replace it, choose another --db", path, why)
	}
	var tables, hasStations int
	err = db.QueryRowContext(ctx, `SELECT count(*), count(*) FILTER (WHERE name = 'stations') FROM sqlite_schema WHERE type = 'table'`).Scan(&tables, &hasStations)
	if err != nil {
		return false, notStore(strings.TrimSpace(err.Error()))
	}
	if tables == 0 {
		return true, nil
	}
	if hasStations == 0 {
		return false, notStore("no stations table")
	}
	var used int
	err = db.QueryRowContext(ctx, `SELECT EXISTS (SELECT 1 FROM stations) OR EXISTS (SELECT 1 FROM readings) OR EXISTS (SELECT 1 FROM import_batches)`).Scan(&used)
	if err != nil {
		return false, notStore(strings.TrimSpace(err.Error()))
	}
	return used == 0, nil
}
