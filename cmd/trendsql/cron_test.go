package main

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"trendsql/store/storetest"
)

// TestReadmeCronRecipe runs the command of the README's crontab line with
// sh: a run that stores, then one with nothing new, stay silent; a
// mistyped station or store path prints the failure line that cron mails.
func TestReadmeCronRecipe(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("..", "..", "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	var line string
	for _, l := range strings.Split(string(raw), "\n") {
		if strings.Contains(l, "/usr/local/bin/trendsql summarize --changed-only") {
			line = l
		}
	}
	// The command is everything after the five time fields.
	fields := strings.Fields(line)
	if len(fields) < 6 {
		t.Fatalf("no crontab line in README.md")
	}
	command := strings.Join(fields[5:], " ")
	dir := t.TempDir()
	logFile := filepath.Join(dir, "summarize.log")
	command = strings.ReplaceAll(command, "/var/log/trendsql/summarize.log", logFile)
	db := storetest.Copy(t, demoStore(t))
	run := func(storePath, extra string) string {
		t.Helper()
		c := strings.Replace(command, "/usr/local/bin/trendsql summarize", bin(t)+" summarize --station VOR-W01"+extra, 1)
		cmd := exec.Command("sh", "-c", c)
		cmd.Env = append(os.Environ(), "TRENDSQL_DB="+storePath)
		out, err := cmd.CombinedOutput()
		if err != nil {
			t.Fatalf("sh: %v\n%s", err, out)
		}
		return string(out)
	}
	if out := run(db, ""); out != "" {
		t.Errorf("first run printed %q, want silence", out)
	}
	if out := run(db, ""); out != "" {
		t.Errorf("run with nothing new printed %q, want silence (exit 3)", out)
	}
	if out := run(db, " --station VOR-W99"); !strings.Contains(out, "trendsql summarize failed") {
		t.Errorf("mistyped station printed %q, want the failure line", out)
	}
	if out := run(db, ` --where "st.id = 'VOR-W10'"`); !strings.Contains(out, "trendsql summarize failed") {
		t.Errorf("--where matching no series printed %q, want the failure line", out)
	}
	if out := run(filepath.Join(dir, "typo.db"), ""); !strings.Contains(out, "trendsql summarize failed") {
		t.Errorf("mistyped store printed %q, want the failure line", out)
	}
	log, _ := os.ReadFile(logFile)
	// The message the README quotes for the mistyped station is the one
	// the log holds.
	quoted := strings.Join(strings.Fields(string(raw)), " ")
	start := strings.Index(quoted, "`--station VOR-W99: no such station")
	end := strings.Index(quoted[max(start, 0):], ")`")
	if start < 0 || end < 0 {
		t.Fatal("README.md no longer quotes the message for --station VOR-W99")
	}
	if msg := quoted[start+1 : start+end+1]; !strings.Contains(string(log), msg) {
		t.Errorf("README quotes %q; the log says:\n%s", msg, log)
	}
	for _, want := range []string{"summarize run", "nothing to do", "no such station (closest: VOR-W09", "--where matched no series", "no store at this path"} {
		if !strings.Contains(string(log), want) {
			t.Errorf("log lacks %q:\n%s", want, log)
		}
	}
}
