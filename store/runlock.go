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

// TrySummarizeLock takes both summarize locks of the store at path (see
// SummarizeLockFiles) without waiting, creating the lock files as needed.
// It returns ErrLockHeld when another process holds either; then it holds
// neither. The operating system releases the locks when the process ends.
func TrySummarizeLock(path string) (release func(), err error) {
	identity, beside, err := SummarizeLockFiles(path)
	if err != nil {
		return nil, fmt.Errorf("summarize lock: %w", err)
	}
	var held []*os.File
	releaseAll := func() {
		for _, f := range held {
			syscall.Flock(int(f.Fd()), syscall.LOCK_UN)
			f.Close()
		}
	}
	for _, name := range []string{beside, identity} {
		if name == "" {
			continue
		}
		f, err := openLockFile(name, name == identity)
		if err != nil {
			releaseAll()
			return nil, fmt.Errorf("summarize lock: %w", err)
		}
		if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
			f.Close()
			releaseAll()
			if errors.Is(err, syscall.EWOULDBLOCK) || errors.Is(err, syscall.EINTR) {
				return nil, ErrLockHeld
			}
			return nil, fmt.Errorf("summarize lock %s: %w", name, err)
		}
		held = append(held, f)
	}
	return releaseAll, nil
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
