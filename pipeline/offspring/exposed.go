package offspring

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"gonum.org/v1/gonum/mathext"
)

// DefaultShareFloor is the smallest observed share F a case needs to enter the
// truncation-aware likelihood. A case whose infectees are almost all still to come carries
// almost no information on R or k, and its count rests wholly on the tail of the fitted
// serial interval and reporting delay, where they are least certain (common practice: leave
// such cases out and say how many).
const DefaultShareFloor = 0.1

// Exposed is an offspring table in which each case has had only a share of its infectees
// observed: Counts[i] cases each have Values[i] observed infectees and an observed share
// Shares[i] ∈ (0, 1] (the probability that one of its infectees is already in the list by
// the analysis date). Entries are sorted by value, then share; a pair appears once.
//
// Truncation-aware likelihood. If the offspring count Z of a case is negative binomial
// (R, k), i.e. Z | ν ~ Poisson(ν) with ν ~ Gamma(shape k, mean R), and each infectee is
// observed independently with probability F, the observed count is Poisson(Fν) given ν
// (thinning a Poisson keeps it Poisson), and Fν ~ Gamma(shape k, mean RF): the observed count
// is negative binomial with mean RF and the same k. That a p-thinned mixed Poisson
// distribution is the mixed Poisson with the mixing variable scaled by p is a standard
// property [Karlis & Xekalaki 2005, "Mixed Poisson distributions", Int Stat Rev 73:35;
// Grandell 1997, Mixed Poisson Processes, ch. 2; both as recalled from memory]. The
// likelihood is
//
//	log L(R, k) = Σ_i c_i [log Γ(x_i + k) − log Γ(k) − log x_i! − k log(1 + μ_i/k) + x_i log(μ_i/(k + μ_i))],  μ_i = R·F_i,
//
// which is the negative binomial regression with offset log F_i and intercept log R (the
// model of R MASS glm.nb, against which the fit is checked). With every F_i = 1 it is
// FitNegBin's likelihood.
type Exposed struct {
	Values []int
	Shares []float64
	Counts []int
}

// NewExposed groups per-case offspring counts and observed shares into an Exposed table.
// Cases whose share is below floor are left out; dropped counts them. A count below 0 or a
// share that is not a number in (0, 1] is an error naming the case's position.
func NewExposed(values []int, shares []float64, floor float64) (e Exposed, dropped int, err error) {
	if len(values) != len(shares) {
		return Exposed{}, 0, fmt.Errorf("exposed table: %d counts but %d shares", len(values), len(shares))
	}
	type key struct {
		x int
		f float64
	}
	m := map[key]int{}
	for i, x := range values {
		f := shares[i]
		switch {
		case x < 0:
			return Exposed{}, 0, fmt.Errorf("exposed table: case %d has %d offspring; counts are ≥ 0", i+1, x)
		case !(f > 0 && f <= 1):
			return Exposed{}, 0, fmt.Errorf("exposed table: case %d has observed share %v; shares are in (0, 1]", i+1, f)
		case f < floor:
			dropped++
			continue
		}
		m[key{x, f}]++
	}
	keys := make([]key, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(i, j int) bool {
		if keys[i].x != keys[j].x {
			return keys[i].x < keys[j].x
		}
		return keys[i].f < keys[j].f
	})
	for _, k := range keys {
		e.Values = append(e.Values, k.x)
		e.Shares = append(e.Shares, k.f)
		e.Counts = append(e.Counts, m[k])
	}
	return e, dropped, nil
}

// FullyObserved is the Exposed table of a frequency table whose cases were all observed in
// full (F = 1).
func FullyObserved(t FreqTable) Exposed {
	e := Exposed{Values: append([]int(nil), t.Values...), Counts: append([]int(nil), t.Counts...)}
	e.Shares = make([]float64, len(t.Values))
	for i := range e.Shares {
		e.Shares[i] = 1
	}
	return e
}

// N is the number of cases.
func (e Exposed) N() int {
	n := 0
	for _, c := range e.Counts {
		n += c
	}
	return n
}

