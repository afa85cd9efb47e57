// Package report writes a self-contained HTML report of stored trend
// summaries: an index page for the selected series (sortable table with
// sparklines, station maps with trend symbols, slopes grouped by a station
// attribute) and one page per series (readings with the fitted trend,
// residuals, residual sample ACF, Ljung–Box p-values by lag, the figures in
// words and numbers, and the station's metadata).
//
// Pages carry their charts as inline SVG drawn with gonum.org/v1/plot, and
// their style and a few lines of sorting script inline: nothing is loaded
// from the network or from other files, so a report folder can be zipped
// and mailed. Figures come from one summarize run; only what the run lacks
// is computed now: residuals and fitted curves with the store's SQL
// functions, and the figures of series the run did not cover (or of every
// series, when no run holds any) as summarize computes them
// (summaries.Compute), without writing.
package report

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"html/template"
	"math"
	"sort"
	"strings"
	"time"

	"trendsql/sqlfuncs/stats"
)

// Options controls Write.
type Options struct {
	Dir string
	Selection
	RunID      int64    // 0: the latest successful run holding a selected series
	GroupBy    string   // station metadata key for the grouped slope chart ("" = first of MetaCols)
	MetaCols   []string // station metadata keys shown in the index table (nil = chosen automatically)
	PNG        bool     // also write each chart as PNG
	Force      bool     // allow a folder that holds other files (they are never replaced)
	FullDetail bool     // draw every reading, however long the series
	// Fallback, if set, is the summarize model used when no successful run
	// holds any selected series (and RunID is 0): every figure is then
	// computed now, as such a run would compute it, and nothing is stored.
	// Nil: ErrNoRun.
	Fallback *stats.SummaryOptions
	Tool     string // tool name and version for the footer
	Now      time.Time
}

// Result summarises a written report.
type Result struct {
	Dir      string
	Run      *Run
	Series   int
	OnTheFly int
	Files    []string
	Bytes    int64
	Info     map[int64]DrawInfo // per series id
	Pages    map[int64]string   // page file per series id
}

