//go:build unix

package store

import (
	"os"
	"syscall"
)

// linkCount is the number of hard links of the file st describes.
func linkCount(st os.FileInfo) uint64 {
	if sys, ok := st.Sys().(*syscall.Stat_t); ok {
		return uint64(sys.Nlink)
	}
	return 1
}

// fileID is the identity of the file st describes: its device and inode,
// the same through every name of the file.
func fileID(st os.FileInfo) (dev, ino uint64, ok bool) {
	if sys, ok := st.Sys().(*syscall.Stat_t); ok {
		return uint64(sys.Dev), uint64(sys.Ino), true
	}
	return 0, 0, false
}
