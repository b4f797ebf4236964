package offspring

import "math"

// The total size Y (root included) of a transmission chain started by one case has closed
// forms for the negative binomial and Poisson models [Blumberg & Lloyd-Smith 2013, PLoS
// Comput Biol 9:e1002993]. Each is written once here, as a function of a real size x and
// log Γ(x + 1): the integer sizes of ChainSizeLogPMF, and the chain-size likelihood of
// package branching, which continues it to real sizes for its quadrature and computes the
// (R, k)-only terms once per evaluation.

// NegBinChainSize is log P(Y = x) for negative binomial (R, k) offspring, R > 0
// [Blumberg & Lloyd-Smith 2013, eq. 3]:
//
//	P(Y = y) = Γ(ky + y − 1)/(Γ(ky)·Γ(y + 1)) · (R/k)^{y−1}/(1 + R/k)^{ky+y−1}.
type NegBinChainSize struct{ k, lrk, l1rk float64 }

// NewNegBinChainSize precomputes log(R/k) and log1p(R/k).
func NewNegBinChainSize(R, k float64) NegBinChainSize {
	return NegBinChainSize{k: k, lrk: math.Log(R / k), l1rk: math.Log1p(R / k)}
}

// LogPMF is log P(Y = x), given lgx1 = log Γ(x + 1).
func (c NegBinChainSize) LogPMF(x, lgx1 float64) float64 {
	a, _ := math.Lgamma(c.k*x + x - 1)
	b, _ := math.Lgamma(c.k * x)
	return a - b - lgx1 + (x-1)*c.lrk - (c.k*x+x-1)*c.l1rk
}

// BorelChainSize is log P(Y = x) for Poisson(R) offspring, R > 0: the Borel distribution
// P(Y = y) = e^{−Ry}(Ry)^{y−1}/y! [Borel 1942; Blumberg & Lloyd-Smith 2013], the negative
// binomial's limit k → ∞.
type BorelChainSize struct{ r, lr float64 }

// NewBorelChainSize precomputes log R.
func NewBorelChainSize(R float64) BorelChainSize { return BorelChainSize{r: R, lr: math.Log(R)} }

// LogPMF is log P(Y = x), given lgx1 = log Γ(x + 1).
func (c BorelChainSize) LogPMF(x, lgx1 float64) float64 {
	return -c.r*x + (x-1)*(c.lr+math.Log(x)) - lgx1
}

// trivialChainSize answers log P(Y = y) where no formula is needed: sizes below 1 are
// impossible, and with R = 0 every chain is its root alone.
func trivialChainSize(R float64, y int) (float64, bool) {
	switch {
	case y < 1:
		return math.Inf(-1), true
	case R == 0 && y == 1:
		return 0, true
	case R == 0:
		return math.Inf(-1), true
	}
	return 0, false
}
