package report

import (
	"context"
	"database/sql"
	"errors"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"trendsql/store/storetest"
)

// Station names, metadata, variables and units reach the pages as text,
// never as markup, in the HTML and inside the SVG charts.
func TestHostileTextIsEscaped(t *testing.T) {
	s := storetest.View(t, demoPath(t))
	res := writeReport(t, s, Options{Selection: Selection{Stations: []string{hostileStation, "VOR-M01"}}, MetaCols: []string{"owner", "aquifer"}, GroupBy: "aquifer"})
	_, page := pageOf(t, s, res, hostileStation, hostileVar)
	index := readFile(t, filepath.Join(res.Dir, "index.html"))
	for name, doc := range map[string]string{"index": index, "series page": page} {
		for _, raw := range []string{hostileName, hostileStation, hostileUnit, hostileVar, `Smith & "Sons"`, `karst & <chalk>`, "<chalk>", "<LOQ"} {
			if strings.Contains(doc, raw) {
				t.Errorf("%s contains %q unescaped", name, raw)
			}
		}
		for _, esc := range []string{"&lt;script&gt;alert(1)&lt;/script&gt;", "&lt;LOQ mg/L", "Smith &amp; &#34;Sons&#34; &#39;Ltd&#39;", "karst &amp; &lt;chalk&gt;"} {
			if !strings.Contains(doc, esc) {
				t.Errorf("%s lacks the escaped text %q", name, esc)
			}
		}
	}
	if k := strings.Count(strings.ToLower(index), "<script"); k != 1 {
		t.Errorf("index has %d script elements, want only the sorting script", k)
	}
	if k := strings.Count(strings.ToLower(page), "<script"); k != 0 {
		t.Errorf("series page has %d script elements, want none", k)
	}
	// Chart text (axis label with the unit, accessible label with the
	// station id) is escaped inside the SVG as well.
	f := figureRe.FindStringSubmatch(page)
	if f == nil || !strings.Contains(f[4], "&lt;LOQ mg/L") || !strings.Contains(f[4], `aria-label="readings of ../x&lt;script&gt;`) {
		t.Errorf("readings chart does not carry the escaped unit and station id")
	}
	// The page of the station "../x<script>" is a plain file inside the folder.
	p := res.Pages[seriesID(t, s.DB, hostileStation, hostileVar)]
	if filepath.Dir(filepath.Join(res.Dir, p)) != filepath.Clean(res.Dir) || strings.ContainsAny(p, `/\<>"&`) || strings.Contains(p, "..") {
		t.Errorf("page name %q", p)
	}
	if _, err := os.Stat(filepath.Join(res.Dir, p)); err != nil {
		t.Error(err)
	}
}

func seriesID(t *testing.T, db *sql.DB, station, variable string) int64 {
	t.Helper()
	var id int64
	if err := db.QueryRow(`SELECT id FROM series WHERE station_id = ? AND variable = ?`, station, variable).Scan(&id); err != nil {
		t.Fatal(err)
	}
	return id
}

// Page names stay inside the folder, differ for different ids (also when
// compared without case) and are short.
func TestPageNames(t *testing.T) {
	long := strings.Repeat("ü-station-", 300)
	keys := []seriesKey{
		{"../x", "stage"}, {"..", "stage"}, {"a/b", "stage"}, {"a_b", "stage"}, {"a b", "stage"}, {"a\\b", "stage"},
		{"x\x00y", "stage"}, {"xy", "stage"}, {"x", "\x00stage"}, {"ABC", "stage"}, {"abc", "stage"},
		{"a", "b c"}, {"a b", "c"}, {"ab", "c"}, {"", ""}, {"<script>", "&"}, {"CON", "stage"}, {"nul", ""},
		{long, "stage"}, {long + "x", "stage"}, {long, "stagE"}, {"index", "html"}, {"VOR-G01", "stage"},
	}
	names := pageNames(keys)
	seen := map[string]seriesKey{}
	for _, k := range keys {
		n := names[k]
		lower := strings.ToLower(n)
		if prev, dup := seen[lower]; dup {
			t.Errorf("%q and %q share the page name %q", prev, k, n)
		}
		seen[lower] = k
		if !validName(n+".html") || strings.ContainsAny(n, "/\\\x00 .") || len(n) > 130 || n == "index" || !strings.HasPrefix(n, "series-") {
			t.Errorf("page name %q for %q", n, k)
		}
	}
	if got := names[seriesKey{"VOR-G01", "stage"}]; !strings.HasPrefix(got, "series-vor-g01-stage-") {
		t.Errorf("readable part of %q", got)
	}
	// A forced short-hash collision falls back to the full hash.
	a, b := seriesKey{"p", "q"}, seriesKey{"p", "r"}
	if pageBase(a.station, a.variable, 64) == pageBase(b.station, b.variable, 64) {
		t.Fatal("full hashes collide")
	}
}

