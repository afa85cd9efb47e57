package stats

// Exact sign predicates for slope comparisons (used by the Theil–Sen
// selection in sen.go).
//
// The Theil–Sen median is an order statistic of the slopes
// (y_b − y_a)/(t_b − t_a). To select it without materialising every slope,
// slopes and "intercept orders" are compared many times, and the counts
// only add up if every comparison is decided consistently. A plain
// floating-point comparison is not consistent for (near-)equal slopes,
// which are common in practice (quantised readings, regular time steps).
// So each comparison first uses a floating-point estimate with a proven
// error bound and, only when the estimate is inside the bound, decides the
// sign exactly: the quantity is written as a sum of 16 floating-point terms
// without rounding error (TwoSum / FMA-based TwoProduct) and summed into a
// non-overlapping expansion (Shewchuk 1997, "Adaptive precision
// floating-point arithmetic and fast robust geometric predicates", Discrete
// Comput. Geom. 18:305–363), whose largest component carries the sign.
// Inputs outside [1e-100, 1e100] in magnitude (where TwoProduct could
// underflow or overflow) fall back to math/big rationals.

import (
	"math"
	"math/big"
)

func twoSum(a, b float64) (s, e float64) {
	s = a + b
	bb := s - a
	e = (a - (s - bb)) + (b - bb)
	return
}

func twoProd(a, b float64) (p, e float64) {
	p = a * b
	e = math.FMA(a, b, -p)
	return
}

func safeMag(v float64) bool {
	a := math.Abs(v)
	return a == 0 || (a >= 1e-100 && a <= 1e100)
}

// signDiffProd returns the exact sign of (a1−a2)(b1−b2) − (c1−c2)(d1−d2).
func signDiffProd(a1, a2, b1, b2, c1, c2, d1, d2 float64) int {
	if !(safeMag(a1) && safeMag(a2) && safeMag(b1) && safeMag(b2) &&
		safeMag(c1) && safeMag(c2) && safeMag(d1) && safeMag(d2)) {
		return signDiffProdRat(a1, a2, b1, b2, c1, c2, d1, d2)
	}
	ah, al := twoSum(a1, -a2)
	bh, bl := twoSum(b1, -b2)
	ch, cl := twoSum(-c1, c2) // −(c1 − c2)
	dh, dl := twoSum(d1, -d2)
	var terms [16]float64
	terms[0], terms[1] = twoProd(ah, bh)
	terms[2], terms[3] = twoProd(ah, bl)
	terms[4], terms[5] = twoProd(al, bh)
	terms[6], terms[7] = twoProd(al, bl)
	terms[8], terms[9] = twoProd(ch, dh)
	terms[10], terms[11] = twoProd(ch, dl)
	terms[12], terms[13] = twoProd(cl, dh)
	terms[14], terms[15] = twoProd(cl, dl)
	var e [17]float64
	m := 0
	for _, x := range terms {
		if x == 0 {
			continue
		}
		q := x
		k := 0
		for i := 0; i < m; i++ {
			s, h := twoSum(q, e[i])
			if h != 0 {
				e[k] = h
				k++
			}
			q = s
		}
		if q != 0 {
			e[k] = q
			k++
		}
		m = k
	}
	if m == 0 {
		return 0
	}
	if e[m-1] > 0 {
		return 1
	}
	return -1
}

func signDiffProdRat(a1, a2, b1, b2, c1, c2, d1, d2 float64) int {
	r := func(v float64) *big.Rat { return new(big.Rat).SetFloat64(v) }
	a := new(big.Rat).Sub(r(a1), r(a2))
	b := new(big.Rat).Sub(r(b1), r(b2))
	c := new(big.Rat).Sub(r(c1), r(c2))
	d := new(big.Rat).Sub(r(d1), r(d2))
	a.Mul(a, b)
	c.Mul(c, d)
	return a.Cmp(c)
}

// exactQuotient returns (y1 − y0)/(t1 − t0) correctly rounded from the exact
// differences of the inputs.
func exactQuotient(y1, y0, t1, t0 float64) float64 {
	n := new(big.Rat).Sub(new(big.Rat).SetFloat64(y1), new(big.Rat).SetFloat64(y0))
	d := new(big.Rat).Sub(new(big.Rat).SetFloat64(t1), new(big.Rat).SetFloat64(t0))
	f, _ := n.Quo(n, d).Float64()
	return f
}
