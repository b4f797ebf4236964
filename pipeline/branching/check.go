package branching

import (
	"errors"
	"fmt"
	"math"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

// ErrNilDistribution is returned when a nil offspring distribution is passed in.
var ErrNilDistribution = errors.New("branching: the offspring distribution is nil")

// checkDistribution rejects offspring distributions whose parameters make the PGF
// meaningless (negative or non-finite R, k ≤ 0, a list that is not a PMF: the model's own
// Validate, when it has one; then the mean, variance and PGF of any model), so that no later
// computation produces NaN or panics.
func checkDistribution(d offspring.Distribution) error {
	if d == nil {
		return ErrNilDistribution
	}
	if v, ok := d.(offspring.Validator); ok {
		if err := v.Validate(); err != nil {
			return fmt.Errorf("branching: %w", err)
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

// oneMinusPGFComplement returns 1 − G(1 − u) for 0 ≤ u ≤ 1, without cancellation where the
// model can (offspring.Complementer).
func oneMinusPGFComplement(d offspring.Distribution, u float64) float64 {
	if c, ok := d.(offspring.Complementer); ok {
		return c.OneMinusPGFComplement(u)
	}
	return 1 - d.PGF(1-u)
}

// logPGF returns log G(s) for s in [0, 1], accurately where the model can (offspring.LogPGFer).
func logPGF(d offspring.Distribution, s float64) float64 {
	if l, ok := d.(offspring.LogPGFer); ok {
		return l.LogPGF(s)
	}
	return math.Log(d.PGF(s))
}
