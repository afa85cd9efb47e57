package benchmark

import (
	"context"
	"fmt"
	"math"
	"os"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"time"
)

// measure runs fn once after a GC and returns its wall time, the Go heap
// allocations (count, bytes) it made and the process peak RSS.
func measure(ctx context.Context, timeout time.Duration, fn func(context.Context) error) (sec, allocs, bytes float64, peak int64, err error) {
	if timeout > 0 {
		var cancel context.CancelFunc
		ctx, cancel = context.WithTimeout(ctx, timeout)
		defer cancel()
	}
	runtime.GC()
	var m0, m1 runtime.MemStats
	runtime.ReadMemStats(&m0)
	resetPeakRSS()
	t0 := time.Now()
	err = fn(ctx)
	sec = time.Since(t0).Seconds()
	runtime.ReadMemStats(&m1)
	peak = processPeakRSS()
	if err == nil && ctx.Err() != nil {
		err = ctx.Err()
	}
	return sec, float64(m1.Mallocs - m0.Mallocs), float64(m1.TotalAlloc - m0.TotalAlloc), peak, err
}

func removeStoreFiles(path string) {
	for _, p := range []string{path, path + "-wal", path + "-shm", path + ".summarize-lock"} {
		os.Remove(p)
	}
}

func median(x []float64) float64 {
	s := append([]float64(nil), x...)
	sort.Float64s(s)
	n := len(s)
	if n == 0 {
		return 0
	}
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

func minMax(x []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range x {
		lo = math.Min(lo, v)
		hi = math.Max(hi, v)
	}
	return lo, hi
}

// resetPeakRSS asks Linux to reset the process's peak resident set size
// (writing 5 to /proc/self/clear_refs, Linux ≥ 4.0). It reports success.
func resetPeakRSS() bool {
	return os.WriteFile("/proc/self/clear_refs", []byte("5"), 0) == nil
}

// processPeakRSS returns VmHWM from /proc/self/status in bytes (0 if unknown).
func processPeakRSS() int64 {
	return procStatusKB("/proc/self/status", "VmHWM:") * 1024
}

func procStatusKB(file, key string) int64 {
	b, err := os.ReadFile(file)
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(line, key) {
			f := strings.Fields(line[len(key):])
			if len(f) >= 1 {
				v, _ := strconv.ParseInt(f[0], 10, 64)
				return v
			}
		}
	}
	return 0
}

func loadAvg() string {
	b, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return ""
	}
	f := strings.Fields(string(b))
	if len(f) >= 3 {
		return strings.Join(f[:3], " ")
	}
	return ""
}

func machineInfo() Machine {
	m := Machine{CPUs: runtime.NumCPU(), GoVersion: runtime.Version(), OS: runtime.GOOS + "/" + runtime.GOARCH, LoadBefore: loadAvg()}
	if b, err := os.ReadFile("/proc/cpuinfo"); err == nil {
		for _, line := range strings.Split(string(b), "\n") {
			if strings.HasPrefix(line, "model name") {
				if i := strings.IndexByte(line, ':'); i >= 0 {
					m.CPU = strings.TrimSpace(line[i+1:])
				}
				break
			}
		}
	}
	if kb := procStatusKB("/proc/meminfo", "MemTotal:"); kb > 0 {
		m.MemTotal = fmt.Sprintf("%.1f GiB", float64(kb)/(1<<20))
	}
	return m
}
