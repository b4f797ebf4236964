package branching

import (
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"

	"github.com/caseweave/caseweave/pipeline/offspring"
	"gonum.org/v1/gonum/mathext"
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
// cause `target` of all transmission. For the negative binomial ν ~ Gamma(k, mean R), and
// the cases with ν > x cause the fraction 1 − P(k + 1, xk/R) of transmission and make up
// the fraction 1 − P(k, xk/R) of cases, P the regularized lower incomplete gamma function
// [Lloyd-Smith et al. 2005, Nature 438:355, supplement; Endo et al. 2020, Wellcome Open
// Res 5:67]. So t = xk/R solves P(k + 1, t) = 1 − target and the share is 1 − P(k, t); it
// depends on k only. The geometric model is k = 1. Under Poisson offspring every ν = R,
// so the share equals the target. A list (Empirical) carries no ν: the result is nil.
// With R = 0 there is no transmission and the result is nil.
func ShareByNu(d offspring.Distribution, target float64) (*float64, error) {
	if err := checkDistribution(d); err != nil {
		return nil, err
	}
	if err := checkTarget(target); err != nil {
		return nil, err
	}
	if d.Mean() == 0 {
		return nil, nil
	}
	if _, ok := d.(offspring.Poisson); ok {
		return &target, nil
	}
	k, ok := dispersion(d)
	if !ok {
		return nil, nil
	}
	t := mathext.GammaIncRegInv(k+1, 1-target)
	if math.IsNaN(t) {
		return nil, fmt.Errorf("branching: incomplete-gamma inverse failed for k = %g, target %g", k, target)
	}
	share := mathext.GammaIncRegComp(k, t)
	return numeric.FinitePtr(share), nil
}

// ShareByOffspring is the smallest share of cases, ranked by realised offspring count, that
// cause `target` of all secondary cases when counts follow the model's PMF
// (offspring.ConcentrationShare with the PMF as weights, interpolating within the boundary
// count; DOMAIN.md §3, reading (b)). The PMF is cut where the tail mass beyond falls below
// 1e−12. It is nil when R = 0.
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
	if e, ok := d.(offspring.Empirical); ok {
		for x, p := range e.P {
			values = append(values, x)
			weights = append(weights, p)
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
