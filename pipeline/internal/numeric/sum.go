package numeric

import (
	"errors"
	"fmt"
	"math"
)

// Sum is compensated summation [Neumaier 1974, "Rundungsfehleranalyse einiger Verfahren zur
// Summation endlicher Summen", ZAMM 54:39], which keeps the small digits of long sums such
// as 1 − Σ p_j over hundreds of thousands of decoded probabilities. The zero value is an
// empty sum.
type Sum struct{ s, c float64 }

// Add adds x to the sum.
func (n *Sum) Add(x float64) {
	t := n.s + x
	if math.Abs(n.s) >= math.Abs(x) {
		n.c += (n.s - t) + x
	} else {
		n.c += (x - t) + n.s
	}
	n.s = t
}

// Value is the compensated total.
func (n *Sum) Value() float64 { return n.s + n.c }

// Cumulative is the running sum of a probability list on 0, 1, 2, …: out[j] = Σ_{i ≤ j} p[i],
// summed with compensation and its last entry set to exactly 1. Every p[i] must be finite and
// ≥ 0 and the total within 1e−9 of 1.
func Cumulative(p []float64) ([]float64, error) {
	out := make([]float64, len(p))
	var sum Sum
	for i, v := range p {
		if !(v >= 0) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("probability %v at day %d", v, i)
		}
		sum.Add(v)
		out[i] = sum.Value()
	}
	if len(out) == 0 || math.Abs(out[len(out)-1]-1) > 1e-9 {
		return nil, errors.New("the probabilities do not add up to 1")
	}
	out[len(out)-1] = 1
	return out, nil
}
