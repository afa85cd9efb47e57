package summaries

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"trendsql/store/storetest"
)

// Compute gives, without writing, the row and correlogram a run with the
// same options stores: every column of every series (plain and censored,
// long enough or not), the FDR adjustment across the same series included.
// The stored figures themselves are checked against the SQL functions in
// TestSummaryFiguresEqualSQLFunctions and TestSummarizeCensoredSeries.
func TestComputeEqualsStoredRun(t *testing.T) {
	fx := buildSummaryFixture(t)
	db := fx.s.DB
	rng := rand.New(rand.NewPCG(7, 7))
	tt := make([]int64, 80)
	y := make([]float64, 80)
	for i := range tt {
		tt[i] = 1.5e9 + int64(i)*30*86400
		y[i] = math.Round((3+0.04*float64(i)+rng.NormFloat64())*10) / 10
	}
	cens := storetest.InsertSeries(t, db, "T-CENS", "tp", tt, y)
	if _, err := db.Exec(`UPDATE readings SET censored = '<', value = 2 WHERE series_id = ? AND value < 2`, cens); err != nil {
		t.Fatal(err)
	}
	ids := []int64{cens}
	for _, id := range fx.ids {
		ids = append(ids, id)
	}
	for _, period := range []float64{0, fixtureYear} {
		o := fixtureOptions(period)
		got, err := Compute(context.Background(), db, ids, o)
		if err != nil {
			t.Fatal(err)
		}
		if len(got) != len(ids) {
			t.Fatalf("period %g: %d results for %d series", period, len(got), len(ids))
		}
		before := queryInt64(t, db, `SELECT count(*) FROM series_summaries`)
		if before != 0 && period == 0 {
			t.Fatalf("Compute wrote %d summary rows", before)
		}
		run := mustRun(t, fx.s, o)
		for _, c := range got {
			row := storedRow(t, db, run.RunID, c.SeriesID)
			for col := range c.Columns {
				if _, ok := row[col]; !ok {
					t.Errorf("series %d: computed column %s is not a stored column", c.SeriesID, col)
				}
			}
			for col, want := range row {
				if col == "run_id" {
					continue
				}
				v, ok := c.Columns[col]
				if !ok {
					t.Errorf("series %d: column %s not computed", c.SeriesID, col)
					continue
				}
				if !sameSQLValue(v, want) {
					t.Errorf("period %g, series %d, %s: computed %v (%T), stored %v (%T)", period, c.SeriesID, col, v, v, want, want)
				}
			}
			rows, err := db.Query(`SELECT lag, acf, band, ljung_box_p FROM series_correlograms WHERE run_id = ? AND series_id = ? ORDER BY lag`, run.RunID, c.SeriesID)
			if err != nil {
				t.Fatal(err)
			}
			k := 0
			for rows.Next() {
				var lag int
				var acf, band, p *float64
				if err := rows.Scan(&lag, &acf, &band, &p); err != nil {
					t.Fatal(err)
				}
				if k >= len(c.Correlogram) {
					k++
					continue
				}
				g := c.Correlogram[k]
				if g.Lag != lag || !sameFloat(g.ACF, acf) || !sameFloat(g.Band, band) || !sameFloat(g.LBP, p) {
					t.Errorf("series %d lag %d: computed %+v, stored acf %v band %v p %v", c.SeriesID, lag, g, acf, band, p)
				}
				k++
			}
			rows.Close()
			if k != len(c.Correlogram) {
				t.Errorf("series %d: %d correlogram rows computed, %d stored", c.SeriesID, len(c.Correlogram), k)
			}
		}
	}
}

// sameSQLValue: equal text, NULLs, or numbers equal as float64 (a REAL
// column may give back an integer-valued number as stored, and an INTEGER
// column an int64).
func sameSQLValue(a, b any) bool {
	if a == nil || b == nil {
		return a == nil && b == nil
	}
	fa, okA := numberOf(a)
	fb, okB := numberOf(b)
	if okA && okB {
		return fa == fb
	}
	if bs, ok := b.([]byte); ok {
		b = string(bs)
	}
	return a == b
}

func numberOf(v any) (float64, bool) {
	switch x := v.(type) {
	case int64:
		return float64(x), true
	case float64:
		return x, true
	}
	return 0, false
}

func sameFloat(v float64, p *float64) bool {
	if p == nil {
		return math.IsNaN(v)
	}
	return v == *p
}
