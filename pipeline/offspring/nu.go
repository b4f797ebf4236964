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

// RemoveTop cuts ν₁ = ν/R ~ Gamma(shape k, rate k) at x_c, its (1 − c) quantile, held as
// t_c = k·x_c, the point with Q(k, t_c) = c for the regularized upper incomplete gamma
// function Q (+Inf at c = 0, 0 at c = 1).
func (g GammaNu) RemoveTop(c float64) KeptNu {
	t := 0.0
	switch {
	case c <= 0:
		t = math.Inf(1)
	case c < 1:
		t = mathext.GammaIncRegCompInv(g.Shape, c)
	}
	return gammaKept{k: g.Shape, t: t}
}

type gammaKept struct{ k, t float64 }

// gammaIncReg is P(a, x), with P(a, +Inf) = 1.
func gammaIncReg(a, x float64) float64 {
	if math.IsInf(x, 1) {
		return 1
	}
	return mathext.GammaIncReg(a, x)
}

// Moments: for ν₁ ~ Gamma(k, rate k), E[ν₁ⁿ; ν₁ ≤ x] = Γ(k + n)/(Γ(k)kⁿ)·P(k + n, kx), so
// m1 = P(k + 1, t_c) and m2 = (k + 1)/k·P(k + 2, t_c) (truncated moments of the gamma
// density; Lloyd-Smith et al. 2005, supplement, use m1 for the targeted-control R).
func (g gammaKept) Moments() (m1, m2 float64) {
	return gammaIncReg(g.k+1, g.t), (g.k + 1) / g.k * gammaIncReg(g.k+2, g.t)
}

// Laplace: ∫₀^{x_c} e^{−zν} kᵏν^{k−1}e^{−kν}/Γ(k) dν = (1 + z/k)^{−k}·P(k, t_c(1 + z/k)),
// substituting u = (k + z)ν in the incomplete gamma integral.
func (g gammaKept) Laplace(z float64) float64 {
	return math.Exp(-g.k*math.Log1p(z/g.k)) * gammaIncReg(g.k, g.t*(1+z/g.k))
}

// Poisson: ∫₀^{x_c} e^{−μν}(μν)ˣ/x!·kᵏν^{k−1}e^{−kν}/Γ(k) dν = NB(x; μ, k)·P(x + k,
// t_c(1 + μ/k)), NB the negative binomial PMF of mean μ and dispersion k (the same
// substitution as Laplace).
func (g gammaKept) Poisson(mu float64, x int) float64 {
	return NegBin{R: mu, K: g.k}.PMF(x) * gammaIncReg(float64(x)+g.k, g.t*(1+mu/g.k))
}

// RemoveTop: every case has ν₁ = 1, so removing the share c of cases leaves 1 − c of every
// expectation.
func (PointNu) RemoveTop(c float64) KeptNu { return pointKept{keep: 1 - c} }

type pointKept struct{ keep float64 }

func (p pointKept) Moments() (m1, m2 float64)         { return p.keep, p.keep }
func (p pointKept) Laplace(z float64) float64         { return p.keep * math.Exp(-z) }
func (p pointKept) Poisson(mu float64, x int) float64 { return p.keep * Poisson{R: mu}.PMF(x) }

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
