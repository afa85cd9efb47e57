//go:build unix

package sqlfuncs_test

import (
	"syscall"
	"time"
)

// processCPU is the user + system CPU time the process has used so far
// (getrusage), 0 when it is not available.
func processCPU() time.Duration {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
