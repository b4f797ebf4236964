package branching

import (
	"fmt"
	"math"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"gonum.org/v1/gonum/stat/distuv"

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
	Mean       *float64
	PMF        []float64
	Interval50 PredictionInterval
	Interval90 PredictionInterval
	// Approximate is set when a bound lay beyond the decoded support and was taken from
	// the moment-matched approximation instead (approxQuantile).
	Approximate   bool
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
		g := ProjectedGeneration{
			N: n, PZero: dec.pzero[i], Mean: numeric.FinitePtr(mean), PMF: pmf,
			Interval50: centralInterval(pmf, 0.5), Interval90: centralInterval(pmf, 0.9),
			Support: dec.support, TruncatedMass: dec.truncated[i],
		}
		for _, iv := range []*PredictionInterval{&g.Interval50, &g.Interval90} {
			for k, b := range []**int{&iv.Lo, &iv.Hi} {
				if *b == nil {
					p := (1 - iv.Level) / 2
					if k == 1 {
						p = (1 + iv.Level) / 2
					}
					if *b = approxQuantile(replicates, active, n, p); *b != nil {
						g.Approximate = true
					}
				}
			}
		}
		out.Generations = append(out.Generations, g)
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

// approxQuantile is the p-quantile of X_n for a count beyond the decoded support: each
// replicate's X_n is approximated by the gamma distribution with its exact mean and variance
// (GenerationMoments), the approximations are mixed with equal weights as the replicates
// are, and the mixture's CDF is inverted by bisection and rounded to a count. A gamma with
// the right two moments is the usual approximation for a large sum of positive skewed
// counts (the normal would put mass below zero); it is stated in the report as approximate.
// Nil when a moment overflows.
func approxQuantile(replicates []offspring.Distribution, active, n int, p float64) *int {
	type gam struct{ shape, rate float64 }
	var gs []gam
	hi := 0.0
	for _, d := range replicates {
		m, v := GenerationMoments(d.Mean(), d.Variance(), active, n)
		if math.IsInf(m, 0) || math.IsInf(v, 0) || math.IsNaN(m) || math.IsNaN(v) {
			return nil
		}
		if m == 0 || v == 0 {
			hi = math.Max(hi, m) // a replicate with no spread: all its mass at its mean
			gs = append(gs, gam{0, 0})
			continue
		}
		gs = append(gs, gam{m * m / v, m / v})
		hi = math.Max(hi, m+20*math.Sqrt(v))
	}
	cdf := func(x float64) float64 {
		sum := 0.0
		for i, g := range gs {
			if g.shape == 0 {
				m, _ := GenerationMoments(replicates[i].Mean(), 0, active, n)
				if x >= m {
					sum++
				}
				continue
			}
			sum += distuv.Gamma{Alpha: g.shape, Beta: g.rate}.CDF(x)
		}
		return sum / float64(len(gs))
	}
	lo := 0.0
	if cdf(hi) < p {
		return nil
	}
	for range 200 {
		mid := (lo + hi) / 2
		if cdf(mid) >= p {
			hi = mid
		} else {
			lo = mid
		}
		if hi-lo < 0.5 {
			break
		}
	}
	if hi > 1<<53 {
		return nil
	}
	q := int(math.Round(hi))
	return &q
}
