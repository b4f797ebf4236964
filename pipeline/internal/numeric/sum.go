package numeric

import "math"

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
