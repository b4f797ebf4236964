package offspring

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"

	"gonum.org/v1/gonum/mathext"
)

// GammaNu is ν ~ Gamma(shape k, mean R), the individual reproductive number of the negative
// binomial (and, with k = 1, of the geometric) [Lloyd-Smith et al. 2005, Nature 438:355].
type GammaNu struct{ Shape float64 }

// ShareCausing: the cases with ν > x cause the fraction 1 − P(k + 1, xk/R) of transmission
// and make up the fraction 1 − P(k, xk/R) of cases, P the regularized lower incomplete gamma
// function [Lloyd-Smith et al. 2005, supplement; Endo et al. 2020, Wellcome Open Res 5:67].
// So t = xk/R solves P(k + 1, t) = 1 − target and the share is 1 − P(k, t); it depends on k
// only (R = 2.5, k = 0.1 gives about 10%, as Endo et al. report).
func (g GammaNu) ShareCausing(target float64) (float64, error) {
	t := mathext.GammaIncRegInv(g.Shape+1, 1-target)
	if math.IsNaN(t) {
		return math.NaN(), fmt.Errorf("incomplete-gamma inverse failed for k = %g, target %g", g.Shape, target)
	}
	return mathext.GammaIncRegComp(g.Shape, t), nil
}

// PointNu is ν = R for every case (Poisson offspring): any share of cases causes the same
// share of transmission.
type PointNu struct{}

// ShareCausing is the target itself.
func (PointNu) ShareCausing(target float64) (float64, error) { return target, nil }

// PosteriorMean is E[ν | o offspring seen while the elapsed share F of the case's serial
// interval has passed]: with Z_seen | ν ~ Poisson(νF) and the gamma prior of shape k and
// rate k/R, the posterior is gamma of shape k + o and rate k/R + F (the gamma–Poisson
// conjugacy; Gelman et al., Bayesian Data Analysis, 3rd ed., 2013, §2.6), whose mean is
// (k + o)/(k/R + F).
func (g GammaNu) PosteriorMean(mean, o, elapsed float64) float64 {
	if mean == 0 {
		return 0
	}
	return (g.Shape + o) / (g.Shape/mean + elapsed)
}

// PosteriorLogLaplace is log E[e^{−tν} | o offspring seen in the elapsed share F]: the
// Laplace transform of the gamma posterior of PosteriorMean,
// −(k + o)·log(1 + t/(k/R + F)).
func (g GammaNu) PosteriorLogLaplace(mean, o, elapsed, t float64) float64 {
	if mean == 0 || t == 0 {
		return 0
	}
	return -(g.Shape + o) * math.Log1p(t/(g.Shape/mean+elapsed))
}

// PosteriorMean is R: a point ν learns nothing from the offspring seen.
func (PointNu) PosteriorMean(mean, _, _ float64) float64 { return mean }

// PosteriorLogLaplace is −tR.
func (PointNu) PosteriorLogLaplace(mean, _, _, t float64) float64 { return -t * mean }

// PosteriorSample draws ν from the gamma posterior of PosteriorMean (Marsaglia–Tsang,
// numeric.Gamma); with o = 0 and F = 0 it is the prior, Gamma(k, mean R).
func (g GammaNu) PosteriorSample(rng *rand.Rand, mean, o, elapsed float64) float64 {
	if mean == 0 {
		return 0
	}
	return numeric.Gamma(rng, g.Shape+o) / (g.Shape/mean + elapsed)
}

// PosteriorSample is R.
func (PointNu) PosteriorSample(_ *rand.Rand, mean, _, _ float64) float64 { return mean }
