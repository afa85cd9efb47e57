package report

import (
	"bytes"
	"fmt"
	"html"
	"image/color"
	"math"
	"strings"
	"time"

	xfnt "golang.org/x/image/font"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"trendsql/sqlfuncs/stats"
)

const secondsPerYear = stats.SecondsPerYear

// Palette: Paul Tol's "bright" qualitative scheme, designed to stay
// distinct under the common colour-vision deficiencies (P. Tol, "Colour
// Schemes", SRON Technical Note SRON/EPS/TN/09-002, issue 3.2, 2021).
// Every chart also separates its elements by shape or line style, so no
// meaning rests on colour alone.
var (
	tolBlue   = color.RGBA{0x44, 0x77, 0xAA, 0xFF}
	tolRed    = color.RGBA{0xEE, 0x66, 0x77, 0xFF}
	tolGreen  = color.RGBA{0x22, 0x88, 0x33, 0xFF}
	tolPurple = color.RGBA{0xAA, 0x33, 0x77, 0xFF}
	tolGrey   = color.RGBA{0xBB, 0xBB, 0xBB, 0xFF}
	tolIndigo = color.RGBA{0x33, 0x22, 0x88, 0xFF} // from Tol's "muted" scheme (same note)
	ink       = color.RGBA{0x2A, 0x2D, 0x34, 0xFF}
	inkSoft   = color.RGBA{0x55, 0x5A, 0x64, 0xFF}
)

// Element colours. Each chart element has a colour of its own, which also
// lets the tests find it in the SVG.
var (
	ColReadings = tolBlue   // readings line and isolated readings
	ColTrend    = tolRed    // straight-line trend
	ColSeasonal = tolPurple // trend plus seasonal cycle
	ColSen      = tolIndigo // Sen slope line (dotted)
	ColFlagged  = tolGreen  // qualifier-flagged readings
	ColCensored = ink       // censored readings
	ColZero     = inkSoft   // zero lines
	ColBars     = tolBlue   // ACF bars
	ColBand     = tolRed    // ±1.96/√n band and the α line
	ColLB       = tolBlue   // Ljung–Box p by lag
	ColUp       = tolRed    // map/slope symbol: increase
	ColDown     = tolBlue   // map/slope symbol: decrease
	ColNone     = tolGrey   // no estimate
	ColLeader   = tolGrey   // map: line from a symbol to its id set further out
)

// hexColor is the colour as the SVG back end writes it.
func hexColor(c color.RGBA) string { return fmt.Sprintf("#%02X%02X%02X", c.R, c.G, c.B) }

var (
	fontBody  = font.Font{Typeface: "Liberation", Variant: "Sans", Size: 8.5}
	fontTitle = font.Font{Typeface: "Liberation", Variant: "Sans", Weight: xfnt.WeightBold, Size: 10}
)

// newPlot makes an empty plot in the report's style.
func newPlot(title, xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font = fontTitle
	p.Title.TextStyle.Color = ink
	p.Title.TextStyle.XAlign = draw.XLeft
	p.Title.Padding = 6
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = fontBody
		a.Label.TextStyle.Color = inkSoft
		a.Tick.Label.Font = fontBody
		a.Tick.Label.Color = inkSoft
		a.LineStyle.Color = inkSoft
		a.LineStyle.Width = 0.6
		a.Tick.LineStyle.Color = inkSoft
		a.Tick.LineStyle.Width = 0.6
		a.Padding = 4
	}
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	p.Legend.TextStyle.Font = fontBody
	p.Legend.TextStyle.Color = ink
	p.Legend.Top = true
	p.Legend.Left = true
	p.Legend.ThumbnailWidth = 18
	p.Legend.XOffs = 6
	p.Legend.YOffs = -2
	p.Legend.Padding = 1.5
	return p
}

// axisMap records where data values land in the SVG path coordinates
// (points, origin at the bottom left, before the SVG's own y flip): a data
// value a maps to A and b to B, linearly.
type axisMap struct{ A, B, PA, PB float64 }

func (m axisMap) attr() string { return fmt.Sprintf("%.12g %.12g %.12g %.12g", m.A, m.B, m.PA, m.PB) }

// Figure is one rendered chart: the SVG to inline and, if asked, a PNG.
type Figure struct {
	Name    string // short name, also the PNG file suffix
	Caption string
	Note    string // said after the caption (e.g. what a chart leaves out)
	SVG     string // <svg> element, ready to inline
	PNG     []byte
	XMap    axisMap
	YMap    axisMap
}

