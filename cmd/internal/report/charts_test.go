package report

import (
	"context"
	"database/sql"
	"maps"
	"math"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"testing"
	"time"

	"trendsql/sqlfuncs/stats"
	"trendsql/store"
	"trendsql/store/demodata"
	"trendsql/store/storetest"
	"trendsql/store/summaries"
)

// seriesOf returns the series id and page of station/variable in res.
func pageOf(t *testing.T, s *store.Store, res *Result, station, variable string) (int64, string) {
	t.Helper()
	var id int64
	if err := s.DB.QueryRow(`SELECT id FROM series WHERE station_id = ? AND variable = ?`, station, variable).Scan(&id); err != nil {
		t.Fatal(err)
	}
	p, ok := res.Pages[id]
	if !ok {
		t.Fatalf("no page for series %d", id)
	}
	return id, readFile(t, filepath.Join(res.Dir, p))
}

func longest(ps []svgPath) (best [][2]float64) {
	for _, p := range ps {
		for _, sp := range p.subs {
			if len(sp) > 1 && (best == nil || math.Abs(sp[len(sp)-1][0]-sp[0][0]) > math.Abs(best[len(best)-1][0]-best[0][0])) {
				best = sp
			}
		}
	}
	return best
}

// The ACF bars must stand on the zero line and reach the stored sample
// ACF of each lag; the dashed band must sit at ±(stored band).
func TestACFBarsEqualStoredACF(t *testing.T) {
	s := storetest.View(t, demoPath(t))
	res := writeReport(t, s, Options{Selection: Selection{Stations: []string{"VOR-W01"}}})
	id, page := pageOf(t, s, res, "VOR-W01", "groundwater_level")
	f := figures(t, page)["fig-acf"]
	if f == nil {
		t.Fatal("no ACF figure")
	}
	rows, err := s.DB.Query(`SELECT lag, acf, band FROM series_correlograms WHERE run_id = ? AND series_id = ? ORDER BY lag`, res.Run.ID, id)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	type lagRow struct{ lag, acf, band float64 }
	var want []lagRow
	for rows.Next() {
		var r lagRow
		if err := rows.Scan(&r.lag, &r.acf, &r.band); err != nil {
			t.Fatal(err)
		}
		want = append(want, r)
	}
	bars := f.fills(hexColor(ColBars))
	if len(bars) != len(want) || len(want) != 24 {
		t.Fatalf("%d bars drawn, %d lags stored (want 24)", len(bars), len(want))
	}
	sort.Slice(bars, func(i, j int) bool { return bars[i].subs[0][0][0] < bars[j].subs[0][0][0] })
	zero := f.yMap.to(0)
	perPt := math.Abs((f.yMap.B - f.yMap.A) / (f.yMap.PB - f.yMap.PA)) // data units per point
	for i, b := range bars {
		v := b.subs[0]
		if len(v) != 4 {
			t.Fatalf("bar %d has %d vertices", i, len(v))
		}
		base, top := v[0][1], v[2][1]
		if !near(base, zero, drawTol) {
			t.Errorf("lag %g: bar base at %g pt, zero line at %g pt", want[i].lag, base, zero)
		}
		if got := f.yMap.from(top); !near(got, want[i].acf, drawTol*perPt) {
			t.Errorf("lag %g: bar height is ACF %.6f, stored %.6f", want[i].lag, got, want[i].acf)
		}
		// Daily readings on the time grid: lag k is k days.
		if mid := f.xMap.from((v[0][0] + v[1][0]) / 2); !near(mid, want[i].lag, 1e-3) {
			t.Errorf("bar %d centred at %g days, want lag %g", i, mid, want[i].lag)
		}
	}
	var bands []float64
	for _, p := range f.strokes(hexColor(ColBand)) {
		for _, sp := range p.subs {
			if len(sp) == 2 && sp[1][0]-sp[0][0] > 100 {
				bands = append(bands, f.yMap.from(sp[0][1]))
			}
		}
	}
	sort.Float64s(bands)
	if len(bands) != 2 || !near(bands[0], -want[0].band, drawTol*perPt) || !near(bands[1], want[0].band, drawTol*perPt) {
		t.Errorf("band lines at %v, want ±%g", bands, want[0].band)
	}
}

