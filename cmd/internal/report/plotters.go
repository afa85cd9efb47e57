package report

import (
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Runs, gaps and thinning of long series.
//
// A series is cut into runs wherever two consecutive readings are more
// than gapFactor sampling steps apart; runs are drawn as separate lines so
// a gap shows as a gap, and a run of one reading as a dot. A run with more
// readings than the chart has room for is thinned per column of the plot
// area: each column keeps its first, lowest, highest and last reading in
// time order, which draws the same picture as every reading at that
// width (every extreme and every column boundary crossing is kept).

const gapFactor = 1.5

// xy is one drawn point in data units.
type xy struct{ X, Y float64 }

// splitRuns cuts (t, v) into runs at spacings above gapFactor·step; NaN
// values are left out and also end a run.
func splitRuns(t []float64, v []float64, step float64) [][]xy {
	var runs [][]xy
	var cur []xy
	for i := range t {
		if math.IsNaN(v[i]) {
			if len(cur) > 0 {
				runs = append(runs, cur)
				cur = nil
			}
			continue
		}
		if len(cur) > 0 && step > 0 && t[i]-cur[len(cur)-1].X > gapFactor*step {
			runs = append(runs, cur)
			cur = nil
		}
		cur = append(cur, xy{t[i], v[i]})
	}
	if len(cur) > 0 {
		runs = append(runs, cur)
	}
	return runs
}

// thin keeps the first, lowest, highest and last point of each of cols
// equal columns over [x0, x1] (in time order, without repeats).
func thin(run []xy, x0, x1 float64, cols int) []xy {
	if len(run) <= 4*cols || cols < 1 || !(x1 > x0) {
		return run
	}
	out := make([]xy, 0, 4*cols)
	col := func(x float64) int { return int(math.Min(float64(cols-1), math.Floor((x-x0)/(x1-x0)*float64(cols)))) }
	for i := 0; i < len(run); {
		c := col(run[i].X)
		j := i
		lo, hi := i, i
		for j < len(run) && col(run[j].X) == c {
			if run[j].Y < run[lo].Y {
				lo = j
			}
			if run[j].Y > run[hi].Y {
				hi = j
			}
			j++
		}
		keep := []int{i, lo, hi, j - 1}
		if lo > hi {
			keep[1], keep[2] = hi, lo
		}
		last := -1
		for _, k := range keep {
			if k != last {
				out = append(out, run[k])
				last = k
			}
		}
		i = j
	}
	return out
}

// lineRuns draws runs as separate polylines and runs of one point as dots.
type lineRuns struct {
	runs [][]xy
	line draw.LineStyle
	dot  draw.GlyphStyle
}

func (l *lineRuns) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	for _, r := range l.runs {
		if len(r) == 1 {
			c.DrawGlyphNoClip(l.dot, vg.Point{X: trX(r[0].X), Y: trY(r[0].Y)})
			continue
		}
		pts := make([]vg.Point, len(r))
		for i, q := range r {
			pts[i] = vg.Point{X: trX(q.X), Y: trY(q.Y)}
		}
		c.StrokeLines(l.line, pts)
	}
}

func (l *lineRuns) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, ymin = math.Inf(1), math.Inf(1)
	xmax, ymax = math.Inf(-1), math.Inf(-1)
	for _, r := range l.runs {
		for _, q := range r {
			xmin, xmax = math.Min(xmin, q.X), math.Max(xmax, q.X)
			ymin, ymax = math.Min(ymin, q.Y), math.Max(ymax, q.Y)
		}
	}
	return
}

func (l *lineRuns) Thumbnail(c *draw.Canvas) {
	y := c.Center().Y
	c.StrokeLine2(l.line, c.Min.X, y, c.Max.X, y)
}

// hLine is a horizontal line across the plot at Y (not part of the data
// range).
type hLine struct {
	Y     float64
	style draw.LineStyle
}

func (h *hLine) Plot(c draw.Canvas, p *plot.Plot) {
	_, trY := p.Transforms(&c)
	y := trY(h.Y)
	c.StrokeLine2(h.style, c.Min.X, y, c.Max.X, y)
}

func (h *hLine) Thumbnail(c *draw.Canvas) {
	y := c.Center().Y
	c.StrokeLine2(h.style, c.Min.X, y, c.Max.X, y)
}

// vLine is a vertical line at X (not part of the data range).
type vLine struct {
	X     float64
	style draw.LineStyle
}

func (v *vLine) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	x := trX(v.X)
	c.StrokeLine2(v.style, x, c.Min.Y, x, c.Max.Y)
}

// bars draws a bar from 0 to Y[i] at X[i], Width data units wide.
type bars struct {
	X, Y  []float64
	Width float64
	Color color.Color
}

func (b *bars) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	for i := range b.X {
		if math.IsNaN(b.Y[i]) {
			continue
		}
		x0, x1 := trX(b.X[i]-b.Width/2), trX(b.X[i]+b.Width/2)
		y0, y1 := trY(0), trY(b.Y[i])
		c.FillPolygon(b.Color, []vg.Point{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}})
	}
}

func (b *bars) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, ymin, xmax, ymax = math.Inf(1), 0, math.Inf(-1), 0
	for i := range b.X {
		xmin, xmax = math.Min(xmin, b.X[i]-b.Width/2), math.Max(xmax, b.X[i]+b.Width/2)
		if !math.IsNaN(b.Y[i]) {
			ymin, ymax = math.Min(ymin, b.Y[i]), math.Max(ymax, b.Y[i])
		}
	}
	return
}

