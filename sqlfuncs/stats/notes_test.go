package stats

import (
	"math"
	"strings"
	"testing"

	"trendsql/sqlfuncs/timefmt"
)

// Steps are written in natural units that step= reads back exactly: 15.2
// days in days, not as 365.25h.
func TestFormatStepNaturalUnits(t *testing.T) {
	for sec, want := range map[float64]string{
		365.25 * 3600: "15.21875d", YearStep: "1y", MonthStep: "30.4375d", 7 * 86400: "1w",
		1.5 * 3600: "1.5h", 36 * 3600: "1.5d", 25 * 3600: "25h", 900: "15min", 0.5: "0.5s",
	} {
		got := FormatStep(sec)
		if got != want {
			t.Errorf("FormatStep(%v) = %q, want %q", sec, got, want)
		}
		if back, err := timefmt.ParseDuration(got); err != nil || back != sec {
			t.Errorf("ParseDuration(%q) = %v, %v; want %v", got, back, err, sec)
		}
	}
}

// A summary note never suggests an option summarize does not have: the
// grid error's step= suggestion (an option of the SQL lag functions) is
// left out of the note, the diagnosis kept.
func TestSummaryGridNoteNamesNoStepOption(t *testing.T) {
	// Manual readings roughly every 15.2 days at irregular hours: the
	// inferred grid does not fit them.
	var tt, y []float64
	for i := 0; i < 60; i++ {
		tt = append(tt, 1.5e9+float64(i)*365.25*3600+float64((i*7919)%23)*3600*5)
		y = append(y, math.Sin(float64(i)))
	}
	g, _, err := Regularize(tt, y, 0)
	if err == nil {
		t.Fatalf("fixture fits a %v grid; the test needs an off-grid series", g.Step)
	}
	if !strings.Contains(err.Error(), "step=") {
		t.Fatalf("fixture: the SQL-side grid error should carry a step= suggestion: %v", err)
	}
	s := SummarizeSeries(tt, y, SummaryOptions{MaxLag: 12, Alpha: 0.05, Confidence: 0.95, MinN: 10})
	if !strings.Contains(s.Problem, "do not fit a regular grid") {
		t.Fatalf("notes %q lack the grid diagnosis", s.Problem)
	}
	if strings.Contains(s.Problem, "step=") {
		t.Errorf("notes %q suggest step=, which summarize does not have", s.Problem)
	}
}