// The trend line must run from the model's straight-line part at the first
// reading to that at the last, and the seasonal curve from trend_value at
// the first reading to trend_value at the last (evaluated here in SQL).
func TestTrendLineEndsAtTrendValue(t *testing.T) {
	s := storetest.View(t, demoPath(t))
	res := writeReport(t, s, Options{Selection: Selection{Stations: []string{"VOR-W01"}}})
	id, page := pageOf(t, s, res, "VOR-W01", "groundwater_level")
	f := figures(t, page)["fig-readings"]
	var t0, t1 int64
	var lin0, lin1, full0, full1 float64
	err := s.DB.QueryRow(`WITH m AS (SELECT trend_model AS m FROM series_summaries WHERE run_id = ? AND series_id = ?),
		l AS (SELECT json_object('t_center', m->>'t_center', 'degree', 1, 'coef', json_array(m->'coef'->>0, m->'coef'->>1)) AS l FROM m),
		r AS (SELECT min(t) AS t0, max(t) AS t1 FROM readings WHERE series_id = ?)
		SELECT t0, t1, trend_value(l, t0), trend_value(l, t1), trend_value(m, t0), trend_value(m, t1) FROM m, l, r`,
		res.Run.ID, id, id).Scan(&t0, &t1, &lin0, &lin1, &full0, &full1)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name   string
		colour string
		v0, v1 float64
	}{{"trend line", hexColor(ColTrend), lin0, lin1}, {"seasonal fit", hexColor(ColSeasonal), full0, full1}} {
		line := longest(f.strokes(c.colour))
		if line == nil {
			t.Fatalf("%s not drawn", c.name)
		}
		a, b := line[0], line[len(line)-1]
		for _, e := range []struct {
			got      [2]float64
			tt       int64
			v        float64
			whichEnd string
		}{{a, t0, c.v0, "first"}, {b, t1, c.v1, "last"}} {
			if !near(e.got[0], f.xMap.to(float64(e.tt)), drawTol) || !near(e.got[1], f.yMap.to(e.v), drawTol) {
				t.Errorf("%s %s end drawn at (%g, %g) pt, want (%g, %g) = (t %d, trend_value %g)", c.name, e.whichEnd,
					e.got[0], e.got[1], f.xMap.to(float64(e.tt)), f.yMap.to(e.v), e.tt, e.v)
			}
		}
	}
}

// readingRuns reads a series and cuts it where readings are more than 1.5
// stored sampling steps apart.
func readingRuns(t *testing.T, db *sql.DB, runID, id int64) (runs [][][2]float64, n int) {
	t.Helper()
	var step float64
	if err := db.QueryRow(`SELECT step_s FROM series_summaries WHERE run_id = ? AND series_id = ?`, runID, id).Scan(&step); err != nil {
		t.Fatal(err)
	}
	rows, err := db.Query(`SELECT t, value FROM readings WHERE series_id = ? ORDER BY t`, id)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var cur [][2]float64
	for rows.Next() {
		var tt, v float64
		if err := rows.Scan(&tt, &v); err != nil {
			t.Fatal(err)
		}
		if len(cur) > 0 && tt-cur[len(cur)-1][0] > 1.5*step {
			runs = append(runs, cur)
			cur = nil
		}
		cur = append(cur, [2]float64{tt, v})
		n++
	}
	return append(runs, cur), n
}

