package offspring

import "math/rand/v2"

// A Distribution needs only its PMF and PGF; everything in package branching works from
// those. The interfaces below are optional capabilities a model may add when it knows a
// faster or more accurate form of one piece of algebra. Package branching asks for each with
// a type assertion and takes the general path when a model lacks it, so a new family is one
// file here and never an edit elsewhere.

// Validator is a model that can say its parameters make no distribution (a negative mean,
// k ≤ 0, a list that is not a PMF). Branching calls it before any other computation, so no
// later step produces NaN from bad parameters.
type Validator interface {
	Validate() error
}

// LogPGFer computes log G(s) for s in [0, 1] directly, keeping its precision where G(s) is
// close to 1 (the end-of-outbreak product multiplies many such factors). The general path
// is log(G(s)).
type LogPGFer interface {
	LogPGF(s float64) float64
}

// ComplexLogPGFer computes a logarithm l of G(s) on the complex unit disc whose exponential
// is, bit for bit, what PGFComplex returns: models that have it compute PGFComplex as
// cmplx.Exp(LogPGFComplex(s)). The projection decides from Re l = log|G(s)| that a term will
// underflow before taking any exponential, and raises G to a power as e^{a·l}.
type ComplexLogPGFer interface {
	LogPGFComplex(s complex128) complex128
}

// Complementer computes 1 − G(1 − u) for 0 ≤ u ≤ 1 without the cancellation of computing
// G(1 − u) first, so the probability of a major outbreak keeps its relative precision when
// it is small (R just above 1). The general path is 1 − G(1 − u).
type Complementer interface {
	OneMinusPGFComplement(u float64) float64
}

// ModulusDecreasing is implemented only by families for which |G(r·e^{iθ})| does not
// increase in θ on [0, π] for 0 < r ≤ 1 (true of the Poisson, geometric and negative
// binomial, false of PGFs in general: G(s) = (1 + s²)/2 has |G(−r)| = |G(r)|). LogAbs2PGF is
// log|G(s)|², cheaper than the PGF itself. The projection uses it to find by bisection the
// last point of its circle where a term can still be non-zero.
type ModulusDecreasing interface {
	LogAbs2PGF(s complex128) float64
}

// ChainSizer has a closed form for log P(Y = y), the total size Y (root included) of a
// transmission chain started by one case. Without it, branching finds the chain-size
// distribution by Lagrange inversion of the PGF.
type ChainSizer interface {
	ChainSizeLogPMF(y int) float64
}

// MixedPoisson is a model in which each case has an individual reproductive number ν and
// Z | ν ~ Poisson(ν) [Lloyd-Smith et al. 2005, Nature 438:355]. Reading transmission by ν
// rather than by realised counts needs the distribution of ν.
type MixedPoisson interface {
	IndividualR() IndividualR
}

// IndividualR is the distribution of the individual reproductive number ν of a mixed-Poisson
// model.
type IndividualR interface {
	// ShareCausing is the smallest share of cases, ranked by ν largest first, that together
	// cause the share target (0 < target < 1) of all transmission (the "20/80" reading by ν).
	ShareCausing(target float64) (float64, error)
}

// NuPosterior is an IndividualR that can condition a case's ν on the offspring it has had so
// far. A case whose serial interval has run for the share F (its serial-interval CDF at the
// time elapsed since its onset) and which has infected o people carries ν | o, and its
// offspring still to come are Poisson(ν(1 − F)). Branching uses it for the chance that the
// chains now under way die out and for the cases they may still cause.
type NuPosterior interface {
	// PosteriorMean is E[ν | o, F] for a model of mean R.
	PosteriorMean(mean, o, elapsed float64) float64
	// PosteriorLogLaplace is log E[e^{−tν} | o, F], t ≥ 0.
	PosteriorLogLaplace(mean, o, elapsed, t float64) float64
	// PosteriorSample draws ν | o, F; with o = F = 0, ν from its prior.
	PosteriorSample(rng *rand.Rand, mean, o, elapsed float64) float64
}

// FiniteSupport is a model with P(Z = x) = 0 for every x above MaxCount: sums over the PMF
// stop there instead of at a tail tolerance.
type FiniteSupport interface {
	MaxCount() int
}

// TargetedRemover is an IndividualR that can say what is left when the share c (0 ≤ c ≤ 1)
// of cases with the largest ν is removed, every removed case causing no transmission: the
// targeted control of Lloyd-Smith et al. (2005, Nature 438:355). Package branching builds
// the targeted-control scenario from it.
type TargetedRemover interface {
	RemoveTop(c float64) KeptNu
}

// KeptNu describes the cases left in place by TargetedRemover.RemoveTop(c), with ν scaled to
// mean 1 (ν₁ = ν/R) and x_c the (1 − c) quantile of ν₁. Its expectations E[·; ν₁ ≤ x_c] run
// over all cases, the removed ones contributing nothing.
type KeptNu interface {
	// Moments returns E[ν₁; ν₁ ≤ x_c] and E[ν₁²; ν₁ ≤ x_c]: the first is the share of
	// transmission the cases left in place still cause.
	Moments() (m1, m2 float64)
	// Laplace returns E[e^{−zν₁}; ν₁ ≤ x_c] for z ≥ 0.
	Laplace(z float64) float64
	// Poisson returns E[e^{−μν₁}(μν₁)^x/x!; ν₁ ≤ x_c]: the probability that a case is left
	// in place and has x offspring, when the mean offspring before control is μ.
	Poisson(mu float64, x int) float64
}
