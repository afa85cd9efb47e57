package report

import (
	"fmt"
	"math"
	"strings"
)

func readingsCaption(d *seriesPlotData, info DrawInfo) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%d readings", info.Readings)
	if d.step > 0 {
		fmt.Fprintf(&b, "; a break in the line marks a spacing longer than %g sampling steps of %s", gapFactor, fmtDuration(d.step))
	}
	if info.Runs > 1 {
		fmt.Fprintf(&b, " (%d stretches)", info.Runs)
	}
	if info.Thinned {
		fmt.Fprintf(&b, ". Long stretches are drawn through the first, lowest, highest and last reading of each of %d columns, which draws the same picture at this width", plotCols)
	}
	b.WriteString(".")
	if info.Flagged > 0 {
		fmt.Fprintf(&b, " %d readings carry a qualifier flag (open diamonds, %s).", info.Flagged, info.MarkersBy)
	}
	if info.Censored > 0 {
		fmt.Fprintf(&b, " %d censored readings are drawn at their reported limit (open triangles pointing to where the true value lies).", info.Censored)
	}
	if d.seasonal != nil {
		b.WriteString(" Solid: the straight-line part of the fitted model; dashed: the full fit with its seasonal cycle.")
	} else if d.line != nil {
		b.WriteString(" Solid: the fitted trend.")
	}
	if senLine(d) != nil {
		fmt.Fprintf(&b, " Dotted: the %s drawn through the median time and the median reading.", senName(d.s))
	}
	return b.String()
}

// figureRows lists the figures of a summary with units and meaning.
func figureRows(s *Series, run *Run) []figRow {
	r := s.Sum
	u := s.Unit
	var rows []figRow
	add := func(label, value, note string) { rows = append(rows, figRow{label, value, note}) }
	n, _ := r.integer("n")
	add("readings (n)", fmt.Sprint(n), "")
	if tf, tl := r.text("time_first"), r.text("time_last"); tf != "" {
		add("period", tf+" to "+tl, num(r.number("years"))+" years")
	}
	if st := r.number("step_s"); !math.IsNaN(st) {
		add("sampling step", fmtDuration(st), "most common spacing")
	}
	if ms := r.number("missing_share"); !math.IsNaN(ms) {
		add("coverage", fmt.Sprintf("%.1f %%", 100*(1-ms)), fmt.Sprintf("share of grid slots with a reading (%.1f %% missing)", 100*ms))
	}
	if q, ok := r.integer("n_qualified"); ok {
		add("readings with a qualifier flag", fmt.Sprint(q), flagSummaryOr(s))
	}
	if cs := r.number("censored_share"); !math.IsNaN(cs) && cs > 0 {
		note := ""
		if k, ok := r.integer("censoring_limits"); ok {
			note = fmt.Sprintf("%s, the highest %s %s", plural(int(k), "reporting limit", "distinct reporting limits"), num(r.number("highest_limit")), u)
			if k == 1 {
				note = fmt.Sprintf("one reporting limit, %s %s", num(r.number("highest_limit")), u)
			}
		}
		add("censored readings", fmt.Sprintf("%.1f %%", 100*cs), note)
	}
	add("mean", num(r.number("mean")), u)
	if r.text("trend_model") == "" {
		add("least-squares trend", "not fitted", "see the notes below")
	} else {
		add("least-squares slope", num(r.number("slope_per_year")), perYear(u))
		add("least-squares slope per decade", num(10*r.number("slope_per_year")), perDecade(u))
		if v := r.number("pct_per_decade"); !math.IsNaN(v) {
			add("relative slope", num(v), "% of the mean per decade")
		}
		add("standard error of the slope, ordinary", num(r.number("slope_se")), perYear(u)+"; assumes independent errors")
		add("standard error of the slope, Newey–West", num(r.number("hac_slope_se")), perYear(u)+lagsNote(r))
		add("p, ordinary least squares", pval(r.number("slope_p")), "two-sided; too small when the errors are autocorrelated")
		add("p, Newey–West", pval(r.number("hac_p")), "two-sided, autocorrelation-robust")
		add("p, effective sample size", pval(r.number("n_eff_p")), "n_eff = "+num(r.number("n_eff")))
		add("R²", num(r.number("r2")), "share of variance explained by trend and cycle")
	}
	add("rank trend test", rankWords(r.text("mk_method")), "")
	add("p, rank trend test", pval(r.number("mk_p")), rankPNote(r.text("mk_method")))
	add("q, FDR-adjusted", pval(r.number("trend_p_fdr")), fmt.Sprintf("Benjamini–Hochberg across %s; the trend flag uses q ≤ %g", fdrFamily(run), run.Alpha))
	sen := "Sen slope"
	if strings.HasPrefix(r.text("mk_method"), "censored") {
		sen = "Akritas–Theil–Sen slope"
	}
	add(sen, num(r.number("sen_slope_per_year")), perYear(u))
	add(sen+" per decade", num(10*r.number("sen_slope_per_year")), perDecade(u))
	conf := r.number("sen_confidence")
	add("Sen slope interval", intervalText(r.number("sen_lower"), r.number("sen_upper")), fmt.Sprintf("%s; %g confidence", perYear(u), conf))
	if v := r.number("resid_acf1"); !math.IsNaN(v) {
		add("residual lag-1 sample autocorrelation", num(v), "")
	}
	if lbl, ok := r.integer("lb_lags"); ok {
		add(fmt.Sprintf("Ljung–Box test, lags 1 to %d", lbl), "Q = "+num(r.number("lb_q"))+", "+pEquals(r.number("lb_p")), "")
	}
	if pt := r.text("pettitt_time_change"); pt != "" {
		add("Pettitt change point", pt, pEquals(r.number("pettitt_p"))+" (approximate)")
	}
	var on []string
	for _, f := range flagNames {
		if v, ok := r.flag(f.col); ok && v {
			on = append(on, f.label)
		}
	}
	if len(on) == 0 {
		on = []string{"none"}
	}
	add("flags", strings.Join(on, ", "), fmt.Sprintf("at α = %g", run.Alpha))
	return rows
}

func lagsNote(r row) string {
	if l, ok := r.integer("hac_lags"); ok {
		return fmt.Sprintf("; %d lags", l)
	}
	return ""
}

func flagSummaryOr(s *Series) string {
	if s.Sum.text("qualifier_counts") == "" {
		return ""
	}
	return flagSummary(s)
}

func stationRows(st *Station) []KV {
	rows := []KV{{"id", st.ID}, {"name", st.Name}}
	coord := func(k string, v float64, unit string) {
		if !math.IsNaN(v) {
			rows = append(rows, KV{k, fmt.Sprintf("%g%s", v, unit)})
		}
	}
	coord("latitude", st.Lat, "°")
	coord("longitude", st.Lon, "°")
	coord("elevation", st.Elev, " m")
	return append(rows, st.Meta...)
}

// fdrFamily names the series the FDR adjustment spans.
func fdrFamily(run *Run) string {
	if run.Unstored {
		return "the series of this report"
	}
	return "the run's series"
}
