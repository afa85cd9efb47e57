package report

import (
	"context"
	"encoding/xml"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"trendsql/sqlfuncs/stats"
	"trendsql/store"
	"trendsql/store/demodata"
	"trendsql/store/summaries"
)

// The tests share one demo store (the invented Vorlen basin) with one extra
// station whose name, metadata, variable and unit are hostile to HTML; its
// readings are a copy of a demo series. The store is summarized once.

const (
	hostileStation = `../x<script>`
	hostileName    = `<script>alert(1)</script>`
	hostileMeta    = `{"aquifer":"karst & <chalk>","owner":"Smith & \"Sons\" 'Ltd'"}`
	hostileVar     = `nitrate "A&B"`
	hostileUnit    = `<LOQ mg/L`

	censoredStation = "CENS-01"
)

var fixture struct {
	once sync.Once
	dir  string
	path string
	err  error
}

func TestMain(m *testing.M) {
	code := m.Run()
	if fixture.dir != "" {
		os.RemoveAll(fixture.dir)
	}
	os.Exit(code)
}

// demoPath returns the path of the shared, summarized demo store.
func demoPath(t *testing.T) string {
	t.Helper()
	fixture.once.Do(func() {
		fixture.dir, fixture.err = os.MkdirTemp("", "trendsql-report-test-")
		if fixture.err != nil {
			return
		}
		fixture.path = filepath.Join(fixture.dir, "demo.db")
		fixture.err = buildFixture(fixture.path)
	})
	if fixture.err != nil {
		t.Fatalf("demo store: %v", fixture.err)
	}
	return fixture.path
}

func buildFixture(path string) error {
	ctx := context.Background()
	if _, err := demodata.Create(ctx, path, demodata.Options{}, false); err != nil {
		return err
	}
	s, err := store.Open(ctx, path, store.Options{})
	if err != nil {
		return err
	}
	defer s.Close()
	for _, q := range []string{
		`INSERT INTO stations (id, name, latitude, longitude, metadata) VALUES ('` + hostileStation + `', '` + hostileName + `', 46.88, 12.52, '` + strings.ReplaceAll(hostileMeta, "'", "''") + `')`,
		`INSERT INTO series (station_id, variable, unit) VALUES ('` + hostileStation + `', '` + hostileVar + `', '` + hostileUnit + `')`,
		`INSERT INTO readings (series_id, t, value, qualifier)
		 SELECT (SELECT id FROM series WHERE station_id = '` + hostileStation + `'), r.t, r.value, r.qualifier
		 FROM readings r JOIN series s ON s.id = r.series_id WHERE s.station_id = 'VOR-M01' AND s.variable = 'nitrate_n'`,
		// A copy of a demo nitrate series whose readings flagged "below
		// detection limit" are stored as left-censored at their value.
		`INSERT INTO stations (id, name, latitude, longitude, metadata) SELECT '` + censoredStation + `', 'copy of ' || name, latitude, longitude, metadata FROM stations WHERE id = 'VOR-M07'`,
		`INSERT INTO series (station_id, variable, unit) VALUES ('` + censoredStation + `', 'nitrate_n', 'mg/L')`,
		`INSERT INTO readings (series_id, t, value, qualifier, censored)
		 SELECT (SELECT id FROM series WHERE station_id = '` + censoredStation + `'), r.t, r.value, r.qualifier,
		        CASE WHEN r.qualifier = 'below detection limit' THEN '<' END
		 FROM readings r JOIN series s ON s.id = r.series_id WHERE s.station_id = 'VOR-M07' AND s.variable = 'nitrate_n'`,
	} {
		if _, err := s.DB.ExecContext(ctx, q); err != nil {
			return fmt.Errorf("%s: %w", q, err)
		}
	}
	_, err = summaries.Run(ctx, s, summaries.Options{
		Model:       fixtureModel,
		ToolVersion: "test", Analyze: stats.SummarizeSeries, WriteWait: time.Minute,
	})
	return err
}

// fixtureModel is the summarize model of the fixture's run.
var fixtureModel = stats.SummaryOptions{PeriodS: secondsPerYear, Harmonics: 2, Seasons: 12, MaxLag: 24,
	Alpha: 0.05, Confidence: 0.95, MinN: 10}

