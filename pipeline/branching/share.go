package branching

import (
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

// DefaultShareTarget is the share of transmission in the "20/80" reading.
const DefaultShareTarget = 0.8

// maxShareSupport caps the PMF support used by ShareByOffspring.
const maxShareSupport = 1 << 22

func checkTarget(target float64) error {
	if !(target > 0 && target < 1) {
		return fmt.Errorf("branching: share target %v must be strictly between 0 and 1", target)
	}
	return nil
}

// ShareByNu is the share of cases, ranked by their individual reproductive number ν, that
// cause `target` of all transmission: the model's own reading of its ν distribution
// (offspring.MixedPoisson; for the negative binomial the incomplete-gamma formula of
// Lloyd-Smith et al. 2005, under Poisson offspring the target itself). A model with no ν,
// such as a list (Empirical), gives nil; so does R = 0, where there is no transmission.
func ShareByNu(d offspring.Distribution, target float64) (*float64, error) {
	if err := checkDistribution(d); err != nil {
		return nil, err
	}
	if err := checkTarget(target); err != nil {
		return nil, err
	}
	mp, ok := d.(offspring.MixedPoisson)
	if d.Mean() == 0 || !ok {
		return nil, nil
	}
	share, err := mp.IndividualR().ShareCausing(target)
	if err != nil {
		return nil, fmt.Errorf("branching: %w", err)
	}
	return numeric.FinitePtr(share), nil
}

// ShareByOffspring is the smallest share of cases, ranked by realised offspring count, that
// cause `target` of all secondary cases when counts follow the model's PMF
// (offspring.ConcentrationShare with the PMF as weights, interpolating within the boundary
// count; the "20/80" reading of Lloyd-Smith et al. 2005 applied to counts). The PMF is cut
// at the model's largest count (offspring.FiniteSupport) or where the tail mass beyond falls
// below 1e−12. It is nil when R = 0.
func ShareByOffspring(d offspring.Distribution, target float64) (*float64, error) {
	if err := checkDistribution(d); err != nil {
		return nil, err
	}
	if err := checkTarget(target); err != nil {
		return nil, err
	}
	if d.Mean() == 0 {
		return nil, nil
	}
	var values []int
	var weights []float64
	if fs, ok := d.(offspring.FiniteSupport); ok {
		for x := 0; x <= fs.MaxCount(); x++ {
			values = append(values, x)
			weights = append(weights, d.PMF(x))
		}
	} else {
		var cum numeric.Sum
		for x := 0; x < maxShareSupport; x++ {
			p := d.PMF(x)
			values = append(values, x)
			weights = append(weights, p)
			cum.Add(p)
			// Stop past the mean once the tail left is negligible.
			if float64(x) > d.Mean() && 1-cum.Value() < 1e-12 {
				break
			}
		}
	}
	return numeric.FinitePtr(offspring.ConcentrationShare(values, weights, target)), nil
}

// SuperspreadingThreshold is offspring.SuperspreadingThreshold(R): the 99th percentile of
// Poisson(R) [Lloyd-Smith et al. 2005].
func SuperspreadingThreshold(d offspring.Distribution) (int, error) {
	if err := checkDistribution(d); err != nil {
		return 0, err
	}
	return offspring.SuperspreadingThreshold(d.Mean()), nil
}
