package stats_test

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"

	"trendsql/sqlfuncs/stats"
)

// TestAdjustBHAgainstR compares AdjustBH with R's stats::p.adjust(p,
// method = "BH") on the cases of testdata/reference/fdr_bh.json (an NA in R
// is a NaN here and stays out of the family).
func TestAdjustBHAgainstR(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "reference", "fdr_bh.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Source string `json:"source"`
		Cases  []struct {
			Name     string     `json:"name"`
			P        []*float64 `json:"p"`
			Adjusted []*float64 `json:"adjusted"`
		} `json:"cases"`
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Cases) < 3 {
		t.Fatalf("reference file has %d cases", len(ref.Cases))
	}
	for _, c := range ref.Cases {
		p := make([]float64, len(c.P))
		for i, v := range c.P {
			p[i] = math.NaN()
			if v != nil {
				p[i] = *v
			}
		}
		got := stats.AdjustBH(p)
		for i, want := range c.Adjusted {
			switch {
			case want == nil:
				if !math.IsNaN(got[i]) {
					t.Errorf("%s: p[%d] = NA: adjusted %v, want NaN", c.Name, i, got[i])
				}
			case math.Abs(got[i]-*want) > 1e-9*math.Abs(*want):
				t.Errorf("%s: p[%d] = %v: adjusted %v, R p.adjust gives %v (%s)", c.Name, i, p[i], got[i], *want, ref.Source)
			}
		}
	}
}