// A folder with other files is refused without Force; with Force they stay
// untouched, and a file the report would write but did not write before is
// never replaced. A report folder can be rewritten, and pages no longer
// selected are removed.
func TestOutputFolderSafety(t *testing.T) {
	s := storetest.View(t, demoPath(t))
	ctx := context.Background()
	dir := filepath.Join(t.TempDir(), "out")
	os.MkdirAll(dir, 0o755)
	mine := filepath.Join(dir, "notes.txt")
	os.WriteFile(mine, []byte("keep me"), 0o644)
	sel := Selection{Stations: []string{"VOR-M01", "VOR-M02"}}
	_, err := Write(ctx, s.DB, Options{Dir: dir, Selection: sel})
	if !errors.Is(err, ErrDirNotEmpty) {
		t.Fatalf("non-empty folder: got %v, want ErrDirNotEmpty", err)
	}
	res, err := Write(ctx, s.DB, Options{Dir: dir, Selection: sel, Force: true})
	if err != nil {
		t.Fatal(err)
	}
	if readFile(t, mine) != "keep me" {
		t.Error("foreign file changed")
	}
	// Rewrite without Force (only report files besides notes.txt, which
	// Force allowed) and with fewer series: stale pages go.
	if _, err := Write(ctx, s.DB, Options{Dir: dir, Selection: Selection{Stations: []string{"VOR-M01"}}, Force: true}); err != nil {
		t.Fatal(err)
	}
	for _, f := range res.Files {
		if strings.Contains(f, "vor-m02") {
			if _, err := os.Stat(filepath.Join(dir, f)); !os.IsNotExist(err) {
				t.Errorf("stale page %s left", f)
			}
		}
	}
	// A foreign index.html is never replaced, even with Force.
	dir2 := filepath.Join(t.TempDir(), "out2")
	os.MkdirAll(dir2, 0o755)
	foreign := filepath.Join(dir2, "index.html")
	os.WriteFile(foreign, []byte("<p>someone's page</p>"), 0o644)
	_, err = Write(ctx, s.DB, Options{Dir: dir2, Selection: sel, Force: true})
	if !errors.Is(err, ErrNotReportFile) {
		t.Fatalf("foreign index.html: got %v, want ErrNotReportFile", err)
	}
	if readFile(t, foreign) != "<p>someone's page</p>" {
		t.Error("foreign index.html replaced")
	}
	// An empty folder, then the same report again, needs no Force.
	dir3 := filepath.Join(t.TempDir(), "out3")
	for i := 0; i < 2; i++ {
		if _, err := Write(ctx, s.DB, Options{Dir: dir3, Selection: sel}); err != nil {
			t.Fatalf("write %d: %v", i+1, err)
		}
	}
}

// Pages load nothing: no external scripts, style sheets, images, fonts or
// frames, and every link is to another file of the report.
func TestPagesAreSelfContained(t *testing.T) {
	s := storetest.View(t, demoPath(t))
	res := writeReport(t, s, Options{Selection: Selection{Stations: []string{"VOR-M01", "VOR-W01"}}, PNG: true})
	files := map[string]bool{}
	for _, f := range res.Files {
		files[f] = true
	}
	ref := regexp.MustCompile(`(?i)\b(src|href|xlink:href)\s*=\s*"([^"]*)"`)
	for _, f := range res.Files {
		if !strings.HasSuffix(f, ".html") {
			continue
		}
		doc := readFile(t, filepath.Join(res.Dir, f))
		low := strings.ToLower(doc)
		for _, bad := range []string{"<link", "<iframe", "<img", "@import", "url(", "@font-face", "<object", "<embed"} {
			if strings.Contains(low, bad) {
				t.Errorf("%s contains %q", f, bad)
			}
		}
		if k := strings.Count(low, "<script"); k != strings.Count(low, "<script>") {
			t.Errorf("%s has a script element with attributes (an external script?)", f)
		}
		for _, m := range ref.FindAllStringSubmatch(doc, -1) {
			if !files[m[2]] {
				t.Errorf("%s refers to %q, which is not a file of the report", f, m[2])
			}
		}
	}
}