// Table is the frequency table of the observed counts, shares ignored.
func (e Exposed) Table() FreqTable {
	m := map[int]int{}
	for i, x := range e.Values {
		m[x] += e.Counts[i]
	}
	return FromMap(m)
}

// sums returns Σ c·x and Σ c·F.
func (e Exposed) sums() (sx, sf float64) {
	for i, x := range e.Values {
		sx += float64(e.Counts[i]) * float64(x)
		sf += float64(e.Counts[i]) * e.Shares[i]
	}
	return sx, sf
}

func (e Exposed) check() error {
	if len(e.Values) != len(e.Shares) || len(e.Values) != len(e.Counts) {
		return fmt.Errorf("exposed table: %d values, %d shares, %d counts", len(e.Values), len(e.Shares), len(e.Counts))
	}
	n := 0
	for i, x := range e.Values {
		if x < 0 || e.Counts[i] < 0 || !(e.Shares[i] > 0 && e.Shares[i] <= 1) {
			return fmt.Errorf("exposed table: entry %d (%d cases, %d offspring, share %v) is out of range", i+1, e.Counts[i], x, e.Shares[i])
		}
		n += e.Counts[i]
	}
	if n < 2 {
		return fmt.Errorf("exposed table has %d case(s); at least 2 are needed to fit a model", n)
	}
	return nil
}

// logLik is log L(R, k) of the Exposed doc comment; k = +Inf is the Poisson limit
// Σ c [x log μ − μ − log x!].
func (e Exposed) logLik(R, k float64) float64 {
	var s numeric.Sum
	for i, x := range e.Values {
		c, fx := float64(e.Counts[i]), float64(x)
		mu := R * e.Shares[i]
		lf, _ := math.Lgamma(fx + 1)
		var l float64
		switch {
		case mu == 0:
			if x > 0 {
				return math.Inf(-1)
			}
			continue
		case math.IsInf(k, 1):
			l = fx*math.Log(mu) - mu - lf
		default:
			l = numeric.LogPochhammer(k, fx) - lf - k*math.Log1p(mu/k)
			if x > 0 {
				l += fx * (math.Log(mu) - math.Log(k+mu))
			}
		}
		s.Add(c * l)
	}
	return s.Value()
}

// rHat is the maximum-likelihood R for fixed k: the root in u = log R of
// g(u) = ∂ log L/∂ log R = Σ c·k(x − μ)/(k + μ), which falls as R grows (the log-likelihood is
// concave in log R, g'(u) = −Σ c·kμ(x + k)/(k + μ)² < 0), so the root is unique. It is found by
// Newton's method from log(Σx/ΣF), the root for k = +Inf, falling back to a bracketed Brent
// search when a step fails to shrink |g|. For k = +Inf it is Σ c x / Σ c F.
func (e Exposed) rHat(k float64) float64 {
	sx, sf := e.sums()
	r0 := sx / sf
	if sx == 0 || math.IsInf(k, 1) {
		return r0
	}
	score := func(u float64) (g, dg float64) {
		R := math.Exp(u)
		for i, x := range e.Values {
			c, mu := float64(e.Counts[i]), R*e.Shares[i]
			km := k + mu
			g += c * k * (float64(x) - mu) / km
			dg -= c * k * mu * (float64(x) + k) / (km * km)
		}
		return g, dg
	}
	u := math.Log(r0)
	g, dg := score(u)
	for range 50 {
		if g == 0 || !(dg < 0) {
			break
		}
		step := -g / dg
		if math.Abs(step) < 1e-12 {
			return math.Exp(u + step) // converged: the next step is below rounding of the score
		}
		g1, dg1 := score(u + step)
		if !(math.Abs(g1) < math.Abs(g)) {
			break
		}
		u, g, dg = u+step, g1, dg1
		if math.Abs(step) < 1e-14*math.Max(1, math.Abs(u)) {
			return math.Exp(u)
		}
	}
	if g == 0 {
		return math.Exp(u)
	}
	// Brent on a bracket found by stepping from u by factors of e until the score changes sign.
	gs := func(v float64) float64 { g, _ := score(v); return g }
	lo, hi := u, u
	if g > 0 {
		for gs(hi) > 0 {
			lo, hi = hi, hi+1
		}
	} else {
		for gs(lo) < 0 {
			hi, lo = lo, lo-1
		}
	}
	v, err := numeric.Brent(gs, lo, hi, 1e-14, 200)
	if err != nil {
		return math.NaN()
	}
	return math.Exp(v)
}

