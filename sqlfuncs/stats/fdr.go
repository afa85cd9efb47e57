package stats

import (
	"math"
	"sort"
)

// AdjustBH returns the Benjamini–Hochberg adjusted p-values of the family p
// (Benjamini & Hochberg 1995, J. R. Statist. Soc. B 57(1):289–300; for
// field significance in geoscience see Wilks 2016, BAMS 97(12):2263–2273),
// in the order of p. With the m p-values that are not NaN sorted
// ascending, p_(i) adjusted = min over j ≥ i of m·p_(j)/j, capped at 1.
// NaN entries are not part of the family and stay NaN. Tied p-values get
// the same adjusted value.
func AdjustBH(p []float64) []float64 {
	out := make([]float64, len(p))
	idx := make([]int, 0, len(p))
	for i, v := range p {
		if math.IsNaN(v) {
			out[i] = math.NaN()
			continue
		}
		idx = append(idx, i)
	}
	sort.SliceStable(idx, func(a, b int) bool { return p[idx[a]] < p[idx[b]] })
	m := float64(len(idx))
	minSoFar := 1.0
	for k := len(idx) - 1; k >= 0; k-- {
		if v := p[idx[k]] * m / float64(k+1); v < minSoFar {
			minSoFar = v
		}
		out[idx[k]] = minSoFar
	}
	return out
}
