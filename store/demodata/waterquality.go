package demodata

import (
	"math"
	"math/rand/v2"
	"time"
)

// Total phosphorus grab samples at four river sampling points: monthly laboratory
// results in µg/L, reported as "<limit" below the laboratory's reporting
// limit. The laboratory lowered its limit from 10 to 5 µg/L with a new method
// on 2020-01-01, so records spanning that date carry two limits — the usual
// difficulty of censored water-quality archives. The story: below the
// Brandle works on the Middle Vorlen (Q01) phosphorus falls as treatment
// improves; Hollin Water (Q02) is low and mostly below the limits; at Adlow
// (Q03) nothing changes; below the Tessing outfall (Q04) the town grows and
// phosphorus rises.

// wqSite is one station's phosphorus record.
type wqSite struct {
	station string
	median  float64 // µg/L at the start of the record
	trend   float64 // relative change per year (−0.08 = −8 % a year)
	sd      float64 // log-scale sample scatter
}

var wqSites = []wqSite{
	{"VOR-Q01", 38, -0.09, 0.45},
	{"VOR-Q02", 4, 0, 0.5},
	{"VOR-Q03", 22, 0, 0.4},
	{"VOR-Q04", 18, 0.07, 0.45},
}

// wqLimitChange is when the reporting limit fell from 10 to 5 µg/L.
var wqLimitChange = time.Date(2020, 1, 1, 0, 0, 0, 0, time.UTC).Unix()

// phosphorus generates the phosphorus series of station st (nil when the
// station is not sampled). It draws from its own stream, so the other
// series of the scenario do not change.
func phosphorus(st *demoStation, idx int, opt Options) (demoSeries, []bool, bool) {
	var site *wqSite
	for i := range wqSites {
		if wqSites[i].station == st.id {
			site = &wqSites[i]
		}
	}
	if site == nil {
		return demoSeries{}, nil, false
	}
	rng := rand.New(rand.NewPCG(opt.Seed, uint64(1000+idx)))
	first := time.Date(st.startYear, 1, 1, 0, 0, 0, 0, time.UTC)
	if opt.MaxYears > 0 {
		if min := time.Unix(demoEnd-int64(opt.MaxYears*yearSec), 0).UTC(); first.Before(min) {
			first = time.Date(min.Year(), min.Month(), 1, 0, 0, 0, 0, time.UTC)
		}
	}
	ser := demoSeries{variable: "total_phosphorus", unit: "ug/L"}
	var marks []bool
	start := first.Unix()
	for m := first; m.Unix() <= demoEnd; m = m.AddDate(0, 1, 0) {
		if rng.Float64() < 0.06 { // sample not taken
			continue
		}
		visit := m.AddDate(0, 0, 3+rng.IntN(22)).Add(time.Duration(8*60+rng.IntN(6*60)) * time.Minute)
		t := visit.Unix()
		if t > demoEnd {
			break
		}
		years := float64(t-start) / yearSec
		c := site.median * math.Exp(site.trend*years+site.sd*rng.NormFloat64()+0.25*math.Cos(2*math.Pi*(yearFrac(t)-0.6)))
		limit := 10.0
		if t >= wqLimitChange {
			limit = 5
		}
		c = round(c, 1)
		cens := c < limit
		if cens {
			c = limit
		}
		ser.readings = append(ser.readings, demoReading{t: t, v: c})
		marks = append(marks, cens)
	}
	return ser, marks, len(ser.readings) > 0
}
