//go:build !unix

package sqlfuncs_test

import "time"

// processCPU is 0 where getrusage is not available (no cpu_x_avg metric).
func processCPU() time.Duration { return 0 }