// checkEveryReading: each stretch between gaps is one line through every
// reading in order (a stretch of one reading is one dot), and nothing else
// is drawn in the readings colour but the legend's sample line.
func checkEveryReading(t *testing.T, f *svgFigure, runs [][][2]float64, n int) {
	t.Helper()
	var lines [][][2]float64
	for _, p := range f.strokes(hexColor(ColReadings)) {
		lines = append(lines, p.subs...)
	}
	dots := 0
	for _, p := range f.fills(hexColor(ColReadings)) {
		if p.arcs > 0 {
			dots++
		}
	}
	drawn, wantDots, gaps := 0, 0, 0
	used := make([]bool, len(lines))
	for _, r := range runs {
		if len(r) == 1 {
			wantDots++
			continue
		}
		found := false
		for i, l := range lines {
			if used[i] || len(l) != len(r) || !near(l[0][0], f.xMap.to(r[0][0]), drawTol) {
				continue
			}
			used[i], found = true, true
			for k := range r {
				if !near(l[k][0], f.xMap.to(r[k][0]), drawTol) || !near(l[k][1], f.yMap.to(r[k][1]), drawTol) {
					t.Fatalf("stretch from t=%g: vertex %d at (%g, %g) pt, reading (%g, %g) maps to (%g, %g)", r[0][0], k,
						l[k][0], l[k][1], r[k][0], r[k][1], f.xMap.to(r[k][0]), f.yMap.to(r[k][1]))
				}
			}
			drawn += len(l)
			break
		}
		if !found {
			t.Fatalf("no line for the %d readings from t=%g", len(r), r[0][0])
		}
	}
	gaps = len(runs) - 1
	var rest []int
	for i, u := range used {
		if !u {
			rest = append(rest, len(lines[i]))
		}
	}
	if len(rest) != 1 || rest[0] != 2 {
		t.Errorf("unmatched lines in the readings colour (vertex counts %v); want only the legend sample", rest)
	}
	if dots != wantDots {
		t.Errorf("%d dots drawn, want %d (stretches of one reading)", dots, wantDots)
	}
	if drawn+dots != n {
		t.Errorf("%d points drawn, %d readings", drawn+dots, n)
	}
	if gaps == 0 {
		t.Errorf("series has no gap; the check needs one")
	}
}

func TestEveryReadingDrawnWithGapsAsBreaks(t *testing.T) {
	s := storetest.View(t, demoPath(t))
	for _, c := range []struct {
		station, variable string
		full              bool
	}{{"VOR-M01", "groundwater_level", false}, {"VOR-W01", "groundwater_level", true}} {
		res := writeReport(t, s, Options{Selection: Selection{Stations: []string{c.station}, Variables: []string{c.variable}}, FullDetail: c.full})
		id, page := pageOf(t, s, res, c.station, c.variable)
		runs, n := readingRuns(t, s.DB, res.Run.ID, id)
		checkEveryReading(t, figures(t, page)["fig-readings"], runs, n)
		if info := res.Info[id]; info.Readings != n || info.Drawn != n || info.Runs != len(runs) || info.Thinned {
			t.Errorf("%s: draw info %+v, want %d readings in %d stretches, all drawn", c.station, info, n, len(runs))
		}
	}
}

