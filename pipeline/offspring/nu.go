package offspring

import (
	"fmt"
	"math"

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

// keptCut is t_c = k·x_c, where x_c is the (1 − c) quantile of ν/R ~ Gamma(shape k, rate k):
// the point of the regularized incomplete gamma function with Q(k, t_c) = c, +Inf at c = 0
// and 0 at c = 1.
func (g GammaNu) keptCut(c float64) float64 {
	switch {
	case c <= 0:
		return math.Inf(1)
	case c >= 1:
		return 0
	}
	return mathext.GammaIncRegCompInv(g.Shape, c)
}

// gammaIncReg is P(a, x), with P(a, +Inf) = 1.
func gammaIncReg(a, x float64) float64 {
	if math.IsInf(x, 1) {
		return 1
	}
	return mathext.GammaIncReg(a, x)
}

// KeptMoments: for ν₁ ~ Gamma(k, rate k), E[ν₁^n; ν₁ ≤ x] = Γ(k + n)/(Γ(k)kⁿ)·P(k + n, kx), so
// m1 = P(k + 1, t_c) and m2 = (k + 1)/k·P(k + 2, t_c) [the truncated moments of the gamma
// density; Lloyd-Smith et al. 2005, supplement, use m1 for the targeted-control R].
func (g GammaNu) KeptMoments(c float64) (m1, m2 float64) {
	k, t := g.Shape, g.keptCut(c)
	return gammaIncReg(k+1, t), (k + 1) / k * gammaIncReg(k+2, t)
}

// KeptLaplace: ∫₀^{x_c} e^{−zν} kᵏν^{k−1}e^{−kν}/Γ(k) dν = (1 + z/k)^{−k}·P(k, t_c(1 + z/k)),
// substituting u = (k + z)ν in the incomplete gamma integral.
func (g GammaNu) KeptLaplace(c, z float64) float64 {
	k, t := g.Shape, g.keptCut(c)
	a := 1 + z/k
	return math.Exp(-k*math.Log1p(z/k)) * gammaIncReg(k, t*a)
}

// KeptPoisson: ∫₀^{x_c} e^{−μν}(μν)ˣ/x!·kᵏν^{k−1}e^{−kν}/Γ(k) dν = NB(x; μ, k)·P(x + k,
// t_c(1 + μ/k)), NB the negative binomial PMF of mean μ and dispersion k (the same
// substitution as KeptLaplace).
func (g GammaNu) KeptPoisson(c, mu float64, x int) float64 {
	k, t := g.Shape, g.keptCut(c)
	return NegBin{R: mu, K: k}.PMF(x) * gammaIncReg(float64(x)+k, t*(1+mu/k))
}

// KeptMoments: every case has ν₁ = 1, so removing the share c leaves 1 − c of both moments.
func (PointNu) KeptMoments(c float64) (m1, m2 float64) { return 1 - c, 1 - c }

// KeptLaplace is (1 − c)e^{−z}.
func (PointNu) KeptLaplace(c, z float64) float64 { return (1 - c) * math.Exp(-z) }

// KeptPoisson is (1 − c) times the Poisson(μ) PMF at x.
func (PointNu) KeptPoisson(c, mu float64, x int) float64 { return (1 - c) * Poisson{R: mu}.PMF(x) }
