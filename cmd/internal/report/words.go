package report

import (
	"encoding/json"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Caution is printed on every page.
const Caution = "Statistical trends are not causal findings; agency procedures and qualified review govern decisions. " +
	"Each p-value is valid only under the model stated with it; a small p-value says that the readings would be unusual " +
	"under no trend in that model, not why the level changed."

// num formats v with four significant digits ("—" for NaN).
func num(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "—"
	}
	if v == 0 {
		return "0"
	}
	a := math.Abs(v)
	if a >= 1e6 || a < 1e-4 {
		return strconv.FormatFloat(v, 'e', 3, 64)
	}
	d := max(0, 3-int(math.Floor(math.Log10(a))))
	return strconv.FormatFloat(v, 'f', d, 64)
}

// pval formats a p-value: three significant digits, "< 0.0001" below.
// pEquals writes "p = 0.25", or "p < 0.0001" for a tiny p-value.
func pEquals(p float64) string {
	s := pval(p)
	if strings.HasPrefix(s, "<") {
		return "p " + s
	}
	return "p = " + s
}

func pval(p float64) string {
	switch {
	case math.IsNaN(p):
		return "—"
	case p < 1e-4:
		return "< 0.0001"
	}
	return strconv.FormatFloat(p, 'g', 3, 64)
}

// sortKey is a cell's sort value ("" for missing).
func sortKey(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return ""
	}
	return strconv.FormatFloat(v, 'g', 10, 64)
}

func perYear(unit string) string {
	if unit == "" {
		return "per year"
	}
	return unit + " per year"
}

func perDecade(unit string) string {
	if unit == "" {
		return "per decade"
	}
	return unit + " per decade"
}

type modelInfo struct {
	Degree    int     `json:"degree"`
	PeriodS   float64 `json:"period_s"`
	Harmonics int     `json:"harmonics"`
	HACLags   int     `json:"hac_lags"`
}

func parseModel(s *Series) (modelInfo, bool) {
	var m modelInfo
	t := s.Sum.text("trend_model")
	return m, t != "" && json.Unmarshal([]byte(t), &m) == nil
}

// modelWords states the least-squares model in words.
func modelWords(s *Series) string {
	m, ok := parseModel(s)
	if !ok {
		return "No least-squares trend was fitted."
	}
	var b strings.Builder
	switch m.Degree {
	case 0:
		b.WriteString("a constant level")
	case 1:
		b.WriteString("a straight-line trend")
	default:
		fmt.Fprintf(&b, "a polynomial trend of degree %d", m.Degree)
	}
	if m.Harmonics > 0 {
		cycle := "a cycle of period " + fmtDuration(m.PeriodS)
		if math.Abs(m.PeriodS-secondsPerYear) < 1 {
			cycle = "an annual cycle"
		}
		h := "harmonics"
		if m.Harmonics == 1 {
			h = "harmonic"
		}
		fmt.Fprintf(&b, " plus %s with %d %s", cycle, m.Harmonics, h)
	}
	b.WriteString(", fitted by least squares; errors allowed to be autocorrelated")
	if m.HACLags > 0 {
		fmt.Fprintf(&b, " (the slope's standard error is the Newey–West estimate with %d lags, and a further p-value uses the effective sample size implied by the residual lag-1 autocorrelation)", m.HACLags)
	}
	return strings.ToUpper(b.String()[:1]) + b.String()[1:] + "."
}

// rankWords names the rank trend test of a summary.
func rankWords(method string) string {
	switch method {
	case "mann-kendall/hamed-rao":
		return "Mann–Kendall test with the Hamed–Rao variance correction for serial correlation"
	case "seasonal-kendall/block-means/hirsch-slack":
		return "seasonal Kendall test on per-season block means, with the Hirsch–Slack covariance between seasons"
	case "seasonal-kendall/block-means":
		return "seasonal Kendall test on per-season block means"
	case "seasonal-kendall":
		return "seasonal Kendall test"
	case "censored-seasonal-kendall":
		return "seasonal Kendall test for censored values (pairs whose order a reporting limit hides count as ties)"
	case "censored-mann-kendall":
		return "Mann–Kendall test for censored values (pairs whose order a reporting limit hides count as ties)"
	case "":
		return "no rank trend test"
	}
	return method
}

// rankPNote says what the rank test's p-value allows for.
func rankPNote(method string) string {
	switch {
	case strings.Contains(method, "hamed-rao"):
		return "two-sided; variance corrected for serial correlation (Hamed–Rao)"
	case strings.Contains(method, "hirsch-slack"):
		return "two-sided; per-season block means, with the covariance between seasons"
	case strings.Contains(method, "block-means"):
		return "two-sided; per-season block means"
	case strings.HasPrefix(method, "censored"):
		return "two-sided; not corrected for serial correlation"
	}
	return "two-sided"
}

func acfWords(basis string) string {
	switch basis {
	case "":
		return "not computed"
	case "time-grid":
		return "on the regular time grid (missing slots left out of the sums)"
	case "reading-order":
		return "in reading order, because the times fit no regular grid (lags count readings)"
	}
	return basis
}

// flagNames are the summary's 0/1 flags with their page wording.
var flagNames = []struct{ col, label string }{
	{"trend_detected", "trend (FDR)"},
	{"residual_dependence", "residual dependence"},
	{"step_change_suspected", "step change?"},
	{"insufficient_data", "insufficient data"},
}

type flagView struct {
	Label string
	On    bool
}

func flags(s *Series) []flagView {
	var out []flagView
	for _, f := range flagNames {
		if on, ok := s.Sum.flag(f.col); ok && on {
			out = append(out, flagView{f.label, true})
		}
	}
	return out
}
