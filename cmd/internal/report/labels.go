package report

import (
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// stationLabels writes each station id beside its symbol where the text
// covers no symbol, no id placed before it and not the legend, inside the
// plot area: to the right, left, above or below the symbol, then on the
// diagonals; then the same further out with a thin leader line to the
// symbol. An id that finds no free place is left out (the index table
// lists every station); Omitted counts those of the last drawing and
// Boxes holds the placed ids' extents in drawing units.
type stationLabels struct {
	pts    []xy
	ids    []string
	style  text.Style
	r      vg.Length // half the symbol's extent
	leader draw.LineStyle
	legend *plot.Legend

	Omitted int
	Boxes   []vg.Rectangle
}

// labelDirs are tried in this order: the four sides, then the diagonals.
var labelDirs = [][2]float64{{1, 0}, {-1, 0}, {0, 1}, {0, -1}, {1, 1}, {-1, 1}, {1, -1}, {-1, -1}}

func (l *stationLabels) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	l.Omitted, l.Boxes = 0, l.Boxes[:0]
	pos := make([]vg.Point, len(l.pts))
	var taken []vg.Rectangle
	for i, q := range l.pts {
		pos[i] = vg.Point{X: trX(q.X), Y: trY(q.Y)}
		taken = append(taken, vg.Rectangle{Min: vg.Point{X: pos[i].X - l.r, Y: pos[i].Y - l.r}, Max: vg.Point{X: pos[i].X + l.r, Y: pos[i].Y + l.r}})
	}
	if l.legend != nil {
		taken = append(taken, legendBox(l.legend, c.Rectangle))
	}
	for i, id := range l.ids {
		rect := l.style.Rectangle(id)
		placed := false
		for _, gap := range []vg.Length{1.5, 9, 17, 26, 36} {
			for _, d := range labelDirs {
				k := vg.Length(1)
				if d[0] != 0 && d[1] != 0 {
					k = vg.Length(math.Sqrt2 / 2)
				}
				ring := (l.r + gap) * k
				edge := vg.Point{X: pos[i].X + vg.Length(d[0])*ring, Y: pos[i].Y + vg.Length(d[1])*ring}
				anchor := vg.Point{X: edge.X - side(d[0], rect.Min.X, rect.Max.X), Y: edge.Y - side(d[1], rect.Min.Y, rect.Max.Y)}
				box := rect.Add(anchor)
				if !within(box, c.Rectangle) || overlapsAny(box, taken) {
					continue
				}
				if gap > 2 {
					from := vg.Point{X: pos[i].X + vg.Length(d[0])*l.r*k, Y: pos[i].Y + vg.Length(d[1])*l.r*k}
					c.StrokeLine2(l.leader, from.X, from.Y, edge.X, edge.Y)
				}
				c.FillText(l.style, anchor, id)
				taken = append(taken, box)
				l.Boxes = append(l.Boxes, box)
				placed = true
				break
			}
			if placed {
				break
			}
		}
		if !placed {
			l.Omitted++
		}
	}
}

// legendBox is where Legend.Draw puts the legend on the area c, with a
// margin of 4 pt. Legend.Rectangle gives its size; its horizontal side is
// taken here as Draw takes it (on the right unless Left is set).
func legendBox(l *plot.Legend, c vg.Rectangle) vg.Rectangle {
	r := l.Rectangle(draw.Canvas{Rectangle: c})
	w := r.Max.X - r.Min.X
	if l.Left {
		r.Min.X = c.Min.X
	} else {
		r.Min.X = c.Max.X - w
	}
	r.Max.X = r.Min.X + w
	r = r.Add(vg.Point{X: l.XOffs, Y: l.YOffs})
	r.Min = r.Min.Sub(vg.Point{X: 4, Y: 4})
	r.Max = r.Max.Add(vg.Point{X: 4, Y: 4})
	return r
}

// side is the offset, from the text anchor, of the edge of the text that
// faces the symbol: its near end for d > 0, its far end for d < 0, its
// middle for d = 0.
func side(d float64, lo, hi vg.Length) vg.Length {
	switch {
	case d > 0:
		return lo
	case d < 0:
		return hi
	}
	return (lo + hi) / 2
}

func within(b, c vg.Rectangle) bool {
	return b.Min.X >= c.Min.X && b.Min.Y >= c.Min.Y && b.Max.X <= c.Max.X && b.Max.Y <= c.Max.Y
}

func overlapsAny(b vg.Rectangle, taken []vg.Rectangle) bool {
	for _, t := range taken {
		if b.Min.X < t.Max.X && t.Min.X < b.Max.X && b.Min.Y < t.Max.Y && t.Min.Y < b.Max.Y {
			return true
		}
	}
	return false
}
