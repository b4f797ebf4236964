package offspring

import (
	"fmt"
	"math"
	"math/cmplx"
)

// Distribution is an offspring distribution p_x = P(Z = x), x = 0, 1, 2, ...: the number of
// secondary cases one case causes in a Bienaymé–Galton–Watson branching process.
// PGF is its probability generating function G(s) = Σ p_x s^x [Harris 1963, ch. 1];
// PGFComplex evaluates G on the complex unit disc, which FFT decoding needs
// [Abate & Whitt 1992].
type Distribution interface {
	Name() string
	Mean() float64
	Variance() float64
	PMF(x int) float64
	LogPMF(x int) float64
	PGF(s float64) float64
	PGFComplex(s complex128) complex128
}

// Model names as they appear in the JSON summary and on the command line.
const (
	NamePoisson          = "poisson"
	NameGeometric        = "geometric"
	NameNegativeBinomial = "negative_binomial"
	NameEmpirical        = "empirical"
)

// Poisson is the Poisson(R) offspring distribution: p_x = e^{−R} R^x / x!, G(s) = e^{R(s−1)}.
// It is the negative binomial's limit k → ∞ [Lloyd-Smith et al. 2005].
type Poisson struct{ R float64 }

func (d Poisson) Name() string          { return NamePoisson }
func (d Poisson) Mean() float64         { return d.R }
func (d Poisson) Variance() float64     { return d.R }
func (d Poisson) PMF(x int) float64     { return math.Exp(d.LogPMF(x)) }
func (d Poisson) PGF(s float64) float64 { return math.Exp(d.R * (s - 1)) }
func (d Poisson) PGFComplex(s complex128) complex128 {
	return cmplx.Exp(complex(d.R, 0) * (s - 1))
}
func (d Poisson) LogPMF(x int) float64 {
	if x < 0 {
		return math.Inf(-1)
	}
	if d.R == 0 {
		if x == 0 {
			return 0
		}
		return math.Inf(-1)
	}
	lg, _ := math.Lgamma(float64(x) + 1)
	return -d.R + float64(x)*math.Log(d.R) - lg
}

// Geometric is the geometric offspring distribution with mean R (support 0, 1, 2, ...):
// p_x = (1/(1+R)) (R/(1+R))^x, G(s) = 1/(1 + R(1 − s)). It is the negative binomial with k = 1.
type Geometric struct{ R float64 }

func (d Geometric) Name() string          { return NameGeometric }
func (d Geometric) Mean() float64         { return d.R }
func (d Geometric) Variance() float64     { return d.R * (1 + d.R) }
func (d Geometric) PMF(x int) float64     { return math.Exp(d.LogPMF(x)) }
func (d Geometric) PGF(s float64) float64 { return 1 / (1 + d.R*(1-s)) }
func (d Geometric) PGFComplex(s complex128) complex128 {
	return 1 / (1 + complex(d.R, 0)*(1-s))
}
func (d Geometric) LogPMF(x int) float64 {
	if x < 0 {
		return math.Inf(-1)
	}
	if d.R == 0 {
		if x == 0 {
			return 0
		}
		return math.Inf(-1)
	}
	return -math.Log1p(d.R) + float64(x)*(math.Log(d.R)-math.Log1p(d.R))
}

// NegBin is the negative binomial offspring distribution with mean R and dispersion k
// [Lloyd-Smith et al. 2005, Nature 438:355]: each case's individual reproductive number
// ν ~ Gamma(shape k, mean R) and Z | ν ~ Poisson(ν), so
//
//	P(Z = x) = Γ(x + k)/(Γ(k)·x!) · (k/(k+R))^k · (R/(k+R))^x,   G(s) = (1 + (R/k)(1 − s))^{−k}.
//
// Variance R(1 + R/k). Small k means high heterogeneity; k → ∞ is Poisson(R).
type NegBin struct{ R, K float64 }