func (b *bars) Thumbnail(c *draw.Canvas) {
	w := (c.Max.X - c.Min.X) / 3
	x := c.Center().X
	c.FillPolygon(b.Color, []vg.Point{{X: x - w/2, Y: c.Min.Y}, {X: x + w/2, Y: c.Min.Y}, {X: x + w/2, Y: c.Max.Y}, {X: x - w/2, Y: c.Max.Y}})
}

// points draws a glyph at each point.
type points struct {
	pts   []xy
	glyph draw.GlyphStyle
}

func (s *points) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	for _, q := range s.pts {
		c.DrawGlyphNoClip(s.glyph, vg.Point{X: trX(q.X), Y: trY(q.Y)})
	}
}

func (s *points) DataRange() (xmin, xmax, ymin, ymax float64) {
	l := lineRuns{runs: [][]xy{s.pts}}
	return l.DataRange()
}

func (s *points) GlyphBoxes(p *plot.Plot) []plot.GlyphBox {
	bs := make([]plot.GlyphBox, len(s.pts))
	for i, q := range s.pts {
		bs[i] = plot.GlyphBox{X: p.X.Norm(q.X), Y: p.Y.Norm(q.Y), Rectangle: s.glyph.Rectangle()}
	}
	return bs
}

func (s *points) Thumbnail(c *draw.Canvas) { c.DrawGlyphNoClip(s.glyph, c.Center()) }

// whiskers draws horizontal interval lines from Lo[i] to Hi[i] at Y[i].
type whiskers struct {
	Lo, Hi, Y []float64
	style     draw.LineStyle
}

func (w *whiskers) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	for i := range w.Y {
		if math.IsNaN(w.Lo[i]) || math.IsNaN(w.Hi[i]) {
			continue
		}
		y := trY(w.Y[i])
		c.StrokeLine2(w.style, trX(w.Lo[i]), y, trX(w.Hi[i]), y)
	}
}

func (w *whiskers) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, ymin = math.Inf(1), math.Inf(1)
	xmax, ymax = math.Inf(-1), math.Inf(-1)
	for i := range w.Y {
		for _, v := range []float64{w.Lo[i], w.Hi[i]} {
			if !math.IsNaN(v) {
				xmin, xmax = math.Min(xmin, v), math.Max(xmax, v)
			}
		}
		ymin, ymax = math.Min(ymin, w.Y[i]), math.Max(ymax, w.Y[i])
	}
	return
}

// Trend symbol: a wedge whose point shows the direction of the Sen slope
// (up or down), filled when the trend is significant after the FDR
// adjustment and drawn as an outline otherwise, with a short bar across its
// base so that the outline form stays legible at small sizes; a small ring
// marks a series without an estimate or with a zero slope.
type trendMark struct {
	Dir    int  // +1 up, -1 down, 0 no estimate
	Filled bool // significant
}

func (m trendMark) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(1.1)})
	if m.Dir == 0 {
		var p vg.Path
		p.Move(vg.Point{X: pt.X + r*0.55, Y: pt.Y})
		p.Arc(pt, r*0.55, 0, 2*math.Pi)
		p.Close()
		c.Stroke(p)
		return
	}
	d := vg.Length(m.Dir)
	tip := vg.Point{X: pt.X, Y: pt.Y + d*r}
	bl := vg.Point{X: pt.X - r*0.8, Y: pt.Y - d*r*0.6}
	br := vg.Point{X: pt.X + r*0.8, Y: pt.Y - d*r*0.6}
	var p vg.Path
	p.Move(tip)
	p.Line(br)
	p.Line(bl)
	p.Close()
	if m.Filled {
		c.SetColor(sty.Color)
		c.Fill(p)
	}
	c.Stroke(p)
	var base vg.Path
	base.Move(vg.Point{X: pt.X - r, Y: pt.Y - d*r*0.95})
	base.Line(vg.Point{X: pt.X + r, Y: pt.Y - d*r*0.95})
	c.Stroke(base)
}

// markFor is the symbol and colour of a series' trend.
func markFor(slope float64, significant bool) (trendMark, color.Color) {
	switch {
	case math.IsNaN(slope):
		return trendMark{}, ColNone
	case slope > 0:
		return trendMark{Dir: 1, Filled: significant}, ColUp
	case slope < 0:
		return trendMark{Dir: -1, Filled: significant}, ColDown
	}
	return trendMark{}, ColNone
}

// Reading markers: an open diamond for a qualifier flag, an open triangle
// pointing the way the true value lies for a censored reading.
type openDiamond struct{}

func (openDiamond) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(0.9)})
	var p vg.Path
	p.Move(vg.Point{X: pt.X, Y: pt.Y + r})
	p.Line(vg.Point{X: pt.X + r, Y: pt.Y})
	p.Line(vg.Point{X: pt.X, Y: pt.Y - r})
	p.Line(vg.Point{X: pt.X - r, Y: pt.Y})
	p.Close()
	c.Stroke(p)
}

type openTriangle struct{ Down bool }

func (t openTriangle) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius
	d := vg.Length(1)
	if t.Down {
		d = -1
	}
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(0.9)})
	var p vg.Path
	p.Move(vg.Point{X: pt.X, Y: pt.Y + d*r})
	p.Line(vg.Point{X: pt.X + r*0.9, Y: pt.Y - d*r*0.6})
	p.Line(vg.Point{X: pt.X - r*0.9, Y: pt.Y - d*r*0.6})
	p.Close()
	c.Stroke(p)
}
