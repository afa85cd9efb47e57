//go:build !unix

package store

import "os"

// linkCount reports one link where the platform does not tell.
func linkCount(os.FileInfo) uint64 { return 1 }

// fileID reports no identity where the platform does not tell.
func fileID(os.FileInfo) (dev, ino uint64, ok bool) { return 0, 0, false }
