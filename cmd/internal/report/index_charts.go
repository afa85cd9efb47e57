package report

import (
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

const (
	sparkW, sparkH = 120, 26
	sparkCols      = 40
	mapW           = 430
	groupW         = 430
)

// sparkline: the readings (thinned to the sparkline's width) and the
// straight-line trend, without axes.
func sparkline(d *seriesPlotData) (*Figure, error) {
	p := plot.New()
	p.HideAxes()
	p.X.Padding, p.Y.Padding = 0, 0
	t := d.times()
	runs := splitRuns(t, d.rd.V, d.step)
	if len(t) > 0 {
		for i, r := range runs {
			runs[i] = thin(r, t[0], t[len(t)-1], sparkCols)
		}
	}
	p.Add(&lineRuns{runs: runs, line: draw.LineStyle{Color: ColReadings, Width: vg.Points(0.6)},
		dot: draw.GlyphStyle{Color: ColReadings, Radius: vg.Points(0.8), Shape: draw.CircleGlyph{}}})
	if d.line != nil {
		p.Add(&lineRuns{runs: [][]xy{zipXY(d.lineT, d.line)}, line: draw.LineStyle{Color: ColTrend, Width: vg.Points(1.2)}})
	}
	return render(p, "spark", "sparkline of "+d.s.Station.ID+" "+d.s.Variable, sparkW, sparkH, false)
}

// significant reports whether the run flagged a trend (at its FDR level).
func significant(s *Series) bool {
	on, _ := s.Sum.flag("trend_detected")
	return on
}

// slopeOf is the Sen slope per year, else the least-squares slope.
func slopeOf(s *Series) float64 {
	if v := s.Sum.number("sen_slope_per_year"); !math.IsNaN(v) {
		return v
	}
	return s.Sum.number("slope_per_year")
}

// addMarkLegend adds the five trend symbols to a legend.
func addMarkLegend(p *plot.Plot, r vg.Length) {
	for _, e := range []struct {
		lab   string
		slope float64
		sig   bool
	}{{"rising, significant", 1, true}, {"rising, not significant", 1, false},
		{"falling, significant", -1, true}, {"falling, not significant", -1, false}, {"no slope (none or zero)", math.NaN(), false}} {
		m, c := markFor(e.slope, e.sig)
		p.Legend.Add(e.lab, &points{glyph: draw.GlyphStyle{Color: c, Radius: r, Shape: m}})
	}
}

// mapFigure: stations of one variable at their longitude and latitude
// (equirectangular, x scaled by the cosine of the mean latitude so that
// distances look right at basin scale), each with its trend symbol and id.
// The extent is that of all selected stations, so maps of different
// variables line up.
func mapFigure(variable string, series, all []*Series, png bool) (*Figure, error) {
	var lats, lons []float64
	for _, s := range all {
		if !math.IsNaN(s.Station.Lat) && !math.IsNaN(s.Station.Lon) {
			lats = append(lats, s.Station.Lat)
			lons = append(lons, s.Station.Lon)
		}
	}
	if len(lats) == 0 || !anyCoords(series) {
		return nil, nil
	}
	la0, la1 := minMax(lats)
	lo0, lo1 := minMax(lons)
	k := math.Cos((la0 + la1) / 2 * math.Pi / 180)
	padLa, padLo := math.Max((la1-la0)*0.08, 0.01), math.Max((lo1-lo0)*0.08, 0.01/k)
	la0, la1, lo0, lo1 = la0-padLa, la1+padLa, lo0-padLo, lo1+padLo
	// Leave a strip on the right for the legend.
	lo1 += (lo1 - lo0) * 0.55
	p := newPlot("Stations: "+variable, "longitude (°)", "latitude (°)")
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = lo0, lo1, la0, la1
	p.X.Tick.Marker, p.Y.Tick.Marker = plainTicks{}, plainTicks{}
	labels := &stationLabels{r: vg.Points(4.5), legend: &p.Legend,
		leader: draw.LineStyle{Color: ColLeader, Width: vg.Points(0.4)}}
	labels.style = text.Style{Font: fontBody, Color: inkSoft, Handler: plot.DefaultTextHandler}
	labels.style.Font.Size = 6
	for _, s := range series {
		if math.IsNaN(s.Station.Lat) || math.IsNaN(s.Station.Lon) {
			continue
		}
		m, c := markFor(slopeOf(s), significant(s))
		p.Add(&points{pts: []xy{{s.Station.Lon, s.Station.Lat}}, glyph: draw.GlyphStyle{Color: c, Radius: vg.Points(4.5), Shape: m}})
		labels.pts = append(labels.pts, xy{s.Station.Lon, s.Station.Lat})
		labels.ids = append(labels.ids, s.Station.ID)
	}
	p.Add(labels)
	p.Legend.Left = false
	p.Legend.XOffs = -6
	p.Legend.Padding = 3
	addMarkLegend(p, vg.Points(3.5))
	// Height from the projected aspect ratio of the data area (about 50 pt
	// of axes and title outside it).
	aspect := (la1 - la0) / ((lo1 - lo0) * k)
	h := vg.Length(math.Min(560, math.Max(220, (mapW-50)*aspect+60)))
	f, err := render(p, "map-"+slug(variable), "map of the stations measuring "+variable+" with trend symbols", mapW, h, png)
	if f != nil && labels.Omitted > 0 {
		f.Note = plural(labels.Omitted, "station id", "station ids") + " left out where there was no room beside the symbol (the table lists every station)."
	}
	return f, err
}

func anyCoords(series []*Series) bool {
	for _, s := range series {
		if !math.IsNaN(s.Station.Lat) && !math.IsNaN(s.Station.Lon) {
			return true
		}
	}
	return false
}

func minMax(x []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range x {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	return
}

// groupFigure: Sen slopes per year of one variable grouped by a metadata
// attribute, each with its interval and trend symbol.
func groupFigure(variable, unit, attr string, series []*Series, png bool) (*Figure, error) {
	groups := map[string][]*Series{}
	for _, s := range series {
		g, ok := s.Station.metaByKey[attr]
		if !ok || g == "" {
			g = "(none)"
		}
		groups[g] = append(groups[g], s)
	}
	names := make([]string, 0, len(groups))
	for g := range groups {
		names = append(names, g)
	}
	sort.Strings(names)
	xl := "Sen slope per year"
	if unit != "" {
		xl += " (" + unit + "/year)"
	}
	p := newPlot(variable+" by "+attr, xl, "")
	p.X.Tick.Marker = plainTicks{}
	p.NominalY(names...)
	p.Add(&vLine{X: 0, style: draw.LineStyle{Color: ColZero, Width: vg.Points(0.8)}})
	for gi, g := range names {
		ss := groups[g]
		for j, s := range ss {
			y := float64(gi)
			if len(ss) > 1 {
				y += 0.5 * (float64(j)/float64(len(ss)-1) - 0.5)
			}
			sl := slopeOf(s)
			if math.IsNaN(sl) {
				continue
			}
			m, c := markFor(sl, significant(s))
			p.Add(&whiskers{Lo: []float64{s.Sum.number("sen_lower")}, Hi: []float64{s.Sum.number("sen_upper")}, Y: []float64{y},
				style: draw.LineStyle{Color: c, Width: vg.Points(0.8)}})
			p.Add(&points{pts: []xy{{sl, y}}, glyph: draw.GlyphStyle{Color: c, Radius: vg.Points(3.5), Shape: m}})
		}
	}
	p.Y.Min, p.Y.Max = -0.6, float64(len(names))-0.4
	h := vg.Length(70 + 34*len(names))
	return render(p, "group-"+slug(variable), variable+" Sen slopes grouped by "+attr, groupW, h, png)
}