// Write builds the report into o.Dir.
func Write(ctx context.Context, db *sql.DB, o Options) (*Result, error) {
	series, err := selectSeries(ctx, db, o.Selection)
	if err != nil {
		return nil, err
	}
	run, err := findRun(ctx, db, o.RunID, series)
	if errors.Is(err, ErrNoRun) && o.RunID == 0 && o.Fallback != nil {
		run, err = computeAllNow(ctx, db, *o.Fallback, series)
	}
	if err != nil {
		return nil, err
	}
	if !run.Unstored {
		if err := loadSummaries(ctx, db, run, series); err != nil {
			return nil, err
		}
	}
	var missing []*Series
	for _, s := range series {
		if s.Sum == nil {
			missing = append(missing, s)
		}
	}
	if len(missing) > 0 {
		// With the run's parameters, outside its FDR adjustment.
		n, err := computeNow(ctx, db, run.model(), run.Since, run.Until, missing, false)
		if err != nil {
			return nil, err
		}
		for _, s := range missing {
			s.OnTheFly = s.Sum != nil
		}
		run.SeriesComputedOnTheFly = n
	}
	censor, err := censorColumn(ctx, db)
	if err != nil {
		return nil, err
	}
	keys := make([]seriesKey, len(series))
	for i, s := range series {
		keys[i] = seriesKey{s.Station.ID, s.Variable}
	}
	names := pageNames(keys)
	for i, s := range series {
		s.Page = names[keys[i]] + ".html"
	}
	metaCols := o.MetaCols
	if metaCols == nil {
		metaCols = autoMetaCols(series)
	}
	groupBy := o.GroupBy
	if groupBy == "" && len(metaCols) > 0 {
		groupBy = metaCols[0]
	}
	variables := byVariable(series)

	planned := []string{"index.html"}
	for _, s := range series {
		planned = append(planned, s.Page)
		if o.PNG {
			for _, f := range []string{"readings", "residuals", "acf", "ljungbox"} {
				planned = append(planned, strings.TrimSuffix(s.Page, ".html")+"-"+f+".png")
			}
		}
	}
	if o.PNG {
		for _, v := range variables {
			planned = append(planned, "index-map-"+slug(v.name)+".png", "index-group-"+slug(v.name)+".png")
		}
	}
	dir, err := openOutDir(o.Dir, o.Force)
	if err != nil {
		return nil, err
	}
	if err := dir.plan(planned); err != nil {
		return nil, err
	}
	if o.Now.IsZero() {
		o.Now = time.Now()
	}
	footer := fmt.Sprintf("Written by %s on %s from the store's summarize run %d.", o.Tool, o.Now.UTC().Format("2006-01-02 15:04 UTC"), run.ID)
	if run.Unstored {
		footer = fmt.Sprintf("Written by %s on %s; figures computed now (no summarize run stored them).", o.Tool, o.Now.UTC().Format("2006-01-02 15:04 UTC"))
	}
	res := &Result{Dir: o.Dir, Run: run, Series: len(series), OnTheFly: run.SeriesComputedOnTheFly,
		Info: map[int64]DrawInfo{}, Pages: map[int64]string{}}
	put := func(name string, data []byte) error {
		if err := dir.write(name, data); err != nil {
			return err
		}
		res.Files = append(res.Files, name)
		res.Bytes += int64(len(data))
		return nil
	}
	rows := make([]indexRow, 0, len(series))
	for _, s := range series {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		row, err := writeSeries(ctx, db, run, s, censor, o, footer, put, res)
		if err != nil {
			return nil, err
		}
		for _, k := range metaCols {
			row.Meta = append(row.Meta, s.Station.metaByKey[k])
		}
		rows = append(rows, row)
	}
	idx := &indexPage{Title: fmt.Sprintf("%d series", len(series)), RunText: runText(run), FDRFamily: fdrFamily(run), Params: runParams(run),
		GroupBy: groupBy, MetaCols: metaCols, Rows: rows, Caution: Caution, Footer: footer, CSS: pageCSS, JS: sortJS}
	if len(series) == 1 {
		idx.Title = "1 series"
	}
	for _, v := range variables {
		f, err := mapFigure(v.name, v.series, series, o.PNG)
		if err != nil {
			return nil, err
		}
		if f == nil {
			idx.Notes = append(idx.Notes, "No map for "+v.name+": its stations have no coordinates.")
			continue
		}
		png, err := writePNG(put, "index", f)
		if err != nil {
			return nil, err
		}
		caption := plural(len(v.series), "series", "series") + " of " + v.name + "."
		if f.Note != "" {
			caption += " " + f.Note
		}
		idx.Maps = append(idx.Maps, view(f, "fig-"+f.Name, caption, png))
	}
	if groupBy != "" {
		for _, v := range variables {
			f, err := groupFigure(v.name, v.unit, groupBy, v.series, o.PNG)
			if err != nil {
				return nil, err
			}
			png, err := writePNG(put, "index", f)
			if err != nil {
				return nil, err
			}
			idx.Groups = append(idx.Groups, view(f, "fig-"+f.Name, "Sen slope per year of each series with its interval, by station "+groupBy+" (same symbols as the map).", png))
		}
	} else {
		idx.Notes = append(idx.Notes, "No grouped slope chart: the stations carry no metadata to group by.")
	}
	b, err := execute(indexTmpl, idx)
	if err != nil {
		return nil, err
	}
	if err := put("index.html", b); err != nil {
		return nil, err
	}
	if err := dir.finish(); err != nil {
		return nil, err
	}
	sort.Strings(res.Files)
	return res, nil
}

func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}

func writePNG(put func(string, []byte) error, stem string, f *Figure) (string, error) {
	if f == nil || f.PNG == nil {
		return "", nil
	}
	name := stem + "-" + f.Name + ".png"
	return name, put(name, f.PNG)
}

type variableGroup struct {
	name, unit string
	series     []*Series
}

func byVariable(series []*Series) []variableGroup {
	m := map[string]*variableGroup{}
	var order []string
	for _, s := range series {
		g := m[s.Variable]
		if g == nil {
			g = &variableGroup{name: s.Variable, unit: s.Unit}
			m[s.Variable] = g
			order = append(order, s.Variable)
		}
		if g.unit != s.Unit {
			g.unit = ""
		}
		g.series = append(g.series, s)
	}
	sort.Strings(order)
	out := make([]variableGroup, len(order))
	for i, v := range order {
		out[i] = *m[v]
	}
	return out
}

