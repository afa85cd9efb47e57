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
