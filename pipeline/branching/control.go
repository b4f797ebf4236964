package branching

import (
	"fmt"
	"math"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

// The control strategies of Lloyd-Smith et al. (2005, Nature 438:355, "Control measures"),
// each applied with effort c in [0, 1].
const (
	// ControlPopulation scales every case's individual reproductive number ν by 1 − c
	// (population-wide measures that reduce everyone's contacts alike).
	ControlPopulation = "population"
	// ControlIndividual removes a share c of cases, chosen without regard to ν, entirely
	// (isolation of a random share of cases).
	ControlIndividual = "individual"
	// ControlTargeted removes the share c of cases with the largest ν (isolation that
	// reaches the most infectious cases first).
	ControlTargeted = "targeted"
)

// ControlStrategies lists the strategies in the order the report shows them.
var ControlStrategies = [...]string{ControlPopulation, ControlIndividual, ControlTargeted}

// Controlled is the offspring distribution left by strategy at effort c [Lloyd-Smith et al.
// 2005, Nature 438:355, and its supplement], with G the PGF without control:
//
//   - population: G_c(s) = G(1 − (1 − c)(1 − s)). Scaling ν by 1 − c in a mixed Poisson is
//     binomial thinning of each case's offspring, so for a model that is not a mixed Poisson
//     (a list) this reads "each transmission is prevented with probability c"; R_c = (1 − c)R;
//   - individual: G_c(s) = c + (1 − c)G(s); R_c = (1 − c)R;
//   - targeted: G_c(s) = c + E[e^{−ν(1−s)}; ν ≤ ν_c], ν_c the (1 − c) quantile of ν;
//     R_c = R·E[ν; ν ≤ ν_c]/R. It needs the model's ν distribution to be an
//     offspring.TargetedRemover (the gamma ν of the negative binomial and geometric, the
//     point ν of the Poisson); for other models it is an error.
//
// Every branching routine applies to the result (ExtinctionProbability gives the
// probability that one introduction dies out under control).
func Controlled(d offspring.Distribution, strategy string, c float64) (offspring.Distribution, error) {
	if err := checkDistribution(d); err != nil {
		return nil, err
	}
	if !(c >= 0 && c <= 1) {
		return nil, fmt.Errorf("branching: control effort %v outside [0, 1]", c)
	}
	switch strategy {
	case ControlPopulation:
		return thinned{d: d, keep: 1 - c}, nil
	case ControlIndividual:
		return removed{d: d, c: c}, nil
	case ControlTargeted:
		tr, ok := targetedRemover(d)
		if !ok {
			return nil, fmt.Errorf("branching: targeted control needs the distribution of individual R, which the %s model does not give", d.Name())
		}
		return targeted{d: d, kept: tr.RemoveTop(c), c: c}, nil
	}
	return nil, fmt.Errorf("branching: unknown control strategy %q", strategy)
}

// targetedRemover is the model's ν distribution when it can be cut at a quantile.
func targetedRemover(d offspring.Distribution) (offspring.TargetedRemover, bool) {
	mp, ok := d.(offspring.MixedPoisson)
	if !ok {
		return nil, false
	}
	tr, ok := mp.IndividualR().(offspring.TargetedRemover)
	return tr, ok
}

// ControlPoint is one effort of a control curve: the effective reproduction number and the
// probability that one new introduction dies out.
type ControlPoint struct {
	Effort     float64
	R          float64
	Extinction float64
}

// ControlCurve evaluates strategy at each effort: R_c is the mean of Controlled, the
// extinction probability its ExtinctionProbability.
func ControlCurve(d offspring.Distribution, strategy string, efforts []float64) ([]ControlPoint, error) {
	out := make([]ControlPoint, 0, len(efforts))
	for _, c := range efforts {
		dc, err := Controlled(d, strategy, c)
		if err != nil {
			return nil, err
		}
		q, err := ExtinctionProbability(dc)
		if err != nil {
			return nil, err
		}
		out = append(out, ControlPoint{Effort: c, R: dc.Mean(), Extinction: q})
	}
	return out, nil
}

// ControlThreshold is the smallest effort c with R_c ≤ 1, so that every introduction dies
// out [Lloyd-Smith et al. 2005]: 0 when R ≤ 1; 1 − 1/R for the population-wide and the
// individual strategies; for targeted control the root of R·m1(c) = 1, m1 the kept share of
// transmission (offspring.KeptNu.Moments), which falls from 1 at c = 0 to 0
// at c = 1, found by Brent's method.
func ControlThreshold(d offspring.Distribution, strategy string) (float64, error) {
	if _, err := Controlled(d, strategy, 0); err != nil {
		return math.NaN(), err
	}
	R := d.Mean()
	if R <= 1 {
		return 0, nil
	}
	if strategy != ControlTargeted {
		return 1 - 1/R, nil
	}
	tr, _ := targetedRemover(d)
	f := func(c float64) float64 {
		m1, _ := tr.RemoveTop(c).Moments()
		return R*m1 - 1
	}
	c, err := numeric.Brent(f, 0, 1, 1e-14, 500)
	if err != nil {
		return math.NaN(), fmt.Errorf("branching: targeted-control threshold: %w", err)
	}
	return c, nil
}

// seriesLimit bounds the sums over the PMF of a controlled distribution.
const seriesLimit = 1 << 20

// seriesPGF is Σ p_x s^x on the complex disc for the controlled distributions that have no
// closed form there, summed until the mass left is below 1e−15 (at most seriesLimit terms).
func seriesPGF(pmf func(int) float64, s complex128) complex128 {
	var sum complex128
	var mass numeric.Sum
	pw := complex(1, 0)
	for x := 0; x < seriesLimit; x++ {
		p := pmf(x)
		sum += complex(p, 0) * pw
		mass.Add(p)
		if 1-mass.Value() < 1e-15 {
			break
		}
		pw *= s
	}
	return sum
}

// thinned is Z thinned binomially: each offspring kept with probability keep.
type thinned struct {
	d    offspring.Distribution
	keep float64
}

func (t thinned) Name() string  { return t.d.Name() + " under population-wide control" }
func (t thinned) Mean() float64 { return t.keep * t.d.Mean() }

// Variance of a binomial thinning: keep²·σ² + keep(1 − keep)·R.
func (t thinned) Variance() float64 {
	return t.keep*t.keep*variance(t.d) + t.keep*(1-t.keep)*t.d.Mean()
}
func (t thinned) PGF(s float64) float64 { return t.d.PGF(1 - t.keep*(1-s)) }
func (t thinned) PGFComplex(s complex128) complex128 {
	return t.d.PGFComplex(1 - complex(t.keep, 0)*(1-s))
}
func (t thinned) OneMinusPGFComplement(u float64) float64 {
	return oneMinusPGFComplement(t.d, t.keep*u)
}

// PMF is E[Poisson(x; keep·ν)] for a model whose ν distribution is a
// offspring.TargetedRemover (nothing removed); otherwise it sums P(Z = y)·Binomial(x; y,
// keep) over y ≥ x until the mass of Z left is below 1e−15.
func (t thinned) PMF(x int) float64 {
	if x < 0 {
		return 0
	}
	if tr, ok := targetedRemover(t.d); ok {
		return tr.RemoveTop(0).Poisson(t.keep*t.d.Mean(), x)
	}
	if t.keep == 1 {
		return t.d.PMF(x)
	}
	if t.keep == 0 {
		if x == 0 {
			return 1
		}
		return 0
	}
	var sum, below numeric.Sum
	for y := 0; y < x; y++ {
		below.Add(t.d.PMF(y))
	}
	lk, lc := math.Log(t.keep), math.Log1p(-t.keep)
	for y := x; y < seriesLimit; y++ {
		p := t.d.PMF(y)
		below.Add(p)
		if p > 0 {
			lg1, _ := math.Lgamma(float64(y + 1))
			lg2, _ := math.Lgamma(float64(x + 1))
			lg3, _ := math.Lgamma(float64(y - x + 1))
			sum.Add(p * math.Exp(lg1-lg2-lg3+float64(x)*lk+float64(y-x)*lc))
		}
		if 1-below.Value() < 1e-15 {
			break
		}
	}
	return sum.Value()
}
func (t thinned) LogPMF(x int) float64 { return math.Log(t.PMF(x)) }

// removed is the mixture c·δ₀ + (1 − c)·Z.
type removed struct {
	d offspring.Distribution
	c float64
}

func (r removed) Name() string  { return r.d.Name() + " under individual control" }
func (r removed) Mean() float64 { return (1 - r.c) * r.d.Mean() }

// Variance of the mixture: (1 − c)(σ² + R²) − (1 − c)²R².
func (r removed) Variance() float64 {
	R := r.d.Mean()
	return (1-r.c)*(variance(r.d)+R*R) - (1-r.c)*(1-r.c)*R*R
}
func (r removed) PGF(s float64) float64 { return r.c + (1-r.c)*r.d.PGF(s) }
func (r removed) PGFComplex(s complex128) complex128 {
	return complex(r.c, 0) + complex(1-r.c, 0)*r.d.PGFComplex(s)
}
func (r removed) OneMinusPGFComplement(u float64) float64 {
	return (1 - r.c) * oneMinusPGFComplement(r.d, u)
}
func (r removed) PMF(x int) float64 {
	p := (1 - r.c) * r.d.PMF(x)
	if x == 0 {
		p += r.c
	}
	return p
}
func (r removed) LogPMF(x int) float64 { return math.Log(r.PMF(x)) }

// targeted is Z with the share c of largest-ν cases removed.
type targeted struct {
	d    offspring.Distribution
	kept offspring.KeptNu
	c    float64
}

func (t targeted) Name() string { return t.d.Name() + " under targeted control" }
func (t targeted) Mean() float64 {
	m1, _ := t.kept.Moments()
	return t.d.Mean() * m1
}

// Variance of a mixed Poisson with the kept ν: E[Z] = R·m1, E[Z(Z − 1)] = R²·m2.
func (t targeted) Variance() float64 {
	R := t.d.Mean()
	m1, m2 := t.kept.Moments()
	return R*m1 + R*R*m2 - R*R*m1*m1
}
func (t targeted) PGF(s float64) float64 {
	return t.c + t.kept.Laplace(t.d.Mean()*(1-s))
}
func (t targeted) PGFComplex(s complex128) complex128 {
	if imag(s) == 0 && real(s) >= 0 {
		return complex(t.PGF(real(s)), 0)
	}
	return seriesPGF(t.PMF, s)
}
func (t targeted) PMF(x int) float64 {
	if x < 0 {
		return 0
	}
	p := t.kept.Poisson(t.d.Mean(), x)
	if x == 0 {
		p += t.c
	}
	return p
}
func (t targeted) LogPMF(x int) float64 { return math.Log(t.PMF(x)) }
