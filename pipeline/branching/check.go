package branching

import (
	"errors"
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

// ErrNilDistribution is returned when a nil offspring distribution is passed in.
var ErrNilDistribution = errors.New("branching: the offspring distribution is nil")

// checkDistribution rejects offspring distributions whose parameters make the PGF
// meaningless (negative or non-finite R, k ≤ 0, a list that is not a PMF), so that no
// later computation produces NaN or panics.
func checkDistribution(d offspring.Distribution) error {
	if d == nil {
		return ErrNilDistribution
	}
	switch m := d.(type) {
	case offspring.Poisson:
		if !(m.R >= 0) || math.IsInf(m.R, 0) {
			return fmt.Errorf("branching: Poisson R = %v: R must be finite and ≥ 0", m.R)
		}
	case offspring.Geometric:
		if !(m.R >= 0) || math.IsInf(m.R, 0) {
			return fmt.Errorf("branching: geometric R = %v: R must be finite and ≥ 0", m.R)
		}
	case offspring.NegBin:
		if !(m.R >= 0) || math.IsInf(m.R, 0) {
			return fmt.Errorf("branching: negative binomial R = %v: R must be finite and ≥ 0", m.R)
		}
		if !(m.K > 0) || math.IsInf(m.K, 0) {
			return fmt.Errorf("branching: negative binomial k = %v: k must be finite and > 0 (use the Poisson model for k → ∞)", m.K)
		}
	case offspring.Empirical:
		if len(m.P) == 0 {
			return fmt.Errorf("branching: the offspring PMF list is empty")
		}
		sum := 0.0
		for i, p := range m.P {
			if !(p >= 0) || math.IsInf(p, 0) {
				return fmt.Errorf("branching: P(Z=%d) = %v: every entry must be a finite probability ≥ 0", i, p)
			}
			sum += p
		}
		if math.Abs(sum-1) > 1e-9 {
			return fmt.Errorf("branching: the offspring PMF sums to %.12g, not 1 (build it with offspring.NewEmpirical)", sum)
		}
	}
	R := d.Mean()
	if !(R >= 0) || math.IsInf(R, 0) {
		return fmt.Errorf("branching: %s offspring mean = %v: it must be finite and ≥ 0", d.Name(), R)
	}
	if v := d.Variance(); math.IsNaN(v) || math.IsInf(v, 0) || v < -1e-9*(1+R*R) {
		return fmt.Errorf("branching: %s offspring variance = %v: it must be finite and ≥ 0", d.Name(), v)
	}
	if g1 := d.PGF(1); math.Abs(g1-1) > 1e-9 {
		return fmt.Errorf("branching: %s offspring PGF at 1 is %v, not 1: the distribution is not proper", d.Name(), g1)
	}
	if g0 := d.PGF(0); !(g0 >= 0 && g0 <= 1) {
		return fmt.Errorf("branching: %s offspring PGF at 0 is %v, outside [0, 1]", d.Name(), g0)
	}
	return nil
}

// variance returns the offspring variance with tiny negative round-off (possible for a
// list) clamped to 0.
func variance(d offspring.Distribution) float64 {
	return math.Max(0, d.Variance())
}

// dispersion returns k for the models that have one: the negative binomial's K and 1 for
// the geometric, which is the negative binomial with k = 1 [Lloyd-Smith et al. 2005].
func dispersion(d offspring.Distribution) (float64, bool) {
	switch m := d.(type) {
	case offspring.NegBin:
		return m.K, true
	case offspring.Geometric:
		return 1, true
	}
	return 0, false
}

// oneMinusPGFComplement returns 1 − G(1 − u) without the cancellation of computing G first,
// for 0 ≤ u ≤ 1: closed forms for the parametric models (expm1/log1p), a term-wise sum
// Σ p_x (1 − (1 − u)^x) for a list, and 1 − G(1 − u) for any other implementation.
func oneMinusPGFComplement(d offspring.Distribution, u float64) float64 {
	switch m := d.(type) {
	case offspring.Poisson:
		// G(s) = e^{R(s−1)} ⇒ 1 − G(1−u) = −expm1(−Ru).
		return -math.Expm1(-m.R * u)
	case offspring.Geometric:
		// G(s) = 1/(1 + R(1−s)) ⇒ 1 − G(1−u) = Ru/(1 + Ru).
		return m.R * u / (1 + m.R*u)
	case offspring.NegBin:
		// G(s) = (1 + (R/k)(1−s))^{−k} ⇒ 1 − G(1−u) = −expm1(−k·log1p(Ru/k)).
		return -math.Expm1(-m.K * math.Log1p(m.R/m.K*u))
	case offspring.Empirical:
		l := math.Log1p(-u)
		var s numeric.Sum
		for x, p := range m.P {
			if x > 0 && p > 0 {
				s.Add(-p * math.Expm1(float64(x)*l))
			}
		}
		return s.Value()
	}
	return 1 - d.PGF(1-u)
}

// logPGF returns log G(s) for s in [0, 1], accurate when G(s) is close to 1 for the
// parametric models (the end-of-outbreak product multiplies many such factors).
func logPGF(d offspring.Distribution, s float64) float64 {
	switch m := d.(type) {
	case offspring.Poisson:
		return m.R * (s - 1)
	case offspring.Geometric:
		return -math.Log1p(m.R * (1 - s))
	case offspring.NegBin:
		return -m.K * math.Log1p(m.R/m.K*(1-s))
	}
	return math.Log(d.PGF(s))
}
