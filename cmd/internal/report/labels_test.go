package report

import (
	"fmt"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Station ids on a map never cover each other, a symbol or the legend, and
// stay inside the plot area; an id without room is left out and counted.
// Ids of stations far apart sit right beside their symbols.
func TestStationLabelsDoNotOverlap(t *testing.T) {
	rng := rand.New(rand.NewPCG(16, 1))
	for _, c := range []struct {
		name     string
		n        int
		spread   float64
		omitNone bool
	}{{"crowded", 60, 0.15, false}, {"spread", 6, 1, true}} {
		p := newPlot("test map", "x", "y")
		p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = 0, 1.55, 0, 1
		p.Legend.Left = false
		addMarkLegend(p, vg.Points(3.5))
		l := &stationLabels{r: vg.Points(4.5), legend: &p.Legend, leader: draw.LineStyle{Color: ColLeader, Width: vg.Points(0.4)}}
		l.style = text.Style{Font: fontBody, Color: inkSoft, Handler: plot.DefaultTextHandler}
		l.style.Font.Size = 6
		for i := 0; i < c.n; i++ {
			var q xy
			if c.omitNone {
				q = xy{0.1 + 0.18*float64(i), 0.1 + 0.15*float64(i%3)}
			} else {
				q = xy{0.3 + c.spread*rng.Float64(), 0.4 + c.spread*rng.Float64()}
			}
			l.pts = append(l.pts, q)
			l.ids = append(l.ids, fmt.Sprintf("ST-%02d", i))
		}
		p.Add(l)
		f, err := render(p, "map-test", "test map", mapW, 300, false)
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("%s: %d ids placed, %d left out", c.name, len(l.Boxes), l.Omitted)
		if len(l.Boxes)+l.Omitted != c.n {
			t.Fatalf("%s: %d placed + %d left out, %d ids", c.name, len(l.Boxes), l.Omitted, c.n)
		}
		if c.omitNone && l.Omitted != 0 {
			t.Errorf("%s: %d ids left out of a map with room for all", c.name, l.Omitted)
		}
		if !c.omitNone && len(l.Boxes) == 0 {
			t.Errorf("%s: no id placed", c.name)
		}
		area := vg.Rectangle{Min: vg.Point{X: vg.Length(f.XMap.PA), Y: vg.Length(f.YMap.PA)}, Max: vg.Point{X: vg.Length(f.XMap.PB), Y: vg.Length(f.YMap.PB)}}
		// The map's legend is drawn in the top right corner of the plot area.
		legend := legendBox(&p.Legend, area)
		if !near(float64(legend.Max.X), float64(area.Max.X+p.Legend.XOffs+4), 1e-9) || !near(float64(legend.Max.Y), float64(area.Max.Y+p.Legend.YOffs+4), 1e-9) {
			t.Errorf("legend box %v is not in the top right corner of %v", legend, area)
		}
		for i, b := range l.Boxes {
			if !within(b, area) {
				t.Errorf("%s: id box %v outside the plot area %v", c.name, b, area)
			}
			if overlapsAny(b, []vg.Rectangle{legend}) {
				t.Errorf("%s: id box %v covers the legend %v", c.name, b, legend)
			}
			for j, o := range l.Boxes[:i] {
				if overlapsAny(b, []vg.Rectangle{o}) {
					t.Errorf("%s: id boxes %d %v and %d %v overlap", c.name, i, b, j, o)
				}
			}
			for _, q := range l.pts {
				x, y := vg.Length(f.XMap.to(q.X)), vg.Length(f.YMap.to(q.Y))
				sym := vg.Rectangle{Min: vg.Point{X: x - l.r, Y: y - l.r}, Max: vg.Point{X: x + l.r, Y: y + l.r}}
				if overlapsAny(b, []vg.Rectangle{sym}) {
					t.Errorf("%s: id box %v covers the symbol at (%g, %g)", c.name, b, q.X, q.Y)
				}
			}
		}
		if c.omitNone {
			// Each id within 2 pt of its own symbol (the first ring).
			for i, b := range l.Boxes {
				x, y := vg.Length(f.XMap.to(l.pts[i].X)), vg.Length(f.YMap.to(l.pts[i].Y))
				if b.Min.X-(x+l.r) > 2 || b.Min.X < x {
					t.Errorf("%s: id %s at %v, symbol at (%v, %v): not right beside it", c.name, l.ids[i], b, x, y)
				}
			}
		}
		drawn := 0
		for _, id := range l.ids {
			drawn += strings.Count(f.SVG, ">"+id+"<")
		}
		if drawn != len(l.Boxes) {
			t.Errorf("%s: %d ids in the SVG, %d placed", c.name, drawn, len(l.Boxes))
		}
	}
}
