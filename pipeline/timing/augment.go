package timing

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sort"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

// AugmentOptions set the data-augmentation sampler of Infectors.Augment.
type AugmentOptions struct {
	// Recorded is each case's number of recorded infectees (one entry per case).
	Recorded []int32
	// Elapsed is F_i, the share of case i's infectees expected in the list by the analysis
	// date (serial interval and reporting delay); nil means 1 for every case.
	Elapsed []float64
	// Ascertainment ρ in (0, 1] is the share of infectors that reach the line list; below 1
	// an unlinked case may have an infector outside the list (see Augment). 0 means 1.
	Ascertainment float64
	// BurnIn is the number of sweeps discarded after the Wallinga–Teunis start (0:
	// DefaultBurnIn), Thin the sweeps between kept trees (0: 1).
	BurnIn, Thin int
	// FixedR and FixedK, when both positive, hold R and k fixed (step (c) skipped).
	FixedR, FixedK float64
}

// DefaultBurnIn is the sweeps discarded before the first kept tree. On a simulated outbreak
// of about 2,500 cases with 20% of links missing (TestAugmentForgetsItsStart), the trace of
// k enters the kept chain's range within 20 sweeps from the Wallinga–Teunis start and from
// starts at k = 50 and k = 0.02, and the three agree after the burn-in; 200 leaves a
// tenfold margin at small cost. Each run checks its kept trace again (Geweke).
const DefaultBurnIn = 200

// mhSteps is the random-walk Metropolis steps on (log R, log k) per sweep.
const mhSteps = 4

// Weakly informative priors on log R and log k: normal, mean 0, sd 3 (common practice; they
// keep the posterior proper when every count is 0 or the data are Poisson-like, and are flat
// to within 1% over R and k in [0.05, 20]).
const priorSD = 3

// Chain is one data-augmentation chain over the missing infectors [Tanner & Wong 1987,
// J Am Stat Assoc 82:528]. The model: case i has an individual reproduction number
// ν_i ~ Gamma(shape k, rate k/R) [Lloyd-Smith et al. 2005, Nature 438:355] and infects
// listed cases as a Poisson process of intensity ν_i·f(s) at lag s, f the serial
// interval's daily mass, so its infectees listed by the analysis date are Poisson(ν_i F_i).
// The likelihood of a completed tree is Π_i ν_i^{o_i} e^{−ν_i F_i} · Π_j f(t_j − t_{a_j}).
// Each sweep draws, in turn,
//
//	(a) ν_i | tree, R, k ~ Gamma(k + o_i, rate k/R + F_i)   (gamma–Poisson conjugacy);
//	(b) a_j | ν ∝ ν_i·f(t_j − t_i) over j's candidates (Infectors), independently over j,
//	    and, when ρ < 1, "outside the list" with weight w₀_j = R̄·(1 − ρ)/ρ·Σ_i f(t_j − t_i);
//	(c) (R, k) | tree by random-walk Metropolis on the negative binomial likelihood with
//	    ν integrated out, Π_i NB(o_i; mean R·F_i, k), under the priors above.
//
// (c) draws from p(R, k | tree) and (a) from p(ν | R, k, tree), so (c)+(a) is one draw
// from p(R, k, ν | tree) and the sweep is a blocked Gibbs sampler. w₀_j: if the infectors
// missing from the list are (1 − ρ)/ρ for every listed one, with the same onset times and,
// nothing being known of them, ν at its prior mean R, their summed intensity at t_j is
// (1 − ρ)/ρ · R · Σ_i f(t_j − t_i) over j's listed candidates. R̄ is the starting R (or the
// fixed one), held for the whole chain so that w₀ is a constant of the model and (c) stays
// the posterior of the listed cases' R and k alone. A case drawn to the outside adds no
// offspring to any listed case. The first tree is a Wallinga–Teunis draw
// (Infectors.Sample), whose pooled offspring give the starting R and k by moments.
type Chain struct {
	x        *Infectors
	rng      *rand.Rand
	opt      AugmentOptions
	elapsed  []float64
	outside  float64 // (1 − ρ)/ρ·R̄
	assign   []int   // current a_j (−1: none or outside)
	counts   []int32 // current o_i
	nu       []float64
	prefix   []float64 // prefix sums of ν over x.order, per cell
	cellNu   []float64
	r, k     float64
	stepR    float64
	stepK    float64
	accepted int
	tried    int
	sweeps   int
	// groups of cases with one F value, for the likelihood of (c)
	fValues []float64
	fGroup  []int32
	hist    [][]int // hist[g][o]: cases of F group g with o offspring
}