// kScore is k²·∂ log L/∂k at (R, k), written without cancellation of large terms:
// with y = μ/k and A_x = Σ_{j<x} j/(k + j) (so ψ(x + k) − ψ(k) = x/k − A_x/k, Abramowitz &
// Stegun 6.3.6),
//
//	k²·∂ log L/∂k = Σ c [k²(y − log(1 + y)) + kμ(x − μ)/(k + μ) − k·A_x],
//
// whose limit as k → ∞ is ½ Σ c [x − (x − μ)²].
func (e Exposed) kScore(R, k float64) float64 {
	running := useRunningSums(e.Values)
	pk := 0.0
	if !running {
		pk = mathext.Digamma(k)
	}
	var s numeric.Sum
	run, j := 0.0, 0
	for i, x := range e.Values {
		c, fx := float64(e.Counts[i]), float64(x)
		mu := R * e.Shares[i]
		var a float64
		if running {
			for ; j < x; j++ {
				fj := float64(j)
				run += fj / (k + fj)
			}
			a = run
		} else if x > 0 {
			a = fx - k*(mathext.Digamma(fx+k)-pk)
		}
		s.Add(c * (k*k*xMinusLog1p(mu/k) + k*mu*(fx-mu)/(k+mu) - k*a))
	}
	return s.Value()
}

// kScoreLimit is the limit of kScore as k → ∞.
func (e Exposed) kScoreLimit(R float64) float64 {
	s := 0.0
	for i, x := range e.Values {
		d := float64(x) - R*e.Shares[i]
		s += float64(e.Counts[i]) * (float64(x) - d*d)
	}
	return s / 2
}

// bestK maximises log L over k with R = rOf(k) (a fixed R, or the profile R̂(k)): the root of
// kScore found by stepping outwards on log k from k = 1 by factors of e² and then Brent's
// method. finite is false when the score is still positive at kMax or its limit at k = ∞ is
// ≥ 0 (no finite maximiser: the Poisson limit).
func (e Exposed) bestK(rOf func(k float64) float64) (k float64, finite bool, err error) {
	if e.kScoreLimit(rOf(math.Inf(1))) >= 0 {
		return math.Inf(1), false, nil
	}
	g := func(u float64) float64 { k := math.Exp(u); return e.kScore(rOf(k), k) }
	lo, hi := 0.0, 0.0
	glo := g(0)
	ghi := glo
	switch {
	case glo == 0:
		return 1, true, nil
	case glo > 0:
		for ghi > 0 {
			lo, glo = hi, ghi
			if hi >= math.Log(kMax) {
				return math.Inf(1), false, nil
			}
			hi = math.Min(hi+2, math.Log(kMax))
			ghi = g(hi)
		}
	default:
		for glo < 0 {
			hi, ghi = lo, glo
			if lo <= math.Log(kMin) {
				return 0, false, fmt.Errorf("truncation-aware fit: no root of the score for k ≥ %g", kMin)
			}
			lo = math.Max(lo-2, math.Log(kMin))
			glo = g(lo)
		}
	}
	u, err := numeric.Brent(g, lo, hi, 1e-13, 200)
	if err != nil {
		return 0, false, fmt.Errorf("truncation-aware fit: %w", err)
	}
	return math.Exp(u), true, nil
}

