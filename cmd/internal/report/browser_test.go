package report

import (
	"bufio"
	"bytes"
	"context"
	"encoding/base64"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"testing"
	"time"

	"trendsql/store/storetest"
)

// The real-browser check: Debian's Chromium, headless, driven over the
// DevTools protocol on a pipe (--remote-debugging-pipe: NUL-terminated JSON
// messages on file descriptors 3 and 4), opens the demo report's index and
// one series page from disk, collects console errors and uncaught
// exceptions, measures every chart and takes a screenshot of each page.
//
// Screenshots go to $TRENDSQL_SCREENSHOT_DIR (default: a folder in the
// system's temporary directory, printed in the test log); with
// TRENDSQL_UPDATE_SCREENSHOTS=1 they are also copied to testdata/report/
// for the README. Without Chromium the test skips, except under CI=true.

func chromiumPath() string {
	for _, p := range []string{os.Getenv("TRENDSQL_CHROMIUM"), "/usr/bin/chromium", "/usr/bin/chromium-browser"} {
		if p != "" {
			if _, err := os.Stat(p); err == nil {
				return p
			}
		}
	}
	return ""
}

type cdpMsg struct {
	ID        int64           `json:"id,omitempty"`
	Method    string          `json:"method,omitempty"`
	Params    json.RawMessage `json:"params,omitempty"`
	SessionID string          `json:"sessionId,omitempty"`
	Result    json.RawMessage `json:"result,omitempty"`
	Error     *struct {
		Message string `json:"message"`
	} `json:"error,omitempty"`
}

type cdp struct {
	w       io.Writer
	mu      sync.Mutex
	next    int64
	waiting map[int64]chan cdpMsg
	events  chan cdpMsg
}

func startCDP(r io.Reader, w io.Writer) *cdp {
	c := &cdp{w: w, waiting: map[int64]chan cdpMsg{}, events: make(chan cdpMsg, 1024)}
	go func() {
		br := bufio.NewReader(r)
		for {
			b, err := br.ReadBytes(0)
			if err != nil {
				close(c.events)
				return
			}
			var m cdpMsg
			if json.Unmarshal(bytes.TrimSuffix(b, []byte{0}), &m) != nil {
				continue
			}
			if m.ID != 0 {
				c.mu.Lock()
				ch := c.waiting[m.ID]
				delete(c.waiting, m.ID)
				c.mu.Unlock()
				if ch != nil {
					ch <- m
				}
				continue
			}
			select {
			case c.events <- m:
			default: // events nobody reads in time are dropped
			}
		}
	}()
	return c
}

func (c *cdp) call(ctx context.Context, session, method string, params any, out any) error {
	c.mu.Lock()
	c.next++
	id := c.next
	ch := make(chan cdpMsg, 1)
	c.waiting[id] = ch
	c.mu.Unlock()
	p, _ := json.Marshal(params)
	msg, _ := json.Marshal(cdpMsg{ID: id, Method: method, Params: p, SessionID: session})
	if _, err := c.w.Write(append(msg, 0)); err != nil {
		return err
	}
	select {
	case m := <-ch:
		if m.Error != nil {
			return fmt.Errorf("%s: %s", method, m.Error.Message)
		}
		if out != nil {
			return json.Unmarshal(m.Result, out)
		}
		return nil
	case <-ctx.Done():
		return fmt.Errorf("%s: %w", method, ctx.Err())
	}
}

type pageCheck struct {
	problems []string // console errors and exceptions
	charts   [][2]float64
	png      []byte
	after    string // value of the extra expression, run after the screenshot
}

