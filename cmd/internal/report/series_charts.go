package report

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Chart sizes in points; the page scales them to its width.
const (
	wideW, readingsH = 720, 260
	residH           = 190
	halfW, halfH     = 355, 210
	plotCols         = 640 // thinning columns of a wide chart (about its plot-area width in points)
	maxMarkers       = 600 // flag markers drawn one per reading up to this count
)

// DrawInfo says how a series was drawn, for the page text and the tests.
type DrawInfo struct {
	Readings  int  // readings of the series
	Drawn     int  // points drawn on the readings line (dots included)
	Runs      int  // lines and dots (a gap separates two)
	Thinned   bool // long runs drawn per column (first, lowest, highest, last)
	Flagged   int  // readings with a qualifier
	Censored  int
	MarkersBy string // how the flag markers were drawn
}

// seriesPlotData is what the per-series charts draw.
type seriesPlotData struct {
	s        *Series
	rd       *Readings
	step     float64 // sampling step in seconds used for gaps and lag units
	lineT    []float64
	line     []float64 // polynomial part of the trend at lineT
	fitT     []float64
	seasonal []float64 // full model at fitT; nil without seasonal terms
	full     bool      // never thin
}

func (d *seriesPlotData) times() []float64 {
	t := make([]float64, len(d.rd.T))
	for i, v := range d.rd.T {
		t[i] = float64(v)
	}
	return t
}

func valueLabel(s *Series) string {
	if s.Unit == "" {
		return s.Variable
	}
	return s.Variable + " (" + s.Unit + ")"
}

func (d *seriesPlotData) drawRuns(v []float64) ([][]xy, bool) {
	t := d.times()
	runs := splitRuns(t, v, d.step)
	thinned := false
	if !d.full && len(t) > 0 {
		for i, r := range runs {
			th := thin(r, t[0], t[len(t)-1], plotCols)
			thinned = thinned || len(th) < len(r)
			runs[i] = th
		}
	}
	return runs, thinned
}

func readingStyle() (draw.LineStyle, draw.GlyphStyle) {
	return draw.LineStyle{Color: ColReadings, Width: vg.Points(0.8)},
		draw.GlyphStyle{Color: ColReadings, Radius: vg.Points(1.4), Shape: draw.CircleGlyph{}}
}

// readingsFigure: readings over time (gaps as gaps), the fitted trend and,
// when the model has seasonal terms, the fitted cycle; flagged and censored
// readings marked.
func readingsFigure(d *seriesPlotData, png bool) (*Figure, DrawInfo, error) {
	s := d.s
	title := "Readings and fitted trend"
	if d.line == nil {
		title = "Readings"
	}
	p := newPlot(title, "", valueLabel(s))
	p.X.Tick.Marker = yearTicks{}
	p.Y.Tick.Marker = plainTicks{}
	info := DrawInfo{Readings: len(d.rd.T)}
	nLeg := 0
	legend := func(name string, th ...plot.Thumbnailer) {
		p.Legend.Add(name, th...)
		nLeg++
	}
	runs, thinned := d.drawRuns(d.rd.V)
	info.Thinned = thinned
	for _, r := range runs {
		info.Drawn += len(r)
	}
	info.Runs = len(runs)
	ls, dot := readingStyle()
	lr := &lineRuns{runs: runs, line: ls, dot: dot}
	p.Add(lr)
	legend("readings", lr)
	if d.seasonal != nil {
		sl := &lineRuns{runs: [][]xy{zipXY(d.fitT, d.seasonal)}, line: draw.LineStyle{Color: ColSeasonal, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(4), vg.Points(2)}}}
		p.Add(sl)
		legend("fitted trend with seasonal cycle", sl)
	}
	if d.line != nil {
		tl := &lineRuns{runs: [][]xy{zipXY(d.lineT, d.line)}, line: draw.LineStyle{Color: ColTrend, Width: vg.Points(2)}}
		p.Add(tl)
		legend("fitted trend", tl)
	}
	if sen := senLine(d); sen != nil {
		sl := &lineRuns{runs: [][]xy{sen}, line: draw.LineStyle{Color: ColSen, Width: vg.Points(1.4), Dashes: []vg.Length{vg.Points(1.5), vg.Points(1.5)}}}
		p.Add(sl)
		legend(senName(d.s)+" through the medians", sl)
	}
	// Markers.
	t := d.times()
	var flagged, lower, upper, cens []xy
	for i := range t {
		if d.rd.Qual[i] != "" {
			flagged = append(flagged, xy{t[i], d.rd.V[i]})
		}
		switch d.rd.Censored[i] {
		case "<":
			lower = append(lower, xy{t[i], d.rd.V[i]})
		case ">":
			upper = append(upper, xy{t[i], d.rd.V[i]})
		case "censored":
			cens = append(cens, xy{t[i], d.rd.V[i]})
		}
	}
	info.Flagged = len(flagged)
	info.Censored = len(lower) + len(upper) + len(cens)
	info.MarkersBy = "one marker per reading"
	if len(flagged) > maxMarkers {
		flagged = onePerColumn(flagged, t[0], t[len(t)-1], plotCols)
		info.MarkersBy = "at most one marker per plot column"
	}
	if len(flagged) > 0 {
		fp := &points{pts: flagged, glyph: draw.GlyphStyle{Color: ColFlagged, Radius: vg.Points(2.6), Shape: openDiamond{}}}
		p.Add(fp)
		legend("reading with a qualifier flag ("+flagSummary(s)+")", fp)
	}
	for _, c := range []struct {
		pts  []xy
		down bool
		lab  string
	}{{lower, true, "censored: true value below"}, {upper, false, "censored: true value above"}, {cens, true, "censored"}} {
		if len(c.pts) > 0 {
			cp := &points{pts: c.pts, glyph: draw.GlyphStyle{Color: ColCensored, Radius: vg.Points(3), Shape: openTriangle{Down: c.down}}}
			p.Add(cp)
			legend(c.lab, cp)
		}
	}
	headroom(p, 0.06*float64(nLeg+1))
	f, err := render(p, "readings", "readings of "+s.Station.ID+" "+s.Variable+" with the fitted trend", wideW, readingsH, png)
	return f, info, err
}

