package report

import (
	"bufio"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

// ManifestName is the file in which a report lists the files it wrote, so a
// later report into the same folder knows which files it may replace.
const ManifestName = ".trendsql-report"

var (
	// ErrDirNotEmpty: the output folder holds files that no earlier report
	// wrote (the caller may allow that explicitly).
	ErrDirNotEmpty = errors.New("output folder holds files that are not part of a report")
	// ErrNotReportFile: a file the report would write exists and was not
	// written by a report; it is never replaced.
	ErrNotReportFile = errors.New("file exists and is not part of a report")
)

// DirError names the folder and files behind ErrDirNotEmpty or
// ErrNotReportFile.
type DirError struct {
	Dir   string
	Files []string // a few of the files concerned
	Err   error
}

func (e *DirError) Error() string {
	return fmt.Sprintf("%s: %v: %s", e.Dir, e.Err, strings.Join(e.Files, ", "))
}
func (e *DirError) Unwrap() error { return e.Err }

// outDir writes report files into one folder without ever replacing a file
// that a report did not write.
type outDir struct {
	dir     string
	prev    map[string]bool // files listed by the folder's manifest
	written map[string]bool
}

func readManifest(dir string) (map[string]bool, error) {
	path := filepath.Join(dir, ManifestName)
	fi, err := os.Lstat(path)
	if errors.Is(err, fs.ErrNotExist) {
		return map[string]bool{}, nil
	}
	if err != nil {
		return nil, err
	}
	if !fi.Mode().IsRegular() {
		return nil, &DirError{Dir: dir, Files: []string{ManifestName}, Err: ErrNotReportFile}
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	m := map[string]bool{}
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		if name := sc.Text(); validName(name) {
			m[name] = true
		}
	}
	return m, sc.Err()
}

// validName accepts plain file names only (no separators, no dot files).
func validName(n string) bool {
	return n != "" && !strings.HasPrefix(n, ".") && !strings.ContainsAny(n, "/\\\x00") && len(n) < 200
}

// openOutDir creates dir if needed and checks it: a folder with files that
// no report wrote is refused unless force.
func openOutDir(dir string, force bool) (*outDir, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	prev, err := readManifest(dir)
	if err != nil {
		return nil, err
	}
	entries, err := os.ReadDir(dir)
	if err != nil {
		return nil, err
	}
	var others []string
	for _, e := range entries {
		if e.Name() != ManifestName && !prev[e.Name()] {
			others = append(others, e.Name())
		}
	}
	if len(others) > 0 && !force {
		sort.Strings(others)
		if len(others) > 5 {
			others = append(others[:5], fmt.Sprintf("and %d more", len(others)-5))
		}
		return nil, &DirError{Dir: dir, Files: others, Err: ErrDirNotEmpty}
	}
	return &outDir{dir: dir, prev: prev, written: map[string]bool{}}, nil
}

// plan records the names about to be written in the manifest (together
// with the earlier ones), so an interrupted report leaves no file that a
// later report would take for a foreign one.
func (d *outDir) plan(names []string) error {
	all := map[string]bool{}
	for n := range d.prev {
		all[n] = true
	}
	for _, n := range names {
		if !validName(n) {
			return fmt.Errorf("report: invalid file name %q", n)
		}
		if err := d.check(n); err != nil {
			return err
		}
		all[n] = true
	}
	return d.writeManifest(all)
}

// check refuses a name whose file exists and is not a report's own.
func (d *outDir) check(name string) error {
	fi, err := os.Lstat(filepath.Join(d.dir, name))
	if errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	if err != nil {
		return err
	}
	if !d.prev[name] || !fi.Mode().IsRegular() {
		return &DirError{Dir: d.dir, Files: []string{name}, Err: ErrNotReportFile}
	}
	return nil
}

// write stores one file atomically (temporary file, then rename).
func (d *outDir) write(name string, data []byte) error {
	if !validName(name) {
		return fmt.Errorf("report: invalid file name %q", name)
	}
	if err := d.check(name); err != nil && !d.written[name] {
		return err
	}
	if err := writeAtomic(d.dir, name, data); err != nil {
		return err
	}
	d.written[name] = true
	d.prev[name] = true
	return nil
}

func writeAtomic(dir, name string, data []byte) error {
	tmp, err := os.CreateTemp(dir, ".tmp-"+name+"-*")
	if err != nil {
		return err
	}
	_, werr := tmp.Write(data)
	cerr := tmp.Close()
	if werr == nil {
		werr = cerr
	}
	if werr == nil {
		werr = os.Chmod(tmp.Name(), 0o644)
	}
	if werr == nil {
		werr = os.Rename(tmp.Name(), filepath.Join(dir, name))
	}
	if werr != nil {
		os.Remove(tmp.Name())
	}
	return werr
}

// finish removes files of an earlier report that this one did not write
// and leaves the manifest listing exactly this report's files.
func (d *outDir) finish() error {
	for n := range d.prev {
		if d.written[n] {
			continue
		}
		path := filepath.Join(d.dir, n)
		if fi, err := os.Lstat(path); err == nil && fi.Mode().IsRegular() {
			if err := os.Remove(path); err != nil {
				return err
			}
		}
	}
	return d.writeManifest(d.written)
}

func (d *outDir) writeManifest(names map[string]bool) error {
	list := make([]string, 0, len(names))
	for n := range names {
		list = append(list, n)
	}
	sort.Strings(list)
	var b strings.Builder
	for _, n := range list {
		b.WriteString(n)
		b.WriteByte('\n')
	}
	return writeAtomic(d.dir, ManifestName, []byte(b.String()))
}
