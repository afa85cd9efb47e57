package report

import (
	"context"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"trendsql/sqlfuncs/stats"
	"trendsql/store"
	"trendsql/store/storetest"
	"trendsql/store/summaries"
)

// Series that the latest run lacks are computed as summarize computes them
// with that run's parameters — a series with censored readings through the
// censoring-aware methods — so their pages show the figures that an
// earlier run with the same parameters stored for them, except the FDR q
// and the trend flag taken from it, which belong to a whole run.
func TestMissingSeriesComputedAsSummarizeWould(t *testing.T) {
	ctx := context.Background()
	path := storetest.Copy(t, demoPath(t))
	s, err := store.Open(ctx, path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	var first int64
	if err := s.DB.QueryRow(`SELECT max(id) FROM summary_runs`).Scan(&first); err != nil {
		t.Fatal(err)
	}
	later, err := summaries.Run(ctx, s, summaries.Options{Stations: []string{"VOR-M07"}, Variables: []string{"nitrate_n"},
		Model: fixtureModel, ToolVersion: "test", Analyze: stats.SummarizeSeries, WriteWait: time.Minute})
	if err != nil {
		t.Fatal(err)
	}
	sel := Selection{Stations: []string{"VOR-M07", "VOR-M01", censoredStation}}
	now := writeReport(t, s, Options{Selection: sel})
	// VOR-M07 and VOR-M01 have a groundwater level and a nitrate series each.
	if now.Run.ID != later.RunID || now.Series != 5 || now.OnTheFly != 4 {
		t.Fatalf("run %d, %d series, %d computed now; want run %d, 5 series, 4 computed now", now.Run.ID, now.Series, now.OnTheFly, later.RunID)
	}
	stored := writeReport(t, s, Options{Selection: sel, RunID: first})
	table := regexp.MustCompile(`(?s)<h2>Figures</h2>.*?<p class="caution">`)
	runRows := regexp.MustCompile(`<tr><td>(q, FDR-adjusted|flags)</td>.*?</tr>\n`)
	checked := 0
	for id, page := range now.Pages {
		a := readFile(t, filepath.Join(now.Dir, page))
		b := readFile(t, filepath.Join(stored.Dir, stored.Pages[id]))
		computed := strings.Contains(a, "holds no summary of this series")
		var station, variable string
		if err := s.DB.QueryRow(`SELECT station_id, variable FROM series WHERE id = ?`, id).Scan(&station, &variable); err != nil {
			t.Fatal(err)
		}
		if computed != (station != "VOR-M07" || variable != "nitrate_n") {
			t.Errorf("%s: page says computed now: %v", page, computed)
		}
		if !computed {
			continue
		}
		fa, fb := runRows.ReplaceAllString(table.FindString(a), ""), runRows.ReplaceAllString(table.FindString(b), "")
		if fa == "" || fa != fb {
			t.Errorf("%s: figures computed now differ from those run %d stored:\n%s\n---\n%s", page, first, fa, fb)
		}
		if station == censoredStation && !strings.Contains(fa, "test for censored values") {
			t.Errorf("%s: the censored series is not tested with the censoring-aware method:\n%s", page, fa)
		}
		checked++
	}
	if checked != 4 {
		t.Errorf("%d pages computed now compared, want 4", checked)
	}
}