// render draws p at w×h points as inline SVG (and PNG when png is set) and
// records the data-to-drawing maps of both axes.
func render(p *plot.Plot, name, label string, w, h vg.Length, png bool) (*Figure, error) {
	f := &Figure{Name: name}
	var err error
	func() {
		defer func() {
			if r := recover(); r != nil {
				err = fmt.Errorf("report: chart %s: %v", name, r)
			}
		}()
		c := vgsvg.New(w, h)
		dc := draw.New(c)
		p.Draw(dc)
		da := p.DataCanvas(dc)
		trX, trY := p.Transforms(&da)
		f.XMap = axisMap{p.X.Min, p.X.Max, trX(p.X.Min).Points(), trX(p.X.Max).Points()}
		f.YMap = axisMap{p.Y.Min, p.Y.Max, trY(p.Y.Min).Points(), trY(p.Y.Max).Points()}
		var b bytes.Buffer
		if _, err = c.WriteTo(&b); err != nil {
			return
		}
		f.SVG = inlineSVG(b.String(), label)
		if png {
			ic := vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(160))}
			p.Draw(draw.New(ic))
			var pb bytes.Buffer
			if _, err = ic.WriteTo(&pb); err != nil {
				return
			}
			f.PNG = pb.Bytes()
		}
	}()
	return f, err
}

// inlineSVG drops the XML prologue and comment of a standalone SVG and
// gives the root element a class and an accessible label.
func inlineSVG(s, label string) string {
	if i := strings.Index(s, "<svg"); i >= 0 {
		s = s[i:]
	}
	return strings.Replace(s, "<svg ", `<svg class="chart" role="img" aria-label="`+html.EscapeString(label)+`" `, 1)
}

// yearTicks puts major ticks on 1 January every k years (k chosen so that
// at most about eight are labelled) and minor ticks on the other years; for
// spans under two years it ticks months.
type yearTicks struct{}

func (yearTicks) Ticks(min, max float64) []plot.Tick {
	t0 := time.Unix(int64(min), 0).UTC()
	t1 := time.Unix(int64(max), 0).UTC()
	span := (max - min) / secondsPerYear
	var ticks []plot.Tick
	if span < 2 {
		step := 1
		if span > 0.75 {
			step = 3
		}
		for m := time.Date(t0.Year(), t0.Month(), 1, 0, 0, 0, 0, time.UTC); !m.After(t1); m = m.AddDate(0, 1, 0) {
			v := float64(m.Unix())
			if v < min {
				continue
			}
			lab := ""
			if (int(m.Month())-1)%step == 0 {
				lab = m.Format("Jan 2006")
			}
			ticks = append(ticks, plot.Tick{Value: v, Label: lab})
		}
		return ticks
	}
	k := int(math.Ceil(span / 8))
	for y := t0.Year(); y <= t1.Year()+1; y++ {
		v := float64(time.Date(y, 1, 1, 0, 0, 0, 0, time.UTC).Unix())
		if v < min || v > max {
			continue
		}
		lab := ""
		if y%k == 0 {
			lab = fmt.Sprint(y)
		}
		ticks = append(ticks, plot.Tick{Value: v, Label: lab})
	}
	return ticks
}

// plainTicks labels about six round values (steps of 1, 2 or 5 times a
// power of ten) in plain decimal notation, with unlabelled minor ticks
// between them.
type plainTicks struct{}

func (plainTicks) Ticks(min, max float64) []plot.Tick {
	if !(max > min) {
		return []plot.Tick{{Value: min, Label: trimNum(min, 1)}}
	}
	raw := (max - min) / 5
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step := mag
	for _, m := range []float64{1, 2, 5, 10} {
		if m*mag >= raw {
			step = m * mag
			break
		}
	}
	var ts []plot.Tick
	for v := math.Ceil(min/step) * step; v <= max+step*1e-9; v += step {
		ts = append(ts, plot.Tick{Value: v, Label: trimNum(v, step*10)})
		if mv := v + step/2; mv <= max {
			ts = append(ts, plot.Tick{Value: mv})
		}
	}
	if first := math.Ceil(min/step)*step - step/2; first >= min {
		ts = append(ts, plot.Tick{Value: first})
	}
	return ts
}

// trimNum formats v with enough decimals for a range of width span.
func trimNum(v, span float64) string {
	d := 0
	if span > 0 {
		d = max(0, int(math.Ceil(-math.Log10(span)))+2)
	}
	s := fmt.Sprintf("%.*f", min(d, 12), v)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	if s == "-0" {
		s = "0"
	}
	return s
}