// Augment starts a chain: the Wallinga–Teunis draw, then BurnIn sweeps.
func (x *Infectors) Augment(rng *rand.Rand, opt AugmentOptions) (*Chain, error) {
	if len(opt.Recorded) != x.n {
		return nil, fmt.Errorf("augmentation: %d recorded counts for %d cases", len(opt.Recorded), x.n)
	}
	if opt.Elapsed != nil && len(opt.Elapsed) != x.n {
		return nil, fmt.Errorf("augmentation: %d elapsed shares for %d cases", len(opt.Elapsed), x.n)
	}
	if opt.Ascertainment == 0 {
		opt.Ascertainment = 1
	}
	if !(opt.Ascertainment > 0 && opt.Ascertainment <= 1) {
		return nil, fmt.Errorf("augmentation: ascertainment must be in (0, 1], got %v", opt.Ascertainment)
	}
	if opt.BurnIn < 0 || opt.Thin < 0 {
		return nil, errors.New("augmentation: burn-in and thinning cannot be negative")
	}
	if opt.BurnIn == 0 {
		opt.BurnIn = DefaultBurnIn
	}
	if opt.Thin == 0 {
		opt.Thin = 1
	}
	c := &Chain{x: x, rng: rng, opt: opt, outside: (1 - opt.Ascertainment) / opt.Ascertainment,
		nu: make([]float64, x.n), prefix: make([]float64, x.n), cellNu: make([]float64, len(x.cells)),
		counts: make([]int32, x.n), stepR: 0.1, stepK: 0.3}
	c.elapsed = make([]float64, x.n)
	for i := range c.elapsed {
		f := 1.0
		if opt.Elapsed != nil {
			f = opt.Elapsed[i]
		}
		if !(f >= 0 && f <= 1) {
			return nil, fmt.Errorf("augmentation: elapsed share %v of case %d is not in [0, 1]", f, i)
		}
		c.elapsed[i] = f
	}
	c.groupByElapsed()
	c.assign = x.Sample(rng, nil)
	c.recount()
	if opt.FixedR > 0 && opt.FixedK > 0 {
		c.r, c.k = opt.FixedR, opt.FixedK
	} else {
		c.r, c.k = c.momentStart()
	}
	c.outside *= c.r
	for s := 0; s < opt.BurnIn; s++ {
		c.sweep(true)
	}
	return c, nil
}

// groupByElapsed indexes the distinct F values, so (c) sums the likelihood per (F, o).
func (c *Chain) groupByElapsed() {
	idx := map[float64]int32{}
	c.fGroup = make([]int32, c.x.n)
	for i, f := range c.elapsed {
		g, ok := idx[f]
		if !ok {
			g = int32(len(c.fValues))
			idx[f] = g
			c.fValues = append(c.fValues, f)
		}
		c.fGroup[i] = g
	}
	c.hist = make([][]int, len(c.fValues))
}

func (c *Chain) recount() {
	copy(c.counts, c.opt.Recorded)
	for _, i := range c.assign {
		if i >= 0 {
			c.counts[i]++
		}
	}
}