// visit loads url in a new tab and waits for its load event, gathering
// console errors, then measures the charts and takes a screenshot of the
// top of the page.
func (c *cdp) visit(ctx context.Context, url string, width, height int, extra string) (*pageCheck, error) {
	var tgt struct {
		TargetID string `json:"targetId"`
	}
	if err := c.call(ctx, "", "Target.createTarget", map[string]any{"url": "about:blank"}, &tgt); err != nil {
		return nil, err
	}
	var att struct {
		SessionID string `json:"sessionId"`
	}
	if err := c.call(ctx, "", "Target.attachToTarget", map[string]any{"targetId": tgt.TargetID, "flatten": true}, &att); err != nil {
		return nil, err
	}
	s := att.SessionID
	for _, m := range []string{"Runtime.enable", "Log.enable", "Page.enable"} {
		if err := c.call(ctx, s, m, nil, nil); err != nil {
			return nil, err
		}
	}
	if err := c.call(ctx, s, "Emulation.setDeviceMetricsOverride", map[string]any{"width": width, "height": height, "deviceScaleFactor": 1, "mobile": false}, nil); err != nil {
		return nil, err
	}
	if err := c.call(ctx, s, "Page.navigate", map[string]any{"url": url}, nil); err != nil {
		return nil, err
	}
	pc := &pageCheck{}
	loaded := false
	for !loaded {
		select {
		case m, ok := <-c.events:
			if !ok {
				return nil, errors.New("browser closed the connection")
			}
			if m.SessionID != s {
				continue
			}
			switch m.Method {
			case "Page.loadEventFired":
				loaded = true
			case "Runtime.exceptionThrown", "Runtime.consoleAPICalled", "Log.entryAdded":
				if p := problem(m); p != "" {
					pc.problems = append(pc.problems, p)
				}
			}
		case <-ctx.Done():
			return nil, fmt.Errorf("loading %s: %w", url, ctx.Err())
		}
	}
	// Let the sorting script run, then measure every chart.
	var ev struct {
		Result struct {
			Value string `json:"value"`
		} `json:"result"`
		ExceptionDetails any `json:"exceptionDetails"`
	}
	expr := `JSON.stringify(Array.from(document.querySelectorAll("svg.chart")).map(function(s){var r=s.getBoundingClientRect();return [r.width,r.height]}))`
	if err := c.call(ctx, s, "Runtime.evaluate", map[string]any{"expression": expr, "returnByValue": true}, &ev); err != nil {
		return nil, err
	}
	if ev.ExceptionDetails != nil {
		return nil, fmt.Errorf("measuring charts: %v", ev.ExceptionDetails)
	}
	if err := json.Unmarshal([]byte(ev.Result.Value), &pc.charts); err != nil {
		return nil, fmt.Errorf("chart sizes %q: %v", ev.Result.Value, err)
	}
	// Drain events that arrived with the load.
	for drained := false; !drained; {
		select {
		case m := <-c.events:
			if m.SessionID == s {
				if p := problem(m); p != "" {
					pc.problems = append(pc.problems, p)
				}
			}
		default:
			drained = true
		}
	}
	var shot struct {
		Data string `json:"data"`
	}
	if err := c.call(ctx, s, "Page.captureScreenshot", map[string]any{"format": "png"}, &shot); err != nil {
		return nil, err
	}
	png, err := base64.StdEncoding.DecodeString(shot.Data)
	pc.png = png
	if err != nil || extra == "" {
		return pc, err
	}
	if err := c.call(ctx, s, "Runtime.evaluate", map[string]any{"expression": extra, "returnByValue": true}, &ev); err != nil {
		return nil, err
	}
	if ev.ExceptionDetails != nil {
		return nil, fmt.Errorf("evaluating %q: %v", extra, ev.ExceptionDetails)
	}
	pc.after = ev.Result.Value
	return pc, nil
}

// sortByN clicks the index table's "n" heading twice and returns the
// column's values after each click.
const sortByN = `(function(){
var th=Array.from(document.querySelectorAll("#series-table th")).filter(function(h){return h.textContent.trim()==="n"})[0];
function col(){return Array.from(document.querySelectorAll("#series-table tbody tr")).map(function(r){return +r.cells[th.cellIndex].getAttribute("data-v")})}
th.click();var up=col();th.click();var down=col();
return JSON.stringify([up,down]);})()`

// problem describes a console error, an uncaught exception or an error log
// entry ("" for anything else).
func problem(m cdpMsg) string {
	var p struct {
		Type  string `json:"type"`
		Args  []any  `json:"args"`
		Entry *struct {
			Level, Text, URL string
		} `json:"entry"`
		ExceptionDetails *struct {
			Text      string `json:"text"`
			Exception *struct {
				Description string `json:"description"`
			} `json:"exception"`
		} `json:"exceptionDetails"`
	}
	json.Unmarshal(m.Params, &p)
	switch m.Method {
	case "Runtime.exceptionThrown":
		if p.ExceptionDetails != nil {
			d := p.ExceptionDetails.Text
			if p.ExceptionDetails.Exception != nil {
				d += " " + p.ExceptionDetails.Exception.Description
			}
			return "exception: " + d
		}
		return "exception"
	case "Runtime.consoleAPICalled":
		if p.Type == "error" || p.Type == "assert" {
			return fmt.Sprintf("console.%s: %v", p.Type, p.Args)
		}
	case "Log.entryAdded":
		if p.Entry != nil && p.Entry.Level == "error" {
			return "log: " + p.Entry.Text + " " + p.Entry.URL
		}
	}
	return ""
}

