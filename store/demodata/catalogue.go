package demodata

import (
	"encoding/json"
	"fmt"
	"math"
	"time"

	"trendsql/sqlfuncs/timefmt"
)

// demoEnd is the last hour of every demo record: 2025-12-31T23:00:00Z.
var demoEnd = time.Date(2025, 12, 31, 23, 0, 0, 0, time.UTC).Unix()

const (
	hourSec = 3600
	daySec  = 86400
	yearSec = timefmt.SecondsPerYear
	// daysPerYear is the length of the year in days (365.25).
	daysPerYear = yearSec / daySec
	// hoursPerYear is the length of the year in hours (8766).
	hoursPerYear = yearSec / hourSec
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
	// kindQuality: a river sampling point for laboratory water quality
	// (waterquality.go).
	kindQuality stationKind = "water_quality_site"
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
// 21 logged wells, 7 manually read wells and 4 water-quality sampling
// points.
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
	// Water-quality sampling points, last so that every other station keeps
	// its place (and its random stream).
	q := func(id, name, sub string, lat, lon, elev float64, start int, land string) demoStation {
		return demoStation{id: id, name: name, kind: kindQuality, sub: sub, lat: lat, lon: lon, elev: elev,
			startYear: start, landUse: land, sensor: "grab sample, laboratory analysis"}
	}
	cat = append(cat,
		q("VOR-Q01", "Vorlen below Brandle works (sampling point)", "Middle Vorlen", 46.822, 12.563, 243, 2013, "mixed farmland"),
		q("VOR-Q02", "Hollin Water at Keswin (sampling point)", "Hollin Water", 46.845, 12.603, 228, 2017, "mixed farmland"),
		q("VOR-Q03", "Vorlen at Adlow (sampling point)", "Lower Vorlen", 46.737, 12.743, 131, 2014, "irrigated cropland"),
		q("VOR-Q04", "Vorlen below Tessing outfall (sampling point)", "Lower Vorlen", 46.693, 12.835, 85, 2016, "urban"),
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
	case kindQuality:
		md["reading_method"] = "grab sample, monthly"
		md["reporting_limits"] = "total phosphorus: 10 ug/L until 2019, 5 ug/L from 2020"
	}
	if s.stepDate != "" {
		md["sensor_model"] = s.sensor
		md["sensor_replaced"] = s.stepDate
		md["previous_sensor_model"] = s.prevSensor
	}
	b, _ := json.Marshal(md) // map keys are sorted: deterministic text
	return string(b)
}
