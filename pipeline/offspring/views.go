package offspring

import (
	"errors"
	"fmt"
	"math"
)

// ZeroShare is the share of cases that caused no secondary case, c_0/n. It is an error for
// an empty table.
func ZeroShare(t FreqTable) (float64, error) {
	n := t.N()
	if n == 0 {
		return 0, errors.New("zero share: the offspring table is empty")
	}
	for i, v := range t.Values {
		if v == 0 {
			return float64(t.Counts[i]) / float64(n), nil
		}
	}
	return 0, nil
}

// Superspreaders lists the positions i of offspring[i] that exceed the 99th percentile of
// Poisson(R), i.e. the superspreaders under the definition of Lloyd-Smith et al. (2005), and
// returns that threshold (SuperspreadingThreshold). The caller keeps the case identifiers
// aligned with offspring. R must be finite and ≥ 0.
func Superspreaders(offspring []int, R float64) (threshold int, idx []int, err error) {
	if math.IsNaN(R) || math.IsInf(R, 0) || R < 0 {
		return 0, nil, fmt.Errorf("superspreaders: R = %v must be a finite number ≥ 0", R)
	}
	threshold = SuperspreadingThreshold(R)
	for i, z := range offspring {
		if z > threshold {
			idx = append(idx, i)
		}
	}
	return threshold, idx, nil
}
