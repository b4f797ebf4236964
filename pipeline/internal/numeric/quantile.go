package numeric

import "math"

// Quantile7 is the sample quantile at probability p of ascending values by linear
// interpolation between order statistics, type 7 of Hyndman & Fan (1996, Am Stat 50:361),
// the default of R's quantile(): h = (n − 1)p, Q = x_⌊h⌋ + (h − ⌊h⌋)(x_⌊h⌋+1 − x_⌊h⌋). A +Inf
// neighbour makes the quantile +Inf (an unbounded replicate, such as k in the Poisson limit).
// It is NaN for no values.
//
// Written here because gonum's stat.Quantile offers the empirical quantile and linear
// interpolation of the empirical distribution (type 4), not type 7, and the reference values
// the tests compare with come from R's default.
func Quantile7(sorted []float64, p float64) float64 {
	n := len(sorted)
	if n == 0 {
		return math.NaN()
	}
	h := float64(n-1) * p
	lo := int(math.Floor(h))
	if lo >= n-1 {
		return sorted[n-1]
	}
	frac := h - float64(lo)
	if frac == 0 {
		return sorted[lo]
	}
	a, b := sorted[lo], sorted[lo+1]
	if math.IsInf(b, 1) {
		return b
	}
	return a + frac*(b-a)
}
