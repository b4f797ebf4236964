package offspring

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
)

// SimulateNegBin draws the offspring counts of n cases from the negative binomial (R, k) as
// the gamma–Poisson mixture of Lloyd-Smith et al. (2005): ν_i ~ Gamma(shape k, mean R),
// Z_i | ν_i ~ Poisson(ν_i). A non-finite or non-positive k (math.Inf(1)) draws Poisson(R).
// It returns the frequency table of the counts.
func SimulateNegBin(rng *rand.Rand, R, k float64, n int) (FreqTable, error) {
	if rng == nil {
		return FreqTable{}, fmt.Errorf("simulate offspring: no random generator given")
	}
	if !(R >= 0) || math.IsInf(R, 0) {
		return FreqTable{}, fmt.Errorf("simulate offspring: R = %v must be a finite number ≥ 0", R)
	}
	if math.IsNaN(k) || k <= 0 {
		return FreqTable{}, fmt.Errorf("simulate offspring: k = %v must be > 0 (or +Inf for Poisson)", k)
	}
	if n < 0 {
		return FreqTable{}, fmt.Errorf("simulate offspring: n = %d cases is negative", n)
	}
	m := map[int]int{}
	for i := 0; i < n; i++ {
		nu := R
		if !math.IsInf(k, 1) {
			nu = numeric.Gamma(rng, k) * R / k
		}
		m[numeric.Poisson(rng, nu)]++
	}
	return FromMap(m), nil
}