// A long hourly series is drawn thinned: every stretch keeps its lowest and
// highest reading, and no more than four points per column are drawn.
func TestThinnedSeriesKeepsExtremes(t *testing.T) {
	s := storetest.View(t, demoPath(t))
	res := writeReport(t, s, Options{Selection: Selection{Stations: []string{"VOR-G01"}}})
	id, page := pageOf(t, s, res, "VOR-G01", "stage")
	f := figures(t, page)["fig-readings"]
	runs, n := readingRuns(t, s.DB, res.Run.ID, id)
	info := res.Info[id]
	if !info.Thinned || info.Drawn >= n || info.Drawn > 4*plotCols*len(runs) {
		t.Fatalf("draw info %+v for %d readings in %d stretches", info, n, len(runs))
	}
	var lines [][][2]float64
	for _, p := range f.strokes(hexColor(ColReadings)) {
		lines = append(lines, p.subs...)
	}
	if len(lines) != info.Runs-countSingles(runs)+1 {
		t.Fatalf("%d lines drawn, want %d stretches plus the legend sample", len(lines), info.Runs-countSingles(runs))
	}
	for _, r := range runs {
		if len(r) < 2 {
			continue
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, q := range r {
			lo, hi = math.Min(lo, q[1]), math.Max(hi, q[1])
		}
		for _, l := range lines {
			if !near(l[0][0], f.xMap.to(r[0][0]), drawTol) || len(l) < 2 {
				continue
			}
			dlo, dhi := math.Inf(1), math.Inf(-1)
			for _, v := range l {
				dlo, dhi = math.Min(dlo, v[1]), math.Max(dhi, v[1])
			}
			if !near(dlo, f.yMap.to(lo), drawTol) || !near(dhi, f.yMap.to(hi), drawTol) {
				t.Errorf("stretch from t=%g: drawn range [%g, %g] pt, readings [%g, %g] pt", r[0][0], dlo, dhi, f.yMap.to(lo), f.yMap.to(hi))
			}
		}
	}
}

func countSingles(runs [][][2]float64) int {
	k := 0
	for _, r := range runs {
		if len(r) == 1 {
			k++
		}
	}
	return k
}

// Censored readings are marked one by one at their stored value (the
// reporting limit) with an open triangle pointing down, in a colour of
// their own, and the figures name the censored share.
func TestCensoredReadingsMarked(t *testing.T) {
	s := storetest.View(t, demoPath(t))
	res := writeReport(t, s, Options{Selection: Selection{Stations: []string{censoredStation}}})
	id, page := pageOf(t, s, res, censoredStation, "nitrate_n")
	var nCens int
	if err := s.DB.QueryRow(`SELECT count(*) FROM readings WHERE series_id = ? AND censored = '<'`, id).Scan(&nCens); err != nil {
		t.Fatal(err)
	}
	if nCens == 0 {
		t.Fatal("fixture has no censored readings")
	}
	f := figures(t, page)["fig-readings"]
	marks := f.strokes(hexColor(ColCensored))
	// One triangle per censored reading plus the legend's.
	if len(marks) != nCens+1 {
		t.Fatalf("%d censored marks drawn, %d censored readings (+1 legend)", len(marks), nCens)
	}
	rows, err := s.DB.Query(`SELECT t, value FROM readings WHERE series_id = ? AND censored = '<' ORDER BY t`, id)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	k := 0
	for rows.Next() {
		var tt, v float64
		if err := rows.Scan(&tt, &v); err != nil {
			t.Fatal(err)
		}
		// The downward triangle's tip lies one glyph radius below the reading.
		x, y := f.xMap.to(tt), f.yMap.to(v)
		found := false
		for _, m := range marks {
			tip := m.subs[0][0]
			if near(tip[0], x, drawTol) && tip[1] < y && y-tip[1] < 4 {
				found = true
				break
			}
		}
		if !found {
			t.Errorf("no censored mark at reading t=%g value=%g", tt, v)
		}
		k++
	}
	if info := res.Info[id]; info.Censored != nCens {
		t.Errorf("draw info counts %d censored, want %d", info.Censored, nCens)
	}
	if !strings.Contains(page, "censored readings") {
		t.Error("figures table lacks the censored share")
	}
}

// Series that the run lacks are computed now with the run's parameters:
// their ACF bars equal the sample ACF that correlogram() gives for the
// residuals of trend_fit() with the same model, evaluated here in SQL.
func TestSeriesMissingFromRunComputedNow(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "small.db")
	if _, err := demodata.Create(ctx, path, demodata.Options{Stations: 3, MaxYears: 2}, false); err != nil {
		t.Fatal(err)
	}
	s, err := store.Open(ctx, path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	var first string
	if err := s.DB.QueryRow(`SELECT min(id) FROM stations`).Scan(&first); err != nil {
		t.Fatal(err)
	}
	_, err = summaries.Run(ctx, s, summaries.Options{Stations: []string{first},
		Model:       stats.SummaryOptions{PeriodS: secondsPerYear, Harmonics: 1, Seasons: 12, MaxLag: 12, Alpha: 0.05, Confidence: 0.95, MinN: 10},
		ToolVersion: "test", Analyze: stats.SummarizeSeries, WriteWait: time.Minute})
	if err != nil {
		t.Fatal(err)
	}
	res := writeReport(t, s, Options{})
	if res.OnTheFly != 2 || res.Series != 3 {
		t.Fatalf("%d series, %d computed now; want 3 and 2", res.Series, res.OnTheFly)
	}
	var id int64
	var station string
	if err := s.DB.QueryRow(`SELECT id, station_id FROM series WHERE station_id <> ? ORDER BY id LIMIT 1`, first).Scan(&id, &station); err != nil {
		t.Fatal(err)
	}
	page := readFile(t, filepath.Join(res.Dir, res.Pages[id]))
	if !strings.Contains(page, "holds no summary of this series") {
		t.Error("page does not say that its figures were computed now")
	}
	rows, err := s.DB.Query(`WITH m AS (SELECT trend_fit(t, value, 'degree=1, period=1y, harmonics=1') AS m FROM readings WHERE series_id = ?1),
		c AS (SELECT correlogram(t, trend_residual(m, t, value), 12) AS c FROM readings, m WHERE series_id = ?1)
		SELECT lag, acf FROM c, correlogram_rows(c.c) ORDER BY lag`, id)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var want []float64
	for rows.Next() {
		var lag int
		var acf float64
		if err := rows.Scan(&lag, &acf); err != nil {
			t.Fatal(err)
		}
		want = append(want, acf)
	}
	f := figures(t, page)["fig-acf"]
	if f == nil {
		i := strings.Index(page, "Notes:")
		t.Fatalf("no ACF chart; page notes: %.400s", page[max(i, 0):])
	}
	bars := f.fills(hexColor(ColBars))
	if len(bars) != len(want) || len(want) != 12 {
		t.Fatalf("%d bars, %d lags from correlogram()", len(bars), len(want))
	}
	sort.Slice(bars, func(i, j int) bool { return bars[i].subs[0][0][0] < bars[j].subs[0][0][0] })
	perPt := math.Abs((f.yMap.B - f.yMap.A) / (f.yMap.PB - f.yMap.PA))
	for i, b := range bars {
		if got := f.yMap.from(b.subs[0][2][1]); !near(got, want[i], drawTol*perPt) {
			t.Errorf("lag %d of %s: bar at ACF %.6f, correlogram() gives %.6f", i+1, station, got, want[i])
		}
	}
}

// The dotted Sen line has the stored Sen slope and passes through the
// median time and median value of the readings (medians taken here in SQL).
func TestSenLineThroughMedians(t *testing.T) {
	s := storetest.View(t, demoPath(t))
	for _, st := range []string{"VOR-W01", censoredStation} {
		res := writeReport(t, s, Options{Selection: Selection{Stations: []string{st}}})
		var id int64
		var slope float64
		if err := s.DB.QueryRow(`SELECT series_id, sen_slope_per_year FROM series_summaries ss JOIN series s ON s.id = ss.series_id
			WHERE run_id = ? AND station_id = ?`, res.Run.ID, st).Scan(&id, &slope); err != nil {
			t.Fatal(err)
		}
		var n int
		var t0, t1 float64
		if err := s.DB.QueryRow(`SELECT count(*), min(t), max(t) FROM readings WHERE series_id = ?`, id).Scan(&n, &t0, &t1); err != nil {
			t.Fatal(err)
		}
		median := func(col string) float64 {
			var m float64
			q := `SELECT avg(x) FROM (SELECT ` + col + ` AS x FROM readings WHERE series_id = ? ORDER BY x LIMIT 2 - ? % 2 OFFSET (? - 1) / 2)`
			if err := s.DB.QueryRow(q, id, n, n).Scan(&m); err != nil {
				t.Fatal(err)
			}
			return m
		}
		tm, ym := median("t"), median("value")
		page := readFile(t, filepath.Join(res.Dir, res.Pages[id]))
		f := figures(t, page)["fig-readings"]
		line := longest(f.strokes(hexColor(ColSen)))
		if line == nil || len(line) != 2 {
			t.Fatalf("%s: Sen line %v", st, line)
		}
		for i, tt := range []float64{t0, t1} {
			want := ym + slope*(tt-tm)/secondsPerYear
			if !near(line[i][0], f.xMap.to(tt), drawTol) || !near(line[i][1], f.yMap.to(want), drawTol) {
				t.Errorf("%s: Sen line end %d at (%g, %g) pt, want (%g, %g)", st, i, line[i][0], line[i][1], f.xMap.to(tt), f.yMap.to(want))
			}
		}
	}
}

// The Ljung–Box chart joins the stored p-value of each lag, and its dashed
// line sits at the run's α.
func TestLjungBoxPointsEqualStoredP(t *testing.T) {
	s := storetest.View(t, demoPath(t))
	res := writeReport(t, s, Options{Selection: Selection{Stations: []string{"VOR-M01"}, Variables: []string{"nitrate_n"}}})
	id, page := pageOf(t, s, res, "VOR-M01", "nitrate_n")
	f := figures(t, page)["fig-ljungbox"]
	if f == nil {
		t.Fatal("no Ljung–Box figure")
	}
	rows, err := s.DB.Query(`SELECT lag, ljung_box_p FROM series_correlograms WHERE run_id = ? AND series_id = ? AND ljung_box_p IS NOT NULL ORDER BY lag`, res.Run.ID, id)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var lags, ps []float64
	for rows.Next() {
		var l, p float64
		if err := rows.Scan(&l, &p); err != nil {
			t.Fatal(err)
		}
		lags, ps = append(lags, l), append(ps, p)
	}
	if len(ps) < 10 || slices.Max(ps) < 0.05 {
		t.Fatalf("fixture: %d stored p-values, largest %g; the check wants a series whose p-values are not all near 0", len(ps), slices.Max(ps))
	}
	line := longest(f.strokes(hexColor(ColLB)))
	if len(line) != len(ps) {
		t.Fatalf("line through %d points, %d p-values stored", len(line), len(ps))
	}
	perPt := math.Abs((f.yMap.B - f.yMap.A) / (f.yMap.PB - f.yMap.PA))
	// Irregular times: the lag axis counts readings, so lag k is at x = k.
	for i, v := range line {
		if x := f.xMap.from(v[0]); !near(x, lags[i], 1e-3) {
			t.Errorf("point %d at lag %g, stored lag %g", i, x, lags[i])
		}
		if y := f.yMap.from(v[1]); !near(y, ps[i], drawTol*perPt) {
			t.Errorf("lag %g: drawn p %.6f, stored %.6f", lags[i], y, ps[i])
		}
	}
	alphaAt := math.NaN()
	for _, p := range f.strokes(hexColor(ColBand)) {
		for _, sp := range p.subs {
			if len(sp) == 2 && sp[1][0]-sp[0][0] > 100 {
				alphaAt = f.yMap.from(sp[0][1])
			}
		}
	}
	if !near(alphaAt, res.Run.Alpha, drawTol*perPt) {
		t.Errorf("α line at %g, run's α %g", alphaAt, res.Run.Alpha)
	}
}

// Each station on a map is drawn at its longitude and latitude with the
// symbol of its stored trend: a wedge pointing up for a positive Sen slope
// and down for a negative one, filled exactly when the run flagged the
// trend.
func TestMapSymbolsFollowStoredTrends(t *testing.T) {
	s := storetest.View(t, demoPath(t))
	res := writeReport(t, s, Options{Selection: Selection{Variables: []string{"stage", "groundwater_level"}, Where: "st.id LIKE 'VOR-%'"}})
	index := readFile(t, filepath.Join(res.Dir, "index.html"))
	figs := figures(t, index)
	rows, err := s.DB.Query(`SELECT s.variable, s.station_id, st.longitude, st.latitude, coalesce(ss.sen_slope_per_year, ss.slope_per_year), coalesce(ss.trend_detected, 0)
		FROM series_summaries ss JOIN series s ON s.id = ss.series_id JOIN stations st ON st.id = s.station_id
		WHERE ss.run_id = ? AND s.variable IN ('stage', 'groundwater_level') AND st.id LIKE 'VOR-%'`, res.Run.ID)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	const r = 4.5 // symbol size in the map (pt)
	seen, filledSeen := 0, 0
	for rows.Next() {
		var variable, station string
		var lon, lat float64
		var slope *float64
		var flagged int
		if err := rows.Scan(&variable, &station, &lon, &lat, &slope, &flagged); err != nil {
			t.Fatal(err)
		}
		f := figs["fig-map-"+slug(variable)]
		if f == nil {
			t.Fatalf("no map of %s", variable)
		}
		if slope == nil || *slope == 0 {
			continue // a ring: no direction to check
		}
		colour, dir := hexColor(ColUp), 1.0
		if *slope < 0 {
			colour, dir = hexColor(ColDown), -1
		}
		x, y := f.xMap.to(lon), f.yMap.to(lat)
		var found, filled int
		for _, p := range f.paths {
			if len(p.subs) != 1 || len(p.subs[0]) != 3 {
				continue
			}
			tip := p.subs[0][0]
			if !near(tip[0], x, drawTol) || !near(tip[1], y+dir*r, drawTol) {
				continue
			}
			if p.style["stroke"] == colour && p.style["fill"] == "none" {
				found++
			}
			if p.style["fill"] == colour {
				filled++
			}
		}
		if found != 1 {
			t.Errorf("%s %s: %d outlined wedges in %s pointing %+g at (%g, %g), want 1", variable, station, found, colour, dir, lon, lat)
		}
		if (filled == 1) != (flagged == 1) || filled > 1 {
			t.Errorf("%s %s: %d filled wedges, trend_detected %d", variable, station, filled, flagged)
		}
		seen++
		filledSeen += filled
	}
	if seen < 30 || filledSeen == 0 || filledSeen == seen {
		t.Errorf("fixture: %d symbols checked, %d filled; want both kinds among 30 or more", seen, filledSeen)
	}
}

// The grouped chart puts each series' stored Sen slope on the row of its
// station's attribute value (rows in sorted order, "(none)" for stations
// without one).
func TestGroupedSlopesOnTheirRows(t *testing.T) {
	s := storetest.View(t, demoPath(t))
	res := writeReport(t, s, Options{GroupBy: "aquifer", Selection: Selection{Variables: []string{"groundwater_level"}, Where: "st.id LIKE 'VOR-%'"}})
	f := figures(t, readFile(t, filepath.Join(res.Dir, "index.html")))["fig-group-groundwater-level"]
	if f == nil {
		t.Fatal("no grouped chart")
	}
	rows, err := s.DB.Query(`SELECT s.station_id, coalesce(st.metadata->>'aquifer', '(none)'), ss.sen_slope_per_year
		FROM series_summaries ss JOIN series s ON s.id = ss.series_id JOIN stations st ON st.id = s.station_id
		WHERE ss.run_id = ? AND s.variable = 'groundwater_level' AND st.id LIKE 'VOR-%' AND ss.sen_slope_per_year <> 0`, res.Run.ID)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	type item struct {
		station, group string
		slope          float64
	}
	var items []item
	groups := map[string]bool{}
	for rows.Next() {
		var it item
		if err := rows.Scan(&it.station, &it.group, &it.slope); err != nil {
			t.Fatal(err)
		}
		items = append(items, it)
		groups[it.group] = true
	}
	names := slices.Sorted(maps.Keys(groups))
	if len(names) < 2 || len(items) < 10 {
		t.Fatalf("fixture: %d series in %d groups", len(items), len(names))
	}
	const r = 3.5
	for _, it := range items {
		gi := float64(slices.Index(names, it.group))
		lo, hi := f.yMap.to(gi-0.26), f.yMap.to(gi+0.26)
		dir := 1.0
		if it.slope < 0 {
			dir = -1
		}
		x := f.xMap.to(it.slope)
		found := 0
		for _, p := range f.paths {
			if len(p.subs) != 1 || len(p.subs[0]) != 3 || p.style["fill"] != "none" {
				continue
			}
			tip := p.subs[0][0]
			mid := tip[1] - dir*r
			if near(tip[0], x, drawTol) && mid >= min(lo, hi)-drawTol && mid <= max(lo, hi)+drawTol {
				found++
			}
		}
		if found == 0 {
			t.Errorf("%s: no wedge at Sen slope %g on the row of %q", it.station, it.slope, it.group)
		}
	}
}
