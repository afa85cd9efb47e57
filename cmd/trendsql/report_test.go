package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"trendsql/store/storetest"
)

func TestReportCommand(t *testing.T) {
	db := storetest.Copy(t, demoStore(t))
	dir := filepath.Join(t.TempDir(), "rep")
	sel := []string{"--db", db, "--station", "VOR-M01,VOR-M02"}

	if e, code := runMain(append([]string{"report"}, sel...)...); code != ExitUsage || !strings.Contains(e, "--out") {
		t.Errorf("without --out: exit %d, %q", code, e)
	}
	if e, code := runMain(append([]string{"report", "--out", dir, "--series", "x1"}, sel...)...); code != ExitUsage || !strings.Contains(e, "--series") {
		t.Errorf("bad --series: exit %d, %q", code, e)
	}
	// Before any summarize run every figure is computed now with
	// summarize's defaults: the pages' figures are those that a summarize
	// run without model flags then stores.
	now := filepath.Join(t.TempDir(), "now")
	if e, code := runMain(append([]string{"report", "--out", now}, sel...)...); code != ExitOK || !strings.Contains(e, "computed now with summarize's defaults") {
		t.Errorf("before any summarize run: exit %d, %q", code, e)
	}
	if b, _ := os.ReadFile(filepath.Join(now, "index.html")); !strings.Contains(string(b), "No summarize run holds these series") {
		t.Error("index of the report before any run does not say its figures were computed now")
	}
	if e, code := runMain(append([]string{"summarize", "--quiet"}, sel...)...); code != ExitOK {
		t.Fatalf("summarize: exit %d, %s", code, e)
	}
	stored := filepath.Join(t.TempDir(), "stored")
	if e, code := runMain(append([]string{"report", "--out", stored}, sel...)...); code != ExitOK || !strings.Contains(e, "4 series from summarize run 1") {
		t.Fatalf("report of run 1: exit %d, %q", code, e)
	}
	figures := regexp.MustCompile(`(?s)<h2>Figures</h2>.*?<p class="caution">`)
	pagesNow, _ := filepath.Glob(filepath.Join(now, "series-*.html"))
	if len(pagesNow) != 4 {
		t.Fatalf("%d pages computed now, want 4", len(pagesNow))
	}
	for _, p := range pagesNow {
		a, _ := os.ReadFile(p)
		b, err := os.ReadFile(filepath.Join(stored, filepath.Base(p)))
		if err != nil {
			t.Fatal(err)
		}
		fa := strings.Replace(figures.FindString(string(a)), "across the series of this report", "across the run&#39;s series", 1)
		fb := figures.FindString(string(b))
		if fa == "" || fa != fb {
			t.Errorf("%s: figures computed now differ from those of the stored run:\n%s\n---\n%s", filepath.Base(p), fa, fb)
		}
	}
	if e, code := runMain(append([]string{"summarize", "--quiet", "--period", "1y"}, sel...)...); code != ExitOK {
		t.Fatalf("summarize: exit %d, %s", code, e)
	}
	e, code := runMain(append([]string{"report", "--out", dir, "--png", "--group-by", "aquifer"}, sel...)...)
	if code != ExitOK || !strings.Contains(e, "4 series from summarize run 2") {
		t.Fatalf("report: exit %d, %q", code, e)
	}
	pngs, _ := filepath.Glob(filepath.Join(dir, "*.png"))
	pages, _ := filepath.Glob(filepath.Join(dir, "series-*.html"))
	// 4 series × 4 charts, plus one map and one grouped chart per variable (2).
	if len(pages) != 4 || len(pngs) != 4*4+2*2 {
		t.Errorf("%d pages and %d PNG files, want 4 and 20", len(pages), len(pngs))
	}
	if e, code := runMain(append([]string{"report", "--out", dir, "--run", "7"}, sel...)...); code != ExitFailed || !strings.Contains(e, "--run 7") {
		t.Errorf("unknown run: exit %d, %q", code, e)
	}

	other := filepath.Join(t.TempDir(), "other")
	os.MkdirAll(other, 0o755)
	os.WriteFile(filepath.Join(other, "minutes.docx"), []byte("x"), 0o644)
	if e, code := runMain(append([]string{"report", "--out", other}, sel...)...); code != ExitUsage || !strings.Contains(e, "--force") || !strings.Contains(e, "minutes.docx") {
		t.Errorf("folder with other files: exit %d, %q", code, e)
	}
	os.WriteFile(filepath.Join(other, "index.html"), []byte("mine"), 0o644)
	if e, code := runMain(append([]string{"report", "--out", other, "--force"}, sel...)...); code != ExitFailed || !strings.Contains(e, "never replaced") {
		t.Errorf("foreign index.html with --force: exit %d, %q", code, e)
	}
	if b, _ := os.ReadFile(filepath.Join(other, "index.html")); string(b) != "mine" {
		t.Error("foreign index.html was replaced")
	}
}