// info is the 2×2 observed information in (R, k) at (R, k) finite:
//
//	I_RR = Σ c [x/R² − (x + k)F²/(k + μ)²],   I_Rk = −Σ c F(x − μ)/(k + μ)²,
//	I_kk = Σ c [ψ'(k) − ψ'(x + k) − 1/k + 1/(k + μ) + (μ − x)/(k + μ)²],
//
// with ψ'(k) − ψ'(x + k) = Σ_{j<x} 1/(k + j)² (the derivatives of log L above).
func (e Exposed) info(R, k float64) (rr, rk, kk float64) {
	for i, x := range e.Values {
		c, fx, F := float64(e.Counts[i]), float64(x), e.Shares[i]
		mu := R * F
		km := k + mu
		rr += c * (fx/(R*R) - (fx+k)*F*F/(km*km))
		rk -= c * F * (fx - mu) / (km * km)
		tri := 0.0
		if x < 4096 {
			for j := 0; j < x; j++ {
				d := k + float64(j)
				tri += 1 / (d * d)
			}
		} else {
			tri = mathext.Zeta(2, k) - mathext.Zeta(2, fx+k)
		}
		kk += c * (tri - 1/k + 1/km + (mu-fx)/(km*km))
	}
	return rr, rk, kk
}

// FitExposed fits family f (Poisson, geometric or negative binomial) to the Exposed table by
// maximum likelihood: the Poisson has R̂ = Σ c x / Σ c F; the geometric is the negative
// binomial with k = 1 and R̂(1) its root; the negative binomial maximises the profile
// log L(R̂(k), k) over k (bestK), the Poisson limit when no finite k̂ exists, with AIC counting
// two parameters as FitNegBin does. Standard errors come from the observed information.
func FitExposed(e Exposed, f Family) (ModelFit, error) {
	if err := e.check(); err != nil {
		return ModelFit{}, err
	}
	sx, sf := e.sums()
	switch f.(type) {
	case PoissonFamily:
		R := sx / sf
		return newFit(f, Poisson{R: R}, e.logLik(R, math.Inf(1)), Params{R}, []float64{math.Sqrt(R / sf)}), nil
	case GeometricFamily:
		R := e.rHat(1)
		rr, _, _ := e.info(R, 1)
		return newFit(f, Geometric{R: R}, e.logLik(R, 1), Params{R}, []float64{sePos(rr)}), nil
	case NegBinFamily:
		k, finite, err := e.bestK(e.rHat)
		if err != nil {
			return ModelFit{}, err
		}
		if !finite {
			R := sx / sf
			return newFit(f, Poisson{R: R}, e.logLik(R, math.Inf(1)), Params{R, math.Inf(1)},
				[]float64{math.Sqrt(R / sf), math.NaN()}), nil
		}
		R := e.rHat(k)
		se := []float64{math.NaN(), math.NaN()}
		rr, rk, kk := e.info(R, k)
		if det := rr*kk - rk*rk; rr > 0 && kk > 0 && det > 0 && !math.IsInf(det, 0) {
			se[0], se[1] = math.Sqrt(kk/det), math.Sqrt(rr/det)
		} else {
			se[0] = sePos(rr)
		}
		return newFit(f, NegBin{R: R, K: k}, e.logLik(R, k), Params{R, k}, se), nil
	}
	return ModelFit{}, fmt.Errorf("truncation-aware fit: family %q is not supported", f.Name())
}

func sePos(info float64) float64 {
	if info > 0 {
		return 1 / math.Sqrt(info)
	}
	return math.NaN()
}

// FitAllExposed is FitAll for an Exposed table: each family fitted by FitExposed, the one
// with the smallest AIC named (the earlier on a tie).
func FitAllExposed(e Exposed, families ...Family) (fits []ModelFit, best string, err error) {
	return fitAll(families, func(f Family) (ModelFit, error) { return FitExposed(e, f) })
}

// ProfileInterval is a likelihood-ratio (profile-likelihood) confidence interval.
// An infinite upper bound means the data are compatible with arbitrarily large values (for
// k: with the Poisson limit); a lower bound of 0 that the likelihood does not fall far enough
// as the parameter goes to 0.
type ProfileInterval struct {
	Estimate float64
	Bounds   [2]float64
}