func TestReportInChromium(t *testing.T) {
	bin := chromiumPath()
	if bin == "" {
		if os.Getenv("CI") == "true" {
			t.Fatal("Chromium is not installed (CI installs Debian's chromium package in .ci/run)")
		}
		t.Skip("Chromium not found at /usr/bin/chromium (apt-get install chromium); skipping the browser check")
	}
	s := storetest.View(t, demoPath(t))
	// The demo basin only (the fixture's hostile station stays out of the
	// README's pictures).
	res := writeReport(t, s, Options{GroupBy: "aquifer", Selection: Selection{Where: "st.id LIKE 'VOR-%'"}})
	t.Logf("demo report: %d files, %d bytes", len(res.Files), res.Bytes)
	id, _ := pageOf(t, s, res, "VOR-W01", "groundwater_level")

	profile := t.TempDir()
	toBrowserR, toBrowserW, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	fromBrowserR, fromBrowserW, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, bin, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync", "--disable-extensions",
		"--disable-default-apps", "--hide-scrollbars", "--user-data-dir="+profile, "--remote-debugging-pipe", "about:blank")
	cmd.ExtraFiles = []*os.File{toBrowserR, fromBrowserW}
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	toBrowserR.Close()
	fromBrowserW.Close()
	c := startCDP(fromBrowserR, toBrowserW)
	defer func() {
		c.call(ctx, "", "Browser.close", nil, nil)
		toBrowserW.Close()
		if err := cmd.Wait(); err != nil && ctx.Err() == nil {
			t.Logf("chromium exited: %v", err)
		}
	}()

	outDir := os.Getenv("TRENDSQL_SCREENSHOT_DIR")
	if outDir == "" {
		outDir = filepath.Join(os.TempDir(), "trendsql-report-screenshots")
	}
	if err := os.MkdirAll(outDir, 0o755); err != nil {
		t.Fatal(err)
	}
	// The index window is tall enough to show the maps and the top of the table.
	for _, pg := range []struct {
		file, shot, extra string
		w, h              int
	}{{"index.html", "index.png", sortByN, 1440, 2500}, {res.Pages[id], "series-page.png", "", 1280, 1500}} {
		abs, _ := filepath.Abs(filepath.Join(res.Dir, pg.file))
		pc, err := c.visit(ctx, "file://"+abs, pg.w, pg.h, pg.extra)
		if err != nil {
			t.Fatalf("%s: %v (chromium stderr: %s)", pg.file, err, tail(stderr.String()))
		}
		for _, p := range pc.problems {
			t.Errorf("%s: %s", pg.file, p)
		}
		if len(pc.charts) == 0 {
			t.Errorf("%s: no charts", pg.file)
		}
		for i, wh := range pc.charts {
			if !(wh[0] > 0 && wh[1] > 0) {
				t.Errorf("%s: chart %d has size %gx%g", pg.file, i+1, wh[0], wh[1])
			}
		}
		if pg.extra != "" {
			var cols [2][]float64
			if err := json.Unmarshal([]byte(pc.after), &cols); err != nil {
				t.Fatalf("sorting: %v (%q)", err, pc.after)
			}
			if len(cols[0]) != len(res.Pages) || !sort.Float64sAreSorted(cols[0]) {
				t.Errorf("after one click on n the rows are %v, want %d rows ascending", cols[0], len(res.Pages))
			}
			for i := 1; i < len(cols[1]); i++ {
				if cols[1][i] > cols[1][i-1] {
					t.Errorf("after a second click on n the rows are %v, want descending", cols[1])
					break
				}
			}
		}
		if !bytes.HasPrefix(pc.png, []byte("\x89PNG")) {
			t.Fatalf("%s: screenshot is not a PNG", pg.file)
		}
		path := filepath.Join(outDir, pg.shot)
		if err := os.WriteFile(path, pc.png, 0o644); err != nil {
			t.Fatal(err)
		}
		t.Logf("%s: %d charts, screenshot %s", pg.file, len(pc.charts), path)
		if os.Getenv("TRENDSQL_UPDATE_SCREENSHOTS") == "1" {
			dst := filepath.Join("..", "..", "..", "testdata", "report", pg.shot)
			if err := os.MkdirAll(filepath.Dir(dst), 0o755); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(dst, pc.png, 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}
}

func tail(s string) string {
	if len(s) > 600 {
		s = s[len(s)-600:]
	}
	return strings.TrimSpace(s)
}
