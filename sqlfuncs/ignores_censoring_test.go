package sqlfuncs_test

import (
	"strings"
	"testing"

	"trendsql/sqlfuncs"
)

// TestIgnoresCensoringList: the list the store's censoring check uses names
// registered functions only, and every listed function that takes a value
// is on it except the censored_* family (which takes the mark), the
// functions of a model or JSON (trend_value, correlogram_rows) and
// regr_count (which counts rows).
func TestIgnoresCensoringList(t *testing.T) {
	takesNoValue := map[string]bool{"trend_value": true, "correlogram_rows": true, "regr_count": true}
	seen := map[string]bool{}
	for _, d := range sqlfuncs.List() {
		seen[d.Name] = true
		want := !strings.HasPrefix(d.Name, "censored_") && !takesNoValue[d.Name]
		if got := sqlfuncs.IgnoresCensoring(d.Name); got != want {
			t.Errorf("IgnoresCensoring(%q) = %v, want %v", d.Name, got, want)
		}
		if got := sqlfuncs.IgnoresCensoring(strings.ToUpper(d.Name)); got != want {
			t.Errorf("IgnoresCensoring(%q) = %v, want %v", strings.ToUpper(d.Name), got, want)
		}
	}
	for _, n := range []string{"avg", "sum", "censored_sen_slope", "no_such_function"} {
		if sqlfuncs.IgnoresCensoring(n) {
			t.Errorf("IgnoresCensoring(%q) = true", n)
		}
	}
	if len(seen) == 0 {
		t.Fatal("no functions listed")
	}
}