// ProfileIntervals are the profile-likelihood intervals for R and k of the negative
// binomial at the given level: the set of values θ with 2(log L̂ − max_{other} log L(θ, ·)) ≤
// χ²₁(level), the inversion of the likelihood-ratio test [Venzon & Moolgavkar 1988, Appl Stat
// 37:87; Pawitan 2001, In All Likelihood, §2.9 and ch. 3; both as recalled from memory]. Each
// bound is bracketed by stepping outwards from the estimate on the log scale by factors of e
// until the deviance exceeds the threshold, then located by Brent's method; a bound not
// bracketed within a factor of 10¹² (and, for k, beyond kMax or when the Poisson limit
// itself is inside) is reported as 0 or +Inf.
func ProfileIntervals(e Exposed, level float64) (r, k ProfileInterval, err error) {
	if !(level > 0 && level < 1) {
		return r, k, fmt.Errorf("profile interval: level %v must be in (0, 1)", level)
	}
	fit, err := FitExposed(e, NegBinFamily{})
	if err != nil {
		return r, k, err
	}
	z := stdNormal.Quantile((1 + level) / 2)
	q := z * z
	best := fit.LogLik
	rh, kh := fit.Params[ParamR], fit.Params[ParamK]
	r.Estimate, k.Estimate = rh, kh

	// Profile over k at fixed R.
	devR := func(R float64) float64 {
		kk, _, err := e.bestK(func(float64) float64 { return R })
		if err != nil {
			return math.NaN()
		}
		return 2 * (best - e.logLik(R, kk))
	}
	// Profile over R at fixed k.
	devK := func(kk float64) float64 { return 2 * (best - e.logLik(e.rHat(kk), kk)) }

	if rh == 0 {
		r.Bounds = [2]float64{0, math.Inf(1)} // no offspring at all: the likelihood is flat in R as k → 0
	} else {
		lo, err1 := profileBound(func(u float64) float64 { return devR(math.Exp(u)) - q }, math.Log(rh), -1, math.Log(rh)-math.Log(1e12))
		hi, err2 := profileBound(func(u float64) float64 { return devR(math.Exp(u)) - q }, math.Log(rh), 1, math.Log(rh)+math.Log(1e12))
		if err = errors.Join(err1, err2); err != nil {
			return r, k, err
		}
		r.Bounds = [2]float64{expBound(lo, 0), expBound(hi, math.Inf(1))}
	}

	if math.IsInf(kh, 1) {
		k.Bounds[1] = math.Inf(1)
		lo, err := profileBound(func(u float64) float64 { return devK(math.Exp(u)) - q }, math.Log(kMax), -1, math.Log(kMin))
		if err != nil {
			return r, k, err
		}
		k.Bounds[0] = expBound(lo, 0)
		return r, k, nil
	}
	lo, err1 := profileBound(func(u float64) float64 { return devK(math.Exp(u)) - q }, math.Log(kh), -1, math.Log(kMin))
	k.Bounds = [2]float64{expBound(lo, 0), math.Inf(1)}
	if devK(math.Inf(1)) > q {
		hi, err2 := profileBound(func(u float64) float64 { return devK(math.Exp(u)) - q }, math.Log(kh), 1, math.Log(kMax))
		err1 = errors.Join(err1, err2)
		k.Bounds[1] = expBound(hi, math.Inf(1))
	}
	return r, k, err1
}

// profileBound finds where g (the deviance minus the threshold, negative at the start u0)
// turns positive, stepping from u0 by step until g > 0 or the limit is passed (NaN returned:
// no bound within the range), then by Brent's method.
func profileBound(g func(u float64) float64, u0, step, limit float64) (float64, error) {
	a := u0
	for {
		b := a + step
		if (step > 0 && b > limit) || (step < 0 && b < limit) {
			b = limit
		}
		gb := g(b)
		if math.IsNaN(gb) {
			return math.NaN(), fmt.Errorf("profile interval: the profile likelihood is undefined at %g", math.Exp(b))
		}
		if gb > 0 {
			u, err := numeric.Brent(g, a, b, 1e-10, 200)
			if err != nil {
				return math.NaN(), fmt.Errorf("profile interval: %w", err)
			}
			return u, nil
		}
		if b == limit {
			return math.NaN(), nil
		}
		a = b
	}
}

// expBound is e^u, or open when u is NaN (no bound found).
func expBound(u, open float64) float64 {
	if math.IsNaN(u) {
		return open
	}
	return math.Exp(u)
}
