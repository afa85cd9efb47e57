package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"golang.org/x/term"

	"trendsql/store"
)

// formatForFile picks the format of results written to path: the given
// format when the flag was set, else the one the extension names (.csv,
// .json, .txt for a table); "" when neither says.
func formatForFile(path, format string, formatSet bool) string {
	if formatSet {
		return format
	}
	switch strings.ToLower(filepath.Ext(path)) {
	case ".csv":
		return FormatCSV
	case ".json":
		return FormatJSON
	case ".txt", ".text":
		return FormatTable
	}
	return ""
}

// resultFile receives results for a file: they are written to a temporary
// file beside it, which replaces nothing until commit, so a failed
// statement leaves no partial file.
type resultFile struct {
	path string
	tmp  *os.File
}

// createResultFile refuses an existing path unless replace is set.
func createResultFile(path string, replace bool) (*resultFile, error) {
	if st, err := os.Stat(path); err == nil {
		if st.IsDir() {
			return nil, fmt.Errorf("%s is a directory", path)
		}
		if !replace {
			return nil, fmt.Errorf("%s exists; choose another file or replace it with --force", path)
		}
	} else if !errors.Is(err, os.ErrNotExist) {
		return nil, err
	}
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, "."+base+".part-*")
	if err != nil {
		return nil, err
	}
	return &resultFile{path: path, tmp: tmp}, nil
}

func (f *resultFile) Write(p []byte) (int, error) { return f.tmp.Write(p) }

// commit moves the complete file into place.
func (f *resultFile) commit() error {
	if err := f.tmp.Close(); err != nil {
		os.Remove(f.tmp.Name())
		return err
	}
	if err := os.Chmod(f.tmp.Name(), 0o644); err != nil {
		os.Remove(f.tmp.Name())
		return err
	}
	if err := os.Rename(f.tmp.Name(), f.path); err != nil {
		os.Remove(f.tmp.Name())
		return err
	}
	return nil
}

// abort removes the temporary file.
func (f *resultFile) abort() {
	f.tmp.Close()
	os.Remove(f.tmp.Name())
}

// terminalWidth is the width of w when it is a terminal, else 0.
func terminalWidth(w io.Writer) int {
	f, ok := w.(*os.File)
	if !ok || !term.IsTerminal(int(f.Fd())) {
		return 0
	}
	width, _, err := term.GetSize(int(f.Fd()))
	if err != nil || width <= 0 {
		return 0
	}
	return width
}

// isStoreFile reports whether path is the store at dbPath or one of its
// companion files (the WAL journal, its index, the summarize lock).
func isStoreFile(path, dbPath string) bool {
	out, err := os.Stat(path)
	if err != nil {
		return false
	}
	for _, suffix := range []string{"", "-wal", "-shm", "-journal", store.SummarizeLockSuffix} {
		if st, err := os.Stat(dbPath + suffix); err == nil && os.SameFile(out, st) {
			return true
		}
	}
	return false
}
