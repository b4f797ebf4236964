package numeric

import "math"

// NewtonMin polishes a minimum of a smooth f from x0 by Newton steps with a
// central-difference gradient and Hessian (step h) and backtracking, so f never increases
// [Nocedal & Wright 2006, Numerical Optimization, §3.1 and §8.1]. It returns the point, its
// value and ok; it stops when a step shrinks below 1e-11 or no step lowers f (converged),
// after maxIter steps, or when the Hessian is not positive definite, which is the one case
// where ok is false: the point is then no minimum Newton can vouch for.
// Meant for a start already near the minimum, such as a bootstrap replicate started from the
// full-data estimate; far from it, use a global search first.
func NewtonMin(f func([]float64) float64, x0 []float64, h float64, maxIter int) ([]float64, float64, bool) {
	d := len(x0)
	x := append([]float64(nil), x0...)
	fx := f(x)
	at := func(dx map[int]float64) float64 {
		y := append([]float64(nil), x...)
		for i, v := range dx {
			y[i] += v
		}
		return f(y)
	}
	for iter := 0; iter < maxIter; iter++ {
		g := make([]float64, d)
		H := make([][]float64, d)
		for i := range H {
			H[i] = make([]float64, d)
		}
		for i := 0; i < d; i++ {
			fp, fm := at(map[int]float64{i: h}), at(map[int]float64{i: -h})
			g[i] = (fp - fm) / (2 * h)
			H[i][i] = (fp - 2*fx + fm) / (h * h)
			for j := 0; j < i; j++ {
				H[i][j] = (at(map[int]float64{j: h, i: h}) - at(map[int]float64{j: h, i: -h}) -
					at(map[int]float64{j: -h, i: h}) + at(map[int]float64{j: -h, i: -h})) / (4 * h * h)
				H[j][i] = H[i][j]
			}
		}
		step, ok := solveSPD(H, g)
		if !ok {
			return x, fx, false
		}
		improved := false
		for half := 0; half < 40; half++ {
			cand := make([]float64, d)
			for i := range cand {
				cand[i] = x[i] - step[i]
			}
			if fc := f(cand); fc <= fx {
				x, fx, improved = cand, fc, true
				break
			}
			for i := range step {
				step[i] /= 2
			}
		}
		big := 0.0
		for _, s := range step {
			big = math.Max(big, math.Abs(s))
		}
		if !improved || big < 1e-11 {
			break
		}
	}
	return x, fx, true
}

// solveSPD solves H·s = g for a symmetric positive-definite H of size 1 or 2 (the sizes the
// pipeline needs), reporting false otherwise.
func solveSPD(H [][]float64, g []float64) ([]float64, bool) {
	switch len(g) {
	case 1:
		if !(H[0][0] > 0) {
			return nil, false
		}
		return []float64{g[0] / H[0][0]}, true
	case 2:
		det := H[0][0]*H[1][1] - H[0][1]*H[1][0]
		if !(H[0][0] > 0) || !(det > 0) || math.IsInf(det, 0) {
			return nil, false
		}
		return []float64{(H[1][1]*g[0] - H[0][1]*g[1]) / det, (-H[1][0]*g[0] + H[0][0]*g[1]) / det}, true
	}
	return nil, false
}
