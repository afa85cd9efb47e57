package main

import (
	"bytes"
	"database/sql"
	"regexp"
	"strings"
	"testing"

	_ "modernc.org/sqlite"

	"trendsql/store/storetest"
)

// A run whose parameters differ from the previous successful run on the same
// selection says so on stderr, naming only flags summarize has, with values
// in natural units; latest_series_summaries then shows that run's parameter
// set and never mixes it with another, and the earlier rows stay in
// latest_series_summaries_by_parameters.
func TestSummarizeParameterChangeNote(t *testing.T) {
	db := storetest.Copy(t, demoStore(t))
	if errs, code := runMain("--db", db, "summarize", "--quiet", "--period", "1y", "--station", "VOR-W03,VOR-W06"); code != 0 {
		t.Fatalf("first run: exit %d, %s", code, errs)
	}
	if errs, _ := runMain("--db", db, "summarize", "--quiet", "--period", "1y", "--station", "VOR-W03,VOR-W06"); strings.Contains(errs, "note:") {
		t.Errorf("same parameters: unexpected note %q", errs)
	}
	errs, code := runMain("--db", db, "summarize", "--quiet", "--changed-only", "--station", "VOR-W03,VOR-W06", "--max-lag", "12")
	if code != 0 {
		t.Fatalf("run without --period: exit %d, %s", code, errs)
	}
	for _, want := range []string{"run 3's parameters differ from run 2 on the same selection", "--period 1y there, no --period here",
		"--max-lag 24 there, --max-lag 12 here", "to continue the earlier series use --period 1y --harmonics 2 --seasons 12 --max-lag 24"} {
		if !strings.Contains(errs, want) {
			t.Errorf("stderr %q lacks %q", errs, want)
		}
	}
	// Every flag the note names exists.
	var help bytes.Buffer
	Main([]string{"summarize", "--help"}, strings.NewReader(""), &help, &help)
	for _, f := range regexp.MustCompile(`--[a-z][a-z-]*`).FindAllString(errs, -1) {
		if !strings.Contains(help.String(), "  "+f+" ") && !strings.Contains(help.String(), ", "+f+" ") {
			t.Errorf("the note names %s, which summarize --help does not list", f)
		}
	}

	conn, err := sql.Open("sqlite", db)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	var latest, other, mixed int
	if err := conn.QueryRow(`SELECT count(*), count(DISTINCT run_parameters) FROM latest_series_summaries`).Scan(&latest, &mixed); err != nil {
		t.Fatal(err)
	}
	if err := conn.QueryRow(`SELECT count(*) FROM latest_series_summaries_by_parameters`).Scan(&other); err != nil {
		t.Fatal(err)
	}
	if latest != 2 || mixed != 1 || other != 4 {
		t.Errorf("latest view: %d rows with %d parameter sets, by-parameters view %d rows; want 2, 1, 4", latest, mixed, other)
	}
	var period float64
	if err := conn.QueryRow(`SELECT DISTINCT run_parameters ->> 'period_s' FROM latest_series_summaries`).Scan(&period); err != nil || period != 0 {
		t.Errorf("latest view's period %v (%v), want the last run's 0", period, err)
	}
	// A later run with the first parameter set on one station: "latest"
	// follows that set, taking each series' latest row computed with it.
	if errs, code := runMain("--db", db, "summarize", "--quiet", "--period", "1y", "--station", "VOR-W03"); code != 0 {
		t.Fatalf("third parameter run: exit %d, %s", code, errs)
	}
	rows, err := conn.Query(`SELECT station_id, run_id FROM latest_series_summaries ORDER BY station_id`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	got := ""
	for rows.Next() {
		var st string
		var run int64
		rows.Scan(&st, &run)
		got += st + ":" + string(rune('0'+run)) + " "
	}
	if got != "VOR-W03:4 VOR-W06:2 " {
		t.Errorf("latest rows %q, want VOR-W03 from run 4 and VOR-W06 from run 2 (both --period 1y)", got)
	}
}