// senLine is the stored Sen slope drawn through the median time and the
// median value of the readings (a common way to place it; the slope is the
// run's, the intercept only positions the line), from the first reading to
// the last. Nil without a slope.
func senLine(d *seriesPlotData) []xy {
	slope := d.s.Sum.number("sen_slope_per_year")
	n := len(d.rd.T)
	if math.IsNaN(slope) || n < 2 {
		return nil
	}
	tm, ym := medianOf(d.times()), medianOf(d.rd.V)
	t0, t1 := float64(d.rd.T[0]), float64(d.rd.T[n-1])
	return []xy{{t0, ym + slope*(t0-tm)/secondsPerYear}, {t1, ym + slope*(t1-tm)/secondsPerYear}}
}

func senName(s *Series) string {
	if strings.HasPrefix(s.Sum.text("mk_method"), "censored") {
		return "Akritas–Theil–Sen slope"
	}
	return "Sen slope"
}

// medianOf is the sample median (mean of the two middle values for even n).
func medianOf(x []float64) float64 {
	c := append([]float64(nil), x...)
	sort.Float64s(c)
	n := len(c)
	if n%2 == 1 {
		return c[n/2]
	}
	return (c[n/2-1] + c[n/2]) / 2
}

// flagSummary lists the qualifier counts stored with the summary, or "".
func flagSummary(s *Series) string {
	q := s.Sum.text("qualifier_counts")
	if q == "" {
		return "see the figures"
	}
	kv, _ := parseMeta(q)
	parts := make([]string, len(kv))
	for i, e := range kv {
		parts[i] = e.Key + " " + e.Value
	}
	return strings.Join(parts, ", ")
}

// onePerColumn keeps the first point of each plot column.
func onePerColumn(pts []xy, x0, x1 float64, cols int) []xy {
	var out []xy
	last := -1
	for _, q := range pts {
		c := int((q.X - x0) / (x1 - x0) * float64(cols))
		if c != last {
			out = append(out, q)
			last = c
		}
	}
	return out
}

// headroom raises the top of the y axis by share of its range, so that the
// legend in the top left corner does not hide data.
func headroom(p *plot.Plot, share float64) {
	if r := p.Y.Max - p.Y.Min; r > 0 {
		p.Y.Max += share * r / (1 - share)
	}
}

func zipXY(x, y []float64) []xy {
	out := make([]xy, 0, len(x))
	for i := range x {
		if !math.IsNaN(y[i]) {
			out = append(out, xy{x[i], y[i]})
		}
	}
	return out
}

// residualFigure: residuals over time with a zero line.
func residualFigure(d *seriesPlotData, png bool) (*Figure, error) {
	p := newPlot("Residuals from the fitted model", "", "residual ("+unitOr(d.s.Unit, "units of "+d.s.Variable)+")")
	p.X.Tick.Marker = yearTicks{}
	p.Y.Tick.Marker = plainTicks{}
	runs, _ := d.drawRuns(d.rd.Resid)
	ls, dot := readingStyle()
	p.Add(&hLine{Y: 0, style: draw.LineStyle{Color: ColZero, Width: vg.Points(0.8)}})
	p.Add(&lineRuns{runs: runs, line: ls, dot: dot})
	return render(p, "residuals", "residuals of "+d.s.Station.ID+" "+d.s.Variable, wideW, residH, png)
}

func unitOr(u, alt string) string {
	if u == "" {
		return alt
	}
	return u
}