// autoMetaCols picks up to three metadata keys that sort stations into a
// few groups: present for at least half the stations, with 2 to 12
// distinct values, in key order.
func autoMetaCols(series []*Series) []string {
	stations := map[string]*Station{}
	for _, s := range series {
		stations[s.Station.ID] = s.Station
	}
	values := map[string]map[string]bool{}
	count := map[string]int{}
	for _, st := range stations {
		for _, kv := range st.Meta {
			if values[kv.Key] == nil {
				values[kv.Key] = map[string]bool{}
			}
			values[kv.Key][kv.Value] = true
			count[kv.Key]++
		}
	}
	var keys []string
	for k, v := range values {
		if 2*count[k] >= len(stations) && len(v) >= 2 && len(v) <= 12 {
			keys = append(keys, k)
		}
	}
	sort.Strings(keys)
	if len(keys) > 3 {
		keys = keys[:3]
	}
	return keys
}

func runText(r *Run) string {
	if r.Unstored {
		return "No summarize run holds these series: the figures were computed now with summarize's default parameters (below), with the FDR adjustment across the series of this report, and were not stored. Run trendsql summarize to store them and to choose the model (a seasonal cycle with --period 1y, for instance)."
	}
	t := fmt.Sprintf("Figures of summarize run %d (started %s, %s).", r.ID, r.StartedAt, r.ToolVersion)
	if r.SeriesComputedOnTheFly > 0 {
		t += fmt.Sprintf(" The run holds %d of the selected series; the figures of the other %d were computed now with the run's parameters and are not part of its FDR adjustment.", r.SeriesInRun, r.SeriesComputedOnTheFly)
	}
	return t
}

func runParams(r *Run) []KV {
	season := "none"
	if r.PeriodS > 0 {
		season = fmt.Sprintf("period %s, %d harmonics, %d seasons for the seasonal Kendall test", fmtDuration(r.PeriodS), r.Harmonics, r.Seasons)
	}
	lb := "min(10, n/5)"
	if r.LBLags > 0 {
		lb = fmt.Sprint(r.LBLags)
	}
	return []KV{
		{"seasonal model", season},
		{"α (flags; trend on the FDR-adjusted p)", fmt.Sprint(r.Alpha)},
		{"Sen interval confidence", fmt.Sprint(r.Confidence)},
		{"correlogram lags / Ljung–Box lag", fmt.Sprintf("%d / %s", r.MaxLag, lb)},
		{"fewest readings for a summary", fmt.Sprint(r.MinN)},
	}
}

