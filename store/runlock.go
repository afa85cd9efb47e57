package store

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"syscall"
)

// SummarizeLockSuffix names the lock file of summary runs beside the store:
// the store's path (symbolic links resolved) followed by this suffix.
const SummarizeLockSuffix = ".summarize-lock"

// IdentityLockDir holds the lock files keyed on a store file's identity
// (see SummarizeLockFiles). It is one fixed directory, not $TMPDIR, so
// every process on the machine finds the same files.
var IdentityLockDir = "/tmp/trendsql-locks"

// SummarizeLockFiles names the lock files a summary run holds on the store
// at path, which must exist:
//   - the identity lock, IdentityLockDir/DEV-INODE.summarize-lock: keyed on
//     the file's device and inode, so every name of the file on this
//     machine (a symbolic link, a hard link in any directory, a bind mount)
//     finds the same lock;
//   - the path lock, the store's path with symbolic links resolved plus
//     SummarizeLockSuffix: shared by processes whose temporary directories
//     differ (a service with a private /tmp) and by machines that share the
//     store's directory.
func SummarizeLockFiles(path string) (identity, beside string, err error) {
	st, err := os.Stat(path)
	if err != nil {
		return "", "", err
	}
	resolved := path
	if p, err := filepath.EvalSymlinks(path); err == nil {
		resolved = p
	}
	beside = resolved + SummarizeLockSuffix
	dev, ino, ok := fileID(st)
	if !ok {
		return "", beside, nil
	}
	return filepath.Join(IdentityLockDir, fmt.Sprintf("%d-%d%s", dev, ino, SummarizeLockSuffix)), beside, nil
}

// ErrLockHeld: another process holds a summarize lock of the store.
var ErrLockHeld = errors.New("another summary run holds the store's summarize lock")

// SummarizeLock is the pair of summarize lock files of one store, open (see
// SummarizeLockFiles). The operating system releases the locks when the
// process ends.
type SummarizeLock struct {
	files []*os.File
	held  bool
}

// OpenSummarizeLock opens (creating) the summarize lock files of the store
// at path without locking them.
func OpenSummarizeLock(path string) (*SummarizeLock, error) {
	identity, beside, err := SummarizeLockFiles(path)
	if err != nil {
		return nil, fmt.Errorf("summarize lock: %w", err)
	}
	l := &SummarizeLock{}
	for _, name := range []string{beside, identity} {
		if name == "" {
			continue
		}
		f, err := openLockFile(name, name == identity)
		if err != nil {
			l.Close()
			return nil, fmt.Errorf("summarize lock: %w", err)
		}
		l.files = append(l.files, f)
	}
	return l, nil
}

// TryLock takes both locks without waiting. It returns ErrLockHeld when
// another process holds either; then it holds neither.
func (l *SummarizeLock) TryLock() error {
	for i, f := range l.files {
		if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
			for _, g := range l.files[:i] {
				syscall.Flock(int(g.Fd()), syscall.LOCK_UN)
			}
			if errors.Is(err, syscall.EWOULDBLOCK) || errors.Is(err, syscall.EINTR) {
				return ErrLockHeld
			}
			return fmt.Errorf("summarize lock %s: %w", f.Name(), err)
		}
	}
	l.held = true
	return nil
}

// Close releases the locks if held and closes the files.
func (l *SummarizeLock) Close() {
	for _, f := range l.files {
		if l.held {
			syscall.Flock(int(f.Fd()), syscall.LOCK_UN)
		}
		f.Close()
	}
	l.files, l.held = nil, false
}

// TrySummarizeLock opens the summarize locks of the store at path and takes
// them without waiting; release unlocks and closes them. It returns
// ErrLockHeld when another process holds either lock.
func TrySummarizeLock(path string) (release func(), err error) {
	l, err := OpenSummarizeLock(path)
	if err != nil {
		return nil, err
	}
	if err := l.TryLock(); err != nil {
		l.Close()
		return nil, err
	}
	return l.Close, nil
}

// SummarizeLockHeld reports whether another process holds a summarize lock
// of the store at path now. It creates no lock file.
func SummarizeLockHeld(path string) bool {
	identity, beside, err := SummarizeLockFiles(path)
	if err != nil {
		return false
	}
	for _, name := range []string{beside, identity} {
		if name == "" {
			continue
		}
		f, err := os.Open(name)
		if err != nil {
			continue
		}
		err = syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
		if err == nil {
			syscall.Flock(int(f.Fd()), syscall.LOCK_UN)
		}
		f.Close()
		if errors.Is(err, syscall.EWOULDBLOCK) {
			return true
		}
	}
	return false
}

// openLockFile opens (creating) a lock file for flock, which needs read
// access only. The identity lock directory is shared by every user of the
// machine: it is created world-writable with the sticky bit, as /tmp is,
// and its lock files readable by all; symbolic links there are not
// followed.
func openLockFile(name string, shared bool) (*os.File, error) {
	flags := os.O_CREATE | os.O_RDONLY
	if shared {
		if err := os.Mkdir(IdentityLockDir, 0o777); err == nil {
			_ = os.Chmod(IdentityLockDir, 0o777|os.ModeSticky)
		} else if !errors.Is(err, os.ErrExist) {
			return nil, err
		}
		flags |= syscall.O_NOFOLLOW
	}
	return os.OpenFile(name, flags, 0o644)
}