// lagAxis gives the factor from lags to axis units and the axis label: lags
// on the time grid in hours, days or years of the sampling step; lags in
// reading order in readings, with their typical spacing.
func lagAxis(s *Series, step float64) (perLag float64, label string) {
	maxLag := 1
	if n := len(s.Lags); n > 0 {
		maxLag = s.Lags[n-1].Lag
	}
	if s.Sum.text("acf_basis") != "time-grid" || !(step > 0) {
		sp := ""
		if step > 0 {
			sp = ", typically " + fmtDuration(step) + " apart"
		}
		return 1, "lag (readings" + sp + ")"
	}
	span := step * float64(maxLag)
	switch {
	case span <= 4*86400:
		return step / 3600, "lag (hours)"
	case span <= 4*secondsPerYear:
		return step / 86400, "lag (days)"
	}
	return step / secondsPerYear, "lag (years)"
}

// fmtDuration writes seconds as hours, days or years.
func fmtDuration(s float64) string {
	switch {
	case s < 2*3600:
		return trimNum(s/60, 10) + " min"
	case s < 86400:
		return trimNum(s/3600, 10) + " h"
	case s == 86400:
		return "1 day"
	case s < 2*secondsPerYear:
		return trimNum(s/86400, 10) + " days"
	}
	return trimNum(s/secondsPerYear, 10) + " years"
}

// acfFigure: residual sample ACF by lag as bars with the ±1.96/√n band.
func acfFigure(d *seriesPlotData, png bool) (*Figure, error) {
	perLag, xl := lagAxis(d.s, d.step)
	p := newPlot("Residual sample ACF", xl, "sample autocorrelation")
	p.Y.Tick.Marker = plainTicks{}
	x := make([]float64, len(d.s.Lags))
	y := make([]float64, len(d.s.Lags))
	lo, hi := -0.2, 0.2
	band := math.NaN()
	for i, l := range d.s.Lags {
		x[i], y[i] = float64(l.Lag)*perLag, l.ACF
		if !math.IsNaN(l.ACF) {
			lo, hi = math.Min(lo, l.ACF), math.Max(hi, l.ACF)
		}
		if math.IsNaN(band) && !math.IsNaN(l.Band) {
			band = l.Band
		}
	}
	p.Add(&hLine{Y: 0, style: draw.LineStyle{Color: ColZero, Width: vg.Points(0.8)}})
	b := &bars{X: x, Y: y, Width: 0.6 * perLag, Color: ColBars}
	p.Add(b)
	if !math.IsNaN(band) {
		bs := draw.LineStyle{Color: ColBand, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(3), vg.Points(2)}}
		up := &hLine{Y: band, style: bs}
		p.Add(up, &hLine{Y: -band, style: bs})
		p.Legend.Add("±1.96/√n", up)
		lo, hi = math.Min(lo, -band), math.Max(hi, band)
	}
	p.Y.Min, p.Y.Max = lo-0.05, hi+0.05
	p.Legend.Left = false
	p.Legend.XOffs = -4
	p.X.Tick.Marker = plainTicks{}
	headroom(p, 0.2)
	return render(p, "acf", "residual sample autocorrelation of "+d.s.Station.ID+" "+d.s.Variable, halfW, halfH, png)
}

// ljungBoxFigure: the Ljung–Box p-value up to each lag with the α line.
func ljungBoxFigure(d *seriesPlotData, alpha float64, png bool) (*Figure, error) {
	perLag, xl := lagAxis(d.s, d.step)
	p := newPlot("Ljung–Box p-value by lag", xl, "p-value")
	var pts []xy
	for _, l := range d.s.Lags {
		if !math.IsNaN(l.LBP) {
			pts = append(pts, xy{float64(l.Lag) * perLag, l.LBP})
		}
	}
	as := &hLine{Y: alpha, style: draw.LineStyle{Color: ColBand, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(3), vg.Points(2)}}}
	p.Add(as)
	if len(pts) > 0 {
		lr := &lineRuns{runs: [][]xy{pts}, line: draw.LineStyle{Color: ColLB, Width: vg.Points(0.9)}}
		dots := &points{pts: pts, glyph: draw.GlyphStyle{Color: ColLB, Radius: vg.Points(1.8), Shape: draw.CircleGlyph{}}}
		p.Add(lr, dots)
		p.Legend.Add("p-value (lags 1 to k)", lr, dots)
	}
	p.Legend.Add(fmt.Sprintf("α = %g", alpha), as)
	p.Y.Min, p.Y.Max = 0, 1.3
	p.X.Tick.Marker = plainTicks{}
	p.Y.Tick.Marker = plot.ConstantTicks([]plot.Tick{{Value: 0, Label: "0"}, {Value: 0.25, Label: "0.25"}, {Value: 0.5, Label: "0.5"}, {Value: 0.75, Label: "0.75"}, {Value: 1, Label: "1"}})
	p.Legend.Left = false
	p.Legend.XOffs = -4
	return render(p, "ljungbox", "Ljung–Box p-values of "+d.s.Station.ID+" "+d.s.Variable, halfW, halfH, png)
}

// typicalStep is the median spacing of the readings (seconds).
func typicalStep(t []int64) float64 {
	if len(t) < 2 {
		return 0
	}
	d := make([]float64, len(t)-1)
	for i := 1; i < len(t); i++ {
		d[i-1] = float64(t[i] - t[i-1])
	}
	sort.Float64s(d)
	return d[len(d)/2]
}
