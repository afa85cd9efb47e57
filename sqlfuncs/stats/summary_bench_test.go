package stats

// Benchmark of the non-seasonal per-series summary (every figure of
// `trendsql summarize` on raw readings) on the Sen kernel's series:
//
//	go test -run '^$' -bench 'SummarizeSeries' -benchtime 20x ./sqlfuncs/stats/

import (
	"fmt"
	"testing"
)

func BenchmarkSummarizeSeries(b *testing.B) {
	for _, n := range []int{1000, 10000} {
		t, y := benchSeries(n)
		o := SummaryOptions{MaxLag: 48, LBLags: 24, Alpha: 0.05, Confidence: 0.95, MinN: 10}
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				if s := SummarizeSeries(t, y, o); s.InsufficientData || s.SenLower == nil {
					b.Fatalf("summary incomplete: %q", s.Problem)
				}
			}
		})
	}
}