// writeReport writes a report of the selection into a fresh folder.
func writeReport(t *testing.T, s *store.Store, o Options) *Result {
	t.Helper()
	if o.Dir == "" {
		o.Dir = filepath.Join(t.TempDir(), "report")
	}
	o.Tool = "trendsql test"
	res, err := Write(context.Background(), s.DB, o)
	if err != nil {
		t.Fatalf("Write: %v", err)
	}
	return res
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// svgFigure is one chart of a page: its axis maps and its drawn paths.
type svgFigure struct {
	xMap, yMap axisMap
	paths      []svgPath
}

type svgPath struct {
	style map[string]string
	subs  [][][2]float64 // vertices (M and L) of each subpath
	arcs  int            // arc commands (circles)
}

var figureRe = regexp.MustCompile(`(?s)<figure id="([^"]+)" data-x-map="([^"]+)" data-y-map="([^"]+)">(<svg.*?</svg>)`)

// figures extracts every chart of an HTML page by figure id.
func figures(t *testing.T, page string) map[string]*svgFigure {
	t.Helper()
	out := map[string]*svgFigure{}
	for _, m := range figureRe.FindAllStringSubmatch(page, -1) {
		f := &svgFigure{xMap: parseMap(t, m[2]), yMap: parseMap(t, m[3])}
		dec := xml.NewDecoder(strings.NewReader(m[4]))
		for {
			tok, err := dec.Token()
			if err != nil {
				break
			}
			se, ok := tok.(xml.StartElement)
			if !ok || se.Name.Local != "path" {
				continue
			}
			var p svgPath
			p.style = map[string]string{}
			for _, a := range se.Attr {
				switch a.Name.Local {
				case "d":
					p.subs, p.arcs = parsePathData(t, a.Value)
				case "style":
					for _, kv := range strings.Split(a.Value, ";") {
						if k, v, ok := strings.Cut(kv, ":"); ok {
							p.style[k] = v
						}
					}
				}
			}
			f.paths = append(f.paths, p)
		}
		out[m[1]] = f
	}
	return out
}

func parseMap(t *testing.T, s string) axisMap {
	var m axisMap
	if _, err := fmt.Sscan(s, &m.A, &m.B, &m.PA, &m.PB); err != nil {
		t.Fatalf("axis map %q: %v", s, err)
	}
	return m
}

// to maps a data value to drawing coordinates.
func (m axisMap) to(v float64) float64 { return m.PA + (v-m.A)*(m.PB-m.PA)/(m.B-m.A) }

// from maps drawing coordinates back to data.
func (m axisMap) from(p float64) float64 { return m.A + (p-m.PA)*(m.B-m.A)/(m.PB-m.PA) }

var pathTok = regexp.MustCompile(`[MLAZQC]|-?[0-9.]+(?:e[-+]?[0-9]+)?`)

func parsePathData(t *testing.T, d string) (subs [][][2]float64, arcs int) {
	toks := pathTok.FindAllString(d, -1)
	var cur [][2]float64
	for i := 0; i < len(toks); {
		switch toks[i] {
		case "M", "L":
			x, err1 := strconv.ParseFloat(toks[i+1], 64)
			y, err2 := strconv.ParseFloat(toks[i+2], 64)
			if err1 != nil || err2 != nil {
				t.Fatalf("path data %q", d)
			}
			if toks[i] == "M" && len(cur) > 0 {
				subs = append(subs, cur)
				cur = nil
			}
			cur = append(cur, [2]float64{x, y})
			i += 3
		case "A":
			arcs++
			i += 8
		case "Z":
			i++
		default:
			t.Fatalf("unexpected path command %q in %q", toks[i], d)
		}
	}
	if len(cur) > 0 {
		subs = append(subs, cur)
	}
	return
}

// strokes returns the paths stroked in colour c; fills those filled in c.
func (f *svgFigure) strokes(c string) []svgPath {
	var out []svgPath
	for _, p := range f.paths {
		if p.style["stroke"] == c && p.style["fill"] == "none" {
			out = append(out, p)
		}
	}
	return out
}

func (f *svgFigure) fills(c string) []svgPath {
	var out []svgPath
	for _, p := range f.paths {
		if p.style["fill"] == c {
			out = append(out, p)
		}
	}
	return out
}

// drawTol is the drawing precision: the SVG back end prints coordinates
// with five significant digits (at most 0.005 pt off on a 720 pt chart).
const drawTol = 0.011

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }
