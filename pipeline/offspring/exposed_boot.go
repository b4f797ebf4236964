package offspring

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
)

// fitExposedParams is FitExposed's parameter vector alone, for bootstrap replicates: entries
// NaN when the fit fails (too few cases in a replicate), k = +Inf in the Poisson limit.
func fitExposedParams(e Exposed, fam Family) Params {
	m, err := FitExposed(e, fam)
	if err != nil {
		p := make(Params, len(fam.Params()))
		for i := range p {
			p[i] = math.NaN()
		}
		return p
	}
	return m.Params
}

// withCounts is e with its counts replaced.
func (e Exposed) withCounts(counts []int) Exposed {
	return Exposed{Values: e.Values, Shares: e.Shares, Counts: counts}
}

// exposedCasePlan resamples the cases of an Exposed table (a multinomial draw over its
// (count, share) groups) and refits the truncation-aware likelihood.
type exposedCasePlan struct {
	e    Exposed
	n    int
	cond []float64
	fam  Family
}

func newExposedCasePlan(e Exposed, fam Family) (*exposedCasePlan, error) {
	if err := e.check(); err != nil {
		return nil, fmt.Errorf("bootstrap: %w", err)
	}
	return &exposedCasePlan{e: e, n: e.N(), cond: numeric.ConditionalShares(e.Counts), fam: fam}, nil
}

func (p *exposedCasePlan) method() string    { return CaseResampling }
func (p *exposedCasePlan) estimate() Params  { return fitExposedParams(p.e, p.fam) }
func (p *exposedCasePlan) newScratch() []int { return make([]int, len(p.e.Values)) }
func (p *exposedCasePlan) replicate(rng *rand.Rand, counts []int) Params {
	numeric.Multinomial(rng, p.n, p.cond, counts)
	return fitExposedParams(p.e.withCounts(counts), p.fam)
}

func (p *exposedCasePlan) jackknife() ([]Params, []float64, int) {
	return jackknifeCounts(p.e.Counts, p.n, func(counts []int) Params { return fitExposedParams(p.e.withCounts(counts), p.fam) })
}

// exposedClusterPlan resamples whole clusters of an Exposed table.
type exposedClusterPlan struct {
	union       Exposed // every (count, share) group of every cluster
	clusterRows         // rows in union
	fam         Family
}

func newExposedClusterPlan(clusters []Exposed, fam Family) (*exposedClusterPlan, error) {
	var vs []int
	var fs []float64
	for ci, c := range clusters {
		if len(c.Values) != len(c.Shares) || len(c.Values) != len(c.Counts) {
			return nil, fmt.Errorf("bootstrap: cluster %d is malformed", ci+1)
		}
		size := 0
		for j, x := range c.Values {
			for range c.Counts[j] {
				vs, fs = append(vs, x), append(fs, c.Shares[j])
			}
			size += c.Counts[j]
		}
		if size == 0 {
			return nil, fmt.Errorf("bootstrap: cluster %d has no cases", ci+1)
		}
	}
	union, _, err := NewExposed(vs, fs, 0)
	if err != nil {
		return nil, fmt.Errorf("bootstrap: %w", err)
	}
	if err := union.check(); err != nil {
		return nil, fmt.Errorf("bootstrap: %w", err)
	}
	type key struct {
		x int
		f float64
	}
	pos := map[key]int{}
	for i := range union.Values {
		pos[key{union.Values[i], union.Shares[i]}] = i
	}
	p := &exposedClusterPlan{union: union, fam: fam}
	for _, c := range clusters {
		ix := make([]int, len(c.Values))
		for j := range c.Values {
			ix[j] = pos[key{c.Values[j], c.Shares[j]}]
		}
		p.idx = append(p.idx, ix)
		p.counts = append(p.counts, c.Counts)
	}
	return p, nil
}

func (p *exposedClusterPlan) method() string    { return ClusterResampling }
func (p *exposedClusterPlan) estimate() Params  { return fitExposedParams(p.union, p.fam) }
func (p *exposedClusterPlan) newScratch() []int { return make([]int, len(p.union.Values)) }
func (p *exposedClusterPlan) replicate(rng *rand.Rand, counts []int) Params {
	p.resample(rng, counts)
	return fitExposedParams(p.union.withCounts(counts), p.fam)
}

func (p *exposedClusterPlan) jackknife() ([]Params, []float64, int) {
	return p.clusterRows.jackknife(p.union.Counts, func(counts []int) Params {
		return fitExposedParams(p.union.withCounts(counts), p.fam)
	})
}

// ExpectedCounts is, for x = 0 … maxX, the number of cases expected to show x observed
// offspring under the fitted family with parameters p: Σ_i c_i·P(X = x; mean R·F_i), each case
// with the model's mean scaled by its share (the thinned distribution of the Exposed doc).
func ExpectedCounts(e Exposed, fam Family, p Params, maxX int) []float64 {
	out := make([]float64, maxX+1)
	for i, f := range e.Shares {
		q := append(Params(nil), p...)
		q[ParamR] *= f
		d := fam.Distribution(q)
		for x := range out {
			out[x] += float64(e.Counts[i]) * d.PMF(x)
		}
	}
	return out
}