// writeSeries loads one series' readings, draws its charts, writes its
// page and returns its index row.
func writeSeries(ctx context.Context, db *sql.DB, run *Run, s *Series, censor string, o Options, footer string,
	put func(string, []byte) error, res *Result) (indexRow, error) {
	rd, err := loadReadings(ctx, db, s, censor)
	if err != nil {
		return indexRow{}, err
	}
	d := &seriesPlotData{s: s, rd: rd, full: o.FullDetail}
	d.step = s.Sum.number("step_s")
	if !(d.step > 0) {
		d.step = typicalStep(rd.T)
	}
	if model := s.Sum.text("trend_model"); model != "" && len(rd.T) > 0 {
		if err := d.evalModel(ctx, db, model); err != nil {
			return indexRow{}, err
		}
	}
	stem := strings.TrimSuffix(s.Page, ".html")
	pg := &seriesPage{S: s, Title: s.Station.ID + " " + s.Variable + " — trend report", RunText: runText(run),
		Flags: flags(s), ModelText: modelWords(s), RankText: rankWords(s.Sum.text("mk_method")),
		ACFText: acfWords(s.Sum.text("acf_basis")), Notes: s.Sum.text("notes"), Caution: Caution, Footer: footer, CSS: pageCSS}
	if s.OnTheFly {
		pg.RunText = fmt.Sprintf("Summarize run %d (started %s) holds no summary of this series: the figures below were computed now with that run's parameters, without its FDR adjustment.", run.ID, run.StartedAt)
	}
	if len(rd.T) > 0 {
		f, info, err := readingsFigure(d, o.PNG)
		if err != nil {
			return indexRow{}, err
		}
		res.Info[s.ID] = info
		png, err := writePNG(put, stem, f)
		if err != nil {
			return indexRow{}, err
		}
		pg.Readings = view(f, "fig-readings", readingsCaption(d, info), png)
		if !allNaN(rd.Resid) {
			f, err := residualFigure(d, o.PNG)
			if err != nil {
				return indexRow{}, err
			}
			png, err := writePNG(put, stem, f)
			if err != nil {
				return indexRow{}, err
			}
			pg.Resid = view(f, "fig-residuals", "Readings minus the fitted model (trend and seasonal cycle), with gaps as in the readings chart.", png)
		}
	}
	if len(s.Lags) > 0 {
		f, err := acfFigure(d, o.PNG)
		if err != nil {
			return indexRow{}, err
		}
		png, err := writePNG(put, stem, f)
		if err != nil {
			return indexRow{}, err
		}
		pg.ACF = view(f, "fig-acf", fmt.Sprintf("Sample autocorrelation of the residuals at lags 1 to %d %s. Dashed: ±1.96/√n, the approximate 95%% range of a sample ACF of independent errors.", s.Lags[len(s.Lags)-1].Lag, acfWords(s.Sum.text("acf_basis"))), png)
		f, err = ljungBoxFigure(d, run.Alpha, o.PNG)
		if err != nil {
			return indexRow{}, err
		}
		png, err = writePNG(put, stem, f)
		if err != nil {
			return indexRow{}, err
		}
		pg.LB = view(f, "fig-ljungbox", fmt.Sprintf("Ljung–Box test of lags 1 to k on the residuals, p-value for each k; dashed: α = %g. Points below the line speak against independent errors.", run.Alpha), png)
	}
	pg.Rows = figureRows(s, run)
	pg.Station = stationRows(s.Station)
	b, err := execute(pageTmpl, pg)
	if err != nil {
		return indexRow{}, err
	}
	if err := put(s.Page, b); err != nil {
		return indexRow{}, err
	}
	res.Pages[s.ID] = s.Page
	row := indexRow{Page: s.Page, Station: s.Station.ID, Name: s.Station.Name, Variable: s.Variable, Unit: s.Unit, OnTheFly: s.OnTheFly, Flags: flags(s)}
	if len(rd.T) > 1 {
		sp, err := sparkline(d)
		if err != nil {
			return indexRow{}, err
		}
		row.Spark = template.HTML(sp.SVG)
	}
	n, _ := s.Sum.integer("n")
	row.N, row.NKey = fmt.Sprint(n), fmt.Sprint(n)
	row.Years, row.YearsKey = withSortKey(s.Sum.number("years"))
	row.Slope, row.SlopeKey = withSortKey(s.Sum.number("slope_per_year"))
	row.SlopeDec, row.SlopeDecKey = withSortKey(10 * s.Sum.number("slope_per_year"))
	row.Sen, row.SenKey = withSortKey(s.Sum.number("sen_slope_per_year"))
	row.SenCI = intervalText(s.Sum.number("sen_lower"), s.Sum.number("sen_upper"))
	row.MKP, row.MKPKey = pval(s.Sum.number("mk_p")), sortKey(s.Sum.number("mk_p"))
	row.HACP, row.HACPKey = pval(s.Sum.number("hac_p")), sortKey(s.Sum.number("hac_p"))
	row.FDR, row.FDRKey = pval(s.Sum.number("trend_p_fdr")), sortKey(s.Sum.number("trend_p_fdr"))
	return row, nil
}

// evalModel evaluates the trend model for drawing: its polynomial part at
// the first and last reading (and between them when it is curved), and the
// full model with its seasonal terms at one point per plot column.
func (d *seriesPlotData) evalModel(ctx context.Context, db *sql.DB, model string) error {
	line, seasonal := linearPart(model)
	t0, t1 := d.rd.T[0], d.rd.T[len(d.rd.T)-1]
	k := 1
	if m, ok := parseModel(d.s); ok && m.Degree > 1 {
		k = 2 * plotCols
	}
	ts, ys, err := fitted(ctx, db, t0, t1, k, line)
	if err != nil {
		return err
	}
	d.lineT, d.line = ts, ys[0]
	if seasonal {
		ts, ys, err := fitted(ctx, db, t0, t1, plotCols, model)
		if err != nil {
			return err
		}
		d.fitT, d.seasonal = ts, ys[0]
	}
	return nil
}

func allNaN(x []float64) bool {
	for _, v := range x {
		if !math.IsNaN(v) {
			return false
		}
	}
	return true
}
