package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestBenchNeverOverwritesUserFiles: bench refuses a --dir holding a
// readings.csv or bench.db it did not make, and a --json or --cpuprofile
// file that exists, leaving each file as it was; --force overwrites.
func TestBenchNeverOverwritesUserFiles(t *testing.T) {
	args := []string{"bench", "--stations", "1", "--readings", "50", "--reps", "1", "--quiet"}
	for _, name := range []string{"readings.csv", "bench.db"} {
		dir := t.TempDir()
		mine := filepath.Join(dir, name)
		os.WriteFile(mine, []byte("my own file\n"), 0o644)
		var out, errw bytes.Buffer
		code := Main(append(args, "--dir", dir), strings.NewReader(""), &out, &errw)
		if code != ExitFailed || !strings.Contains(errw.String(), "--force") {
			t.Errorf("%s in --dir: exit %d, stderr %q", name, code, errw.String())
		}
		if b, err := os.ReadFile(mine); err != nil || string(b) != "my own file\n" {
			t.Errorf("%s was changed or removed: %q, %v", name, b, err)
		}
	}
	for _, flag := range []string{"--json", "--cpuprofile"} {
		dir := t.TempDir()
		mine := filepath.Join(dir, "mine.out")
		os.WriteFile(mine, []byte("keep me\n"), 0o644)
		var out, errw bytes.Buffer
		code := Main(append(args, "--dir", filepath.Join(dir, "w"), flag, mine), strings.NewReader(""), &out, &errw)
		if code != ExitFailed || !strings.Contains(errw.String(), "--force") {
			t.Errorf("%s on an existing file: exit %d, stderr %q", flag, code, errw.String())
		}
		if b, _ := os.ReadFile(mine); string(b) != "keep me\n" {
			t.Errorf("%s overwrote the file: %q", flag, b)
		}
		code = Main(append(args, "--dir", filepath.Join(dir, "w"), flag, mine, "--force"), strings.NewReader(""), &out, &errw)
		if b, _ := os.ReadFile(mine); code != ExitOK || string(b) == "keep me\n" {
			t.Errorf("%s with --force: exit %d, file %q", flag, code, b)
		}
	}
	dir := t.TempDir()
	mine := filepath.Join(dir, "prof")
	os.WriteFile(mine, []byte("keep me\n"), 0o644)
	t.Setenv(EnvCPUProfile, mine)
	var out, errw bytes.Buffer
	if code := Main([]string{"version"}, strings.NewReader(""), &out, &errw); code != ExitFailed {
		t.Errorf("%s on an existing file: exit %d", EnvCPUProfile, code)
	}
	if b, _ := os.ReadFile(mine); string(b) != "keep me\n" {
		t.Errorf("%s overwrote the file: %q", EnvCPUProfile, b)
	}
}
