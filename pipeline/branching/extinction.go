package branching

import (
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

// MaxExtinctionGenerations bounds the generation number ExtinctionByGeneration accepts.
const MaxExtinctionGenerations = 10_000_000

// ExtinctionProbability is the probability q that the line of descent of one case dies out:
// the smallest root of G(s) = s in [0, 1] [Harris 1963, ch. 1, Thm 6.1]. Cases:
//
//   - R ≤ 1 and p_1 < 1: q = 1 exactly (subcritical or critical process);
//   - p_1 = 1 (every case has exactly one offspring): G(s) = s, every s is a fixed point, and
//     the smallest is 0. This is also the true probability of extinction, since X_n = 1 for
//     every n, so q = 0 is returned;
//   - p_0 = 0: no case is ever childless and the process cannot die, q = 0;
//   - otherwise R > 1 and q lies in (0, 1). It is found by a bracketed Brent search on the
//     complement u = 1 − q, h(u) = G(1 − u) − (1 − u), with 1 − G(1 − u) computed without
//     cancellation (see MajorOutbreakProbability), so that q stays accurate at R = 1 + 1e−6.
func ExtinctionProbability(d offspring.Distribution) (float64, error) {
	u, err := majorOutbreak(d)
	if err != nil {
		return math.NaN(), err
	}
	return 1 - u, nil
}

// MajorOutbreakProbability is 1 − q, the probability that one introduction starts a chain
// that never dies out [Harris 1963]. It is computed directly as the positive root u of
// h(u) = u − (1 − G(1 − u)), not as 1 − q, so it keeps its relative precision when it is
// small (R just above 1, where u ≈ 2(R − 1)/E[Z(Z − 1)] [Harris 1963]).
func MajorOutbreakProbability(d offspring.Distribution) (float64, error) {
	return majorOutbreak(d)
}

func majorOutbreak(d offspring.Distribution) (float64, error) {
	if err := checkDistribution(d); err != nil {
		return math.NaN(), err
	}
	if d.PMF(1) >= 1 || d.PGF(0) == 0 {
		return 1, nil
	}
	if d.Mean() <= 1 {
		return 0, nil
	}
	// h is convex with h(0) = 0, h'(0) = 1 − R < 0 and h(1) = p_0 > 0, so it is negative on
	// (0, u*) and positive on (u*, 1]: halving from 1 finds a bracket.
	h := func(u float64) float64 { return u - oneMinusPGFComplement(d, u) }
	hi := 1.0
	lo := 0.5
	for ; lo > 0; lo /= 2 {
		v := h(lo)
		if math.IsNaN(v) {
			return math.NaN(), fmt.Errorf("branching: %s PGF is NaN at s = %g", d.Name(), 1-lo)
		}
		if v < 0 {
			break
		}
		hi = lo
	}
	if lo == 0 {
		// R exceeds 1 by less than double precision can resolve: 1 − q underflows.
		return 0, nil
	}
	u, err := numeric.Brent(h, lo, hi, 0, 500)
	if err != nil {
		return math.NaN(), err
	}
	return math.Min(1, math.Max(0, u)), nil
}

// ExtinctionByGeneration is P(X_n = 0 | X_0 = 1) = G_n(0), the n-fold composition of G at 0
// [Harris 1963, ch. 1]: the probability that one case's line has died out by generation n.
// It increases to q as n → ∞. The iteration stops early once it reaches a floating-point
// fixed point.
func ExtinctionByGeneration(d offspring.Distribution, n int) (float64, error) {
	if err := checkDistribution(d); err != nil {
		return math.NaN(), err
	}
	if n < 0 || n > MaxExtinctionGenerations {
		return math.NaN(), fmt.Errorf("branching: generation %d outside 0..%d", n, MaxExtinctionGenerations)
	}
	s := 0.0
	for i := 0; i < n; i++ {
		next := d.PGF(s)
		if next == s {
			break
		}
		s = next
	}
	return s, nil
}
