package branching

import (
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

// PredictionInterval is a central prediction interval [Lo, Hi] of integer counts: Lo is the
// (1 − Level)/2 quantile and Hi the (1 + Level)/2 quantile of the decoded PMF (the smallest
// j with P(X ≤ j) ≥ p). A bound is nil when it lies beyond the decoded support.
type PredictionInterval struct {
	Level float64
	Lo    *int
	Hi    *int
}

// ProjectedGeneration is the predictive distribution of the count in one generation.
type ProjectedGeneration struct {
	N     int
	PZero float64
	// Mean = (1/B)·Σ_b a·R_b^n, nil when it overflows.
	Mean          *float64
	PMF           []float64
	Interval50    PredictionInterval
	Interval90    PredictionInterval
	Support       int
	TruncatedMass float64
}

// Projection is the predictive distribution of the next generations' counts.
type Projection struct {
	Active      int
	Replicates  int
	Generations []ProjectedGeneration
}

// Project returns the predictive distribution of X_1..X_N from `active` cases, mixing over
// replicate offspring distributions (bootstrap replicates; pass the point estimate alone
// when there are none). The mixture PGF (1/B)·Σ_b G_{b,n}(s)^a is linear in the PMFs, so
// averaging PGF values at the FFT points and decoding once per generation gives the
// mixture's PMF exactly (the PGF is linear in the PMF; decoding as in GenerationSizes [Abate & Whitt
// 1992]). a = 0 gives the point mass at 0.
func Project(replicates []offspring.Distribution, active, generations int) (*Projection, error) {
	if len(replicates) == 0 {
		return nil, fmt.Errorf("branching: no offspring distribution to project from")
	}
	for i, d := range replicates {
		if err := checkDistribution(d); err != nil {
			return nil, fmt.Errorf("replicate %d: %w", i+1, err)
		}
	}
	dec, err := decodeMixture(replicates, active, generations, MaxFFTPoints)
	if err != nil {
		return nil, err
	}
	out := &Projection{Active: active, Replicates: len(replicates)}
	for i := 0; i < generations; i++ {
		n := i + 1
		mean := 0.0
		for _, d := range replicates {
			m, _ := GenerationMoments(d.Mean(), 0, active, n)
			mean += m / float64(len(replicates))
		}
		pmf := dec.pmf[i]
		out.Generations = append(out.Generations, ProjectedGeneration{
			N: n, PZero: dec.pzero[i], Mean: numeric.FinitePtr(mean), PMF: pmf,
			Interval50: centralInterval(pmf, 0.5), Interval90: centralInterval(pmf, 0.9),
			Support: dec.support, TruncatedMass: dec.truncated[i],
		})
	}
	return out, nil
}

// centralInterval returns the (1 ± level)/2 quantiles of a PMF over 0..len−1.
func centralInterval(pmf []float64, level float64) PredictionInterval {
	return PredictionInterval{
		Level: level,
		Lo:    quantile(pmf, (1-level)/2),
		Hi:    quantile(pmf, (1+level)/2),
	}
}

// quantile is the smallest j with Σ_{i≤j} pmf_i ≥ p (a 1e−12 slack absorbs round-off in the
// decoded values), or nil when the listed mass never reaches p.
func quantile(pmf []float64, p float64) *int {
	var cum numeric.Sum
	for j, v := range pmf {
		cum.Add(v)
		if cum.Value() >= p-1e-12 {
			jj := j
			return &jj
		}
	}
	return nil
}