func (d NegBin) Name() string      { return NameNegativeBinomial }
func (d NegBin) Mean() float64     { return d.R }
func (d NegBin) Variance() float64 { return d.R * (1 + d.R/d.K) }
func (d NegBin) PMF(x int) float64 { return math.Exp(d.LogPMF(x)) }
func (d NegBin) PGF(s float64) float64 {
	return math.Exp(-d.K * math.Log1p(d.R/d.K*(1-s)))
}
func (d NegBin) PGFComplex(s complex128) complex128 {
	return cmplx.Exp(complex(-d.K, 0) * cmplx.Log(1+complex(d.R/d.K, 0)*(1-s)))
}
func (d NegBin) LogPMF(x int) float64 {
	if x < 0 {
		return math.Inf(-1)
	}
	if d.R == 0 {
		if x == 0 {
			return 0
		}
		return math.Inf(-1)
	}
	fx := float64(x)
	a, _ := math.Lgamma(fx + d.K)
	b, _ := math.Lgamma(d.K)
	c, _ := math.Lgamma(fx + 1)
	// k·log(k/(k+R)) = −k·log1p(R/k) stays accurate for large k.
	return a - b - c - d.K*math.Log1p(d.R/d.K) + fx*(math.Log(d.R)-math.Log(d.K+d.R))
}

// Empirical is an offspring distribution given as a list: P[x] = P(Z = x) for x < len(P),
// zero beyond.
type Empirical struct{ P []float64 }

// NewEmpirical checks a PMF list: no negative or non-finite entry, and a sum within 1e-9 of 1
// unless normalize is set, in which case the list is rescaled to sum to 1.
func NewEmpirical(p []float64, normalize bool) (Empirical, error) {
	if len(p) == 0 {
		return Empirical{}, fmt.Errorf("the offspring PMF list is empty")
	}
	sum := 0.0
	for i, v := range p {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return Empirical{}, fmt.Errorf("entry %d of the offspring PMF (P(Z=%d)) is %v: every entry must be a finite probability", i+1, i, v)
		}
		if v < 0 {
			return Empirical{}, fmt.Errorf("entry %d of the offspring PMF (P(Z=%d)) is negative (%g): probabilities cannot be negative", i+1, i, v)
		}
		sum += v
	}
	if sum == 0 {
		return Empirical{}, fmt.Errorf("the offspring PMF sums to 0")
	}
	q := make([]float64, len(p))
	copy(q, p)
	if math.Abs(sum-1) > 1e-9 {
		if !normalize {
			return Empirical{}, fmt.Errorf("the offspring PMF sums to %.12g, not 1 (tolerance 1e-9): fix the list or pass --normalize to rescale it", sum)
		}
		for i := range q {
			q[i] /= sum
		}
	}
	return Empirical{P: q}, nil
}

func (d Empirical) Name() string { return NameEmpirical }
func (d Empirical) Mean() float64 {
	m := 0.0
	for x, p := range d.P {
		m += float64(x) * p
	}
	return m
}
func (d Empirical) Variance() float64 {
	m, m2 := 0.0, 0.0
	for x, p := range d.P {
		m += float64(x) * p
		m2 += float64(x) * float64(x) * p
	}
	return m2 - m*m
}
func (d Empirical) PMF(x int) float64 {
	if x < 0 || x >= len(d.P) {
		return 0
	}
	return d.P[x]
}
func (d Empirical) LogPMF(x int) float64 { return math.Log(d.PMF(x)) }

// PGF evaluates the polynomial by Horner's rule.
func (d Empirical) PGF(s float64) float64 {
	v := 0.0
	for i := len(d.P) - 1; i >= 0; i-- {
		v = v*s + d.P[i]
	}
	return v
}
func (d Empirical) PGFComplex(s complex128) complex128 {
	var v complex128
	for i := len(d.P) - 1; i >= 0; i-- {
		v = v*s + complex(d.P[i], 0)
	}
	return v
}
