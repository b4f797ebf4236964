package offspring

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
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

func (d Poisson) Name() string                       { return NamePoisson }
func (d Poisson) Mean() float64                      { return d.R }
func (d Poisson) Variance() float64                  { return d.R }
func (d Poisson) PMF(x int) float64                  { return math.Exp(d.LogPMF(x)) }
func (d Poisson) PGF(s float64) float64              { return math.Exp(d.R * (s - 1)) }
func (d Poisson) PGFComplex(s complex128) complex128 { return cmplx.Exp(d.LogPGFComplex(s)) }

// LogPGF is R(s − 1).
func (d Poisson) LogPGF(s float64) float64 { return d.R * (s - 1) }

// LogPGFComplex is R(s − 1), of which PGFComplex is the exponential.
func (d Poisson) LogPGFComplex(s complex128) complex128 { return complex(d.R, 0) * (s - 1) }

// OneMinusPGFComplement is 1 − G(1 − u) = −expm1(−Ru).
func (d Poisson) OneMinusPGFComplement(u float64) float64 { return -math.Expm1(-d.R * u) }

// LogAbs2PGF is log|G(s)|² = 2R(Re s − 1), which falls as Re s falls.
func (d Poisson) LogAbs2PGF(s complex128) float64 { return 2 * d.R * (real(s) - 1) }

// ChainSizeLogPMF is the Borel distribution of chain sizes (see BorelChainSize).
func (d Poisson) ChainSizeLogPMF(y int) float64 {
	if v, ok := trivialChainSize(d.R, y); ok {
		return v
	}
	fy := float64(y)
	lg, _ := math.Lgamma(fy + 1)
	return NewBorelChainSize(d.R).LogPMF(fy, lg)
}

// IndividualR: under Poisson offspring every case has ν = R.
func (d Poisson) IndividualR() IndividualR { return PointNu{} }

// Validate requires a finite R ≥ 0.
func (d Poisson) Validate() error { return checkR("Poisson", d.R) }
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

// LogPGF is −log1p(R(1 − s)).
func (d Geometric) LogPGF(s float64) float64 { return -math.Log1p(d.R * (1 - s)) }

// OneMinusPGFComplement is 1 − G(1 − u) = Ru/(1 + Ru).
func (d Geometric) OneMinusPGFComplement(u float64) float64 { return d.R * u / (1 + d.R*u) }

// LogAbs2PGF is −log|1 + R(1 − s)|², which falls as Re s falls.
func (d Geometric) LogAbs2PGF(s complex128) float64 { return -logAbs2Linear(d.R, s) }

// ChainSizeLogPMF is the negative binomial's with k = 1.
func (d Geometric) ChainSizeLogPMF(y int) float64 { return NegBin{R: d.R, K: 1}.ChainSizeLogPMF(y) }

// IndividualR: the geometric is the gamma–Poisson mixture with shape 1 (ν exponential).
func (d Geometric) IndividualR() IndividualR { return GammaNu{Shape: 1} }

// Validate requires a finite R ≥ 0.
func (d Geometric) Validate() error { return checkR("geometric", d.R) }
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
func (d NegBin) PGFComplex(s complex128) complex128 { return cmplx.Exp(d.LogPGFComplex(s)) }

// LogPGF is −k·log1p((R/k)(1 − s)).
func (d NegBin) LogPGF(s float64) float64 { return -d.K * math.Log1p(d.R/d.K*(1-s)) }

// LogPGFComplex is −k·Log(1 + (R/k)(1 − s)), of which PGFComplex is the exponential.
func (d NegBin) LogPGFComplex(s complex128) complex128 {
	return complex(-d.K, 0) * cmplx.Log(1+complex(d.R/d.K, 0)*(1-s))
}

// OneMinusPGFComplement is 1 − G(1 − u) = −expm1(−k·log1p(Ru/k)).
func (d NegBin) OneMinusPGFComplement(u float64) float64 {
	return -math.Expm1(-d.K * math.Log1p(d.R/d.K*u))
}

// LogAbs2PGF is −k·log|1 + (R/k)(1 − s)|², which falls as Re s falls.
func (d NegBin) LogAbs2PGF(s complex128) float64 { return -d.K * logAbs2Linear(d.R/d.K, s) }

// ChainSizeLogPMF is the closed form of Blumberg & Lloyd-Smith (see NegBinChainSize).
func (d NegBin) ChainSizeLogPMF(y int) float64 {
	if v, ok := trivialChainSize(d.R, y); ok {
		return v
	}
	fy := float64(y)
	lg, _ := math.Lgamma(fy + 1)
	return NewNegBinChainSize(d.R, d.K).LogPMF(fy, lg)
}

// IndividualR: ν ~ Gamma(shape k, mean R).
func (d NegBin) IndividualR() IndividualR { return GammaNu{Shape: d.K} }

// Validate requires a finite R ≥ 0 and a finite k > 0 (k → ∞ is the Poisson model).
func (d NegBin) Validate() error {
	if err := checkR("negative binomial", d.R); err != nil {
		return err
	}
	if !(d.K > 0) || math.IsInf(d.K, 0) {
		return fmt.Errorf("negative binomial k = %v: k must be finite and > 0 (use the Poisson model for k → ∞)", d.K)
	}
	return nil
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
	c, _ := math.Lgamma(fx + 1)
	// k·log(k/(k+R)) = −k·log1p(R/k) stays accurate for large k, and so does the rising
	// factorial (numeric.LogPochhammer), so the PMF reaches the Poisson limit smoothly.
	return numeric.LogPochhammer(d.K, fx) - c - d.K*math.Log1p(d.R/d.K) + fx*(math.Log(d.R)-math.Log(d.K+d.R))
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

// OneMinusPGFComplement is Σ_x p_x (1 − (1 − u)^x), summed term by term.
func (d Empirical) OneMinusPGFComplement(u float64) float64 {
	l := math.Log1p(-u)
	var s numeric.Sum
	for x, p := range d.P {
		if x > 0 && p > 0 {
			s.Add(-p * math.Expm1(float64(x)*l))
		}
	}
	return s.Value()
}

// MaxCount is the largest count listed.
func (d Empirical) MaxCount() int { return len(d.P) - 1 }

// Validate requires a non-empty list of finite probabilities ≥ 0 summing to 1 within 1e-9.
func (d Empirical) Validate() error {
	if len(d.P) == 0 {
		return fmt.Errorf("the offspring PMF list is empty")
	}
	sum := 0.0
	for i, p := range d.P {
		if !(p >= 0) || math.IsInf(p, 0) {
			return fmt.Errorf("P(Z=%d) = %v: every entry must be a finite probability ≥ 0", i, p)
		}
		sum += p
	}
	if math.Abs(sum-1) > 1e-9 {
		return fmt.Errorf("the offspring PMF sums to %.12g, not 1 (build it with offspring.NewEmpirical)", sum)
	}
	return nil
}

func (d Empirical) PGFComplex(s complex128) complex128 {
	var v complex128
	for i := len(d.P) - 1; i >= 0; i-- {
		v = v*s + complex(d.P[i], 0)
	}
	return v
}

// checkR requires the mean R of a model to be finite and ≥ 0.
func checkR(model string, R float64) error {
	if !(R >= 0) || math.IsInf(R, 0) {
		return fmt.Errorf("%s R = %v: R must be finite and ≥ 0", model, R)
	}
	return nil
}

// logAbs2Linear is log|1 + c(1 − s)|².
func logAbs2Linear(c float64, s complex128) float64 {
	x, y := 1+c*(1-real(s)), -c*imag(s)
	return math.Log(x*x + y*y)
}