// momentStart is R and k by moments of the offspring counts, F-weighted for R: R̂ = Σo/ΣF,
// k̂ = R̂²/(s² − R̂) over the cases with F = 1, held in [0.05, 50] (common practice for a
// starting value).
func (c *Chain) momentStart() (float64, float64) {
	var so, sf, n, s2 float64
	for i, o := range c.counts {
		so += float64(o)
		sf += c.elapsed[i]
	}
	r := 0.5
	if so > 0 && sf > 0 {
		r = so / sf
	}
	for i, o := range c.counts {
		if c.elapsed[i] == 1 {
			d := float64(o) - r
			s2 += d * d
			n++
		}
	}
	k := 50.0
	if n > 1 {
		if v := s2 / (n - 1); v > r {
			k = r * r / (v - r)
		}
	}
	return r, math.Min(math.Max(k, 0.05), 50)
}

// Next runs Thin sweeps and returns the completed tree: dst[j] is case j's infector, −1
// when j has none in the list (recorded links are not repeated: −1 for them too).
func (c *Chain) Next(dst []int) []int {
	for s := 0; s < c.opt.Thin; s++ {
		c.sweep(false)
	}
	return append(dst[:0], c.assign...)
}

// OutsideWeight is (1 − ρ)/ρ·R̄: w₀_j divided by Σ_i f(t_j − t_i).
func (c *Chain) OutsideWeight() float64 { return c.outside }

// R and K are the chain's current R and k.
func (c *Chain) R() float64 { return c.r }
func (c *Chain) K() float64 { return c.k }

// Acceptance is the share of Metropolis proposals of (c) accepted after the burn-in.
func (c *Chain) Acceptance() float64 {
	if c.tried == 0 {
		return math.NaN()
	}
	return float64(c.accepted) / float64(c.tried)
}

func (c *Chain) sweep(burning bool) {
	x := c.x
	gnu := offspring.GammaNu{Shape: c.k}
	// (a) ν given the tree.
	for i := range c.nu {
		c.nu[i] = gnu.PosteriorSample(c.rng, c.r, float64(c.counts[i]), c.elapsed[i])
	}
	for e, ce := range x.cells {
		s := 0.0
		for q := ce.start; q < ce.start+ce.count; q++ {
			s += c.nu[x.order[q]]
			c.prefix[q] = s
		}
		c.cellNu[e] = s
	}
	// (b) infectors given ν.
	var w []float64
	for j := range c.assign {
		c.assign[j] = -1
		if !(x.z[j] > 0) {
			continue
		}
		e := x.caseCell[j]
		ce := x.cells[e]
		pos := x.casePos[j]
		w = w[:0]
		total := 0.0
		if pos > 0 {
			total += x.f[0] * c.prefix[ce.start+pos-1]
		}
		w = append(w, total)
		lo, hi := x.predStart[e], x.predStart[e+1]
		for q := lo; q < hi; q++ {
			p := x.predCells[q]
			total += x.f[int64(ce.day)-int64(x.cells[p].day)] * c.cellNu[p]
			w = append(w, total)
		}
		out := c.outside * x.z[j]
		if !(total+out > 0) {
			continue
		}
		u := c.rng.Float64() * (total + out)
		if u >= total {
			continue // outside the list
		}
		q := sort.SearchFloat64s(w, u)
		for q < len(w) && w[q] <= u {
			q++
		}
		q = min(q, len(w)-1)
		for q > 0 && w[q] == w[q-1] { // rounding at the end onto a zero-mass day
			q--
		}
		var start, end int32 // the cell's cases in x.order, up to the last one eligible
		var mass float64
		if q == 0 {
			start, end = ce.start, ce.start+pos
			mass = c.prefix[end-1]
		} else {
			p := x.cells[x.predCells[lo+int32(q)-1]]
			start, end = p.start, p.start+p.count
			mass = c.prefix[end-1]
		}
		lower := 0.0
		if q > 0 {
			lower = w[q-1]
		}
		v := (u - lower) / (w[q] - lower) * mass
		pre := c.prefix[start:end] // each cell's prefix sums start afresh
		k := sort.SearchFloat64s(pre, v)
		for k < len(pre) && pre[k] <= v {
			k++
		}
		dstCase := x.order[start+int32(min(k, len(pre)-1))]
		c.assign[j] = int(dstCase)
	}
	c.recount()
	// (c) R and k given the tree.
	if c.opt.FixedR > 0 && c.opt.FixedK > 0 {
		return
	}
	for g := range c.hist {
		clear(c.hist[g])
	}
	for i, o := range c.counts {
		h := c.hist[c.fGroup[i]]
		for int(o) >= len(h) {
			h = append(h, 0)
		}
		h[o]++
		c.hist[c.fGroup[i]] = h
	}
	cur := c.logPost(c.r, c.k)
	for s := 0; s < mhSteps; s++ {
		r := c.r * math.Exp(c.stepR*c.normal())
		k := c.k * math.Exp(c.stepK*c.normal())
		prop := c.logPost(r, k)
		ok := math.Log(c.rng.Float64()) < prop-cur
		if ok {
			c.r, c.k, cur = r, k, prop
		}
		if burning {
			// Robbins–Monro scaling towards about 30% acceptance during the burn-in only, so
			// the kept chain is a fixed Markov kernel (Roberts & Rosenthal 2009, J Comput
			// Graph Stat 18:349, on adaptation stopped after burn-in).
			a := -0.3
			if ok {
				a = 0.7
			}
			g := 1 / math.Sqrt(float64(c.sweeps+1))
			c.stepR *= math.Exp(a * g * 0.5)
			c.stepK *= math.Exp(a * g * 0.5)
		} else {
			c.tried++
			if ok {
				c.accepted++
			}
		}
	}
	c.sweeps++
}

func (c *Chain) normal() float64 { return c.rng.NormFloat64() }

// logPost is log p(R, k | tree) up to a constant: Σ_i log NB(o_i; R·F_i, k) plus the
// normal priors on log R and log k, the scale the random walk moves on.
func (c *Chain) logPost(r, k float64) float64 {
	if !(r > 0 && k > 0) || math.IsInf(r, 0) || math.IsInf(k, 0) {
		return math.Inf(-1)
	}
	lr, lk := math.Log(r), math.Log(k)
	s := -(lr*lr + lk*lk) / (2 * priorSD * priorSD)
	for g, h := range c.hist {
		f := c.fValues[g]
		if f == 0 {
			continue // no infectee could be listed yet: NB(0; 0, k) = 1
		}
		nb := offspring.NegBin{R: r * f, K: k}
		for o, n := range h {
			if n > 0 {
				s += float64(n) * nb.LogPMF(o)
			}
		}
	}
	if math.IsNaN(s) {
		return math.Inf(-1)
	}
	return s
}

// DailyMassFor is f(t_j − t_i) when i is one of j's candidates, else 0.
func (x *Infectors) DailyMassFor(i, j int) float64 {
	if w := x.Weight(i, j); w > 0 {
		return w * x.z[j]
	}
	return 0
}

// Geweke is the convergence diagnostic of Geweke (1992, in Bayesian Statistics 4, pp.
// 169–193): z = (ā − b̄)/√(S_a/n_a + S_b/n_b) for the first 10% (a) and last 50% (b) of a
// trace, each S/n the variance of the segment's mean estimated by batch means (10 batches;
// Flegal & Jones 2010, Ann Stat 38:1034, for batch means). Near-standard-normal once the
// chain has forgotten its start; NaN for traces shorter than 100 or constant.
func Geweke(trace []float64) float64 {
	n := len(trace)
	if n < 100 {
		return math.NaN()
	}
	ma, va := batchMeans(trace[:n/10])
	mb, vb := batchMeans(trace[n-n/2:])
	if !(va+vb > 0) {
		return math.NaN()
	}
	return (ma - mb) / math.Sqrt(va+vb)
}

// batchMeans returns a segment's mean and the variance of that mean: the sample variance
// of 10 batch means over 10.
func batchMeans(x []float64) (mean, varMean float64) {
	const batches = 10
	size := len(x) / batches
	var m [batches]float64
	for b := range m {
		for _, v := range x[b*size : (b+1)*size] {
			m[b] += v
		}
		m[b] /= float64(size)
		mean += m[b] / batches
	}
	for _, v := range m {
		varMean += (v - mean) * (v - mean)
	}
	return mean, varMean / (batches - 1) / batches
}
