package offspring

import (
	"errors"
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"sort"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/stat/distuv"
)

// Sample is the data a bootstrap resamples: either one frequency table of the offspring
// counts of all cases (case bootstrap), or one frequency table per cluster (transmission
// chain), resampled whole (cluster bootstrap); or the same two for cases whose infectees
// were only partly observed (Exposed, ExposedClusters), refitted by FitExposed. Exactly one
// must be set.
type Sample struct {
	Cases           FreqTable
	Clusters        []FreqTable
	Exposed         *Exposed
	ExposedClusters []Exposed
}

// Resampling methods, as reported in BootstrapResult.Method.
const (
	CaseResampling    = "case"
	ClusterResampling = "cluster"
)

// BootstrapOptions configure Bootstrap.
type BootstrapOptions struct {
	// Replicates is the number of bootstrap replicates B (≥ 1).
	Replicates int
	// Seed fixes every draw: replicate b uses its own PCG stream derived from (Seed, b), so
	// the result does not depend on Workers.
	Seed uint64
	// Workers is the number of goroutines (≤ 0: runtime.GOMAXPROCS(0)).
	Workers int
	// Progress, if set, is called from the calling goroutine as replicates finish, with
	// done ≤ total = Replicates; the last call has done == total.
	Progress func(done, total int)
	// Family is refitted to every replicate; nil means the negative binomial, which nests
	// the Poisson and geometric models.
	Family Family
}

// BootstrapResult holds the family's estimate on the sample, its bootstrap replicates and
// its jackknife values, from which Interval builds percentile and BCa intervals for any
// function of the parameters.
type BootstrapResult struct {
	Method   string
	Seed     uint64
	Family   Family
	Estimate Params
	// Replicates[b] is the fit to replicate b.
	Replicates []Params
	// Jackknife[i] is the fit with one unit (a case or a cluster) of group i left out;
	// JackknifeWeights[i] is the number of units in group i (for the case bootstrap, the
	// number of cases sharing that offspring count). Units is their total.
	Jackknife        []Params
	JackknifeWeights []float64
	Units            int
	// Unbounded counts replicates with an unbounded estimate (an entry +Inf: for the
	// negative binomial, no finite k̂, the Poisson limit).
	Unbounded int
	// FailedFits counts replicates whose fit failed (an entry NaN); expected 0.
	FailedFits int
}

// replicateChunk is the number of replicates a worker claims at a time.
const replicateChunk = 64

// Bootstrap resamples the sample opts.Replicates times and fits (R, k) to each replicate by
// maximum likelihood (R̂ = mean, k̂ as in FitNegBin) [Efron & Tibshirani 1993, An
// Introduction to the Bootstrap, ch. 6].
//
// Case bootstrap: resampling the n cases with replacement gives counts
// (N_1, …, N_d) ~ Multinomial(n; c_1/n, …, c_d/n) over the d distinct offspring values, drawn
// exactly as sequential conditional binomials in O(d) (numeric.Multinomial). Its jackknife leaves out
// one case: one fit per distinct value, with weight c_i.
//
// Cluster bootstrap: the C clusters are drawn C times with replacement and their tables
// summed, so dependence within chains is kept; the jackknife leaves out one cluster at a time.
func Bootstrap(sample Sample, opts BootstrapOptions) (*BootstrapResult, error) {
	if opts.Replicates < 1 {
		return nil, fmt.Errorf("bootstrap: %d replicates requested; at least 1 is needed", opts.Replicates)
	}
	workers := opts.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	fam := opts.Family
	if fam == nil {
		fam = NegBinFamily{}
	}
	var plan resamplePlan
	var err error
	set := 0
	for _, b := range []bool{len(sample.Clusters) > 0, len(sample.Cases.Values) > 0, sample.Exposed != nil, len(sample.ExposedClusters) > 0} {
		set += b2int(b)
	}
	switch {
	case set > 1:
		return nil, errors.New("bootstrap: the sample has more than one of a case table, clusters and partly observed cases; set one")
	case sample.Exposed != nil:
		plan, err = newExposedCasePlan(*sample.Exposed, fam)
	case len(sample.ExposedClusters) > 0:
		plan, err = newExposedClusterPlan(sample.ExposedClusters, fam)
	case len(sample.Clusters) > 0:
		plan, err = newClusterPlan(sample.Clusters, fam)
	default:
		plan, err = newCasePlan(sample.Cases, fam)
	}
	if err != nil {
		return nil, err
	}
	res := &BootstrapResult{Method: plan.method(), Seed: opts.Seed, Family: fam, Estimate: plan.estimate(),
		Replicates: make([]Params, opts.Replicates)}
	res.Jackknife, res.JackknifeWeights, res.Units = plan.jackknife()

	B := opts.Replicates
	var next atomic.Int64
	done := make(chan int, workers)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			pcg := rand.NewPCG(0, 0)
			rng := rand.New(pcg)
			scratch := plan.newScratch()
			for {
				start := int(next.Add(replicateChunk)) - replicateChunk
				if start >= B {
					return
				}
				end := min(start+replicateChunk, B)
				for b := start; b < end; b++ {
					s1, s2 := numeric.StreamSeeds(opts.Seed, b)
					pcg.Seed(s1, s2)
					res.Replicates[b] = plan.replicate(rng, scratch)
				}
				done <- end - start
			}
		}()
	}
	go func() { wg.Wait(); close(done) }()
	finished := 0
	for c := range done {
		finished += c
		if opts.Progress != nil {
			opts.Progress(finished, B)
		}
	}
	res.Unbounded, res.FailedFits = CountUnbounded(res.Replicates)
	return res, nil
}

func b2int(b bool) int {
	if b {
		return 1
	}
	return 0
}

// CountUnbounded counts the parameter vectors with an entry at +Inf and, among the others,
// those with an entry NaN (failed fits).
func CountUnbounded(ps []Params) (unbounded, failed int) {
	for _, p := range ps {
		switch {
		case slices.ContainsFunc(p, func(v float64) bool { return math.IsInf(v, 1) }):
			unbounded++
		case slices.ContainsFunc(p, math.IsNaN):
			failed++
		}
	}
	return unbounded, failed
}

type resamplePlan interface {
	method() string
	estimate() Params
	jackknife() (values []Params, weights []float64, units int)
	newScratch() []int
	replicate(rng *rand.Rand, scratch []int) Params
}

type casePlan struct {
	t    FreqTable
	n    int
	cond []float64
	fam  Family
}

func newCasePlan(t FreqTable, fam Family) (*casePlan, error) {
	if _, _, _, err := checkTable(t); err != nil {
		return nil, fmt.Errorf("bootstrap: %w", err)
	}
	return &casePlan{t: t, n: t.N(), cond: numeric.ConditionalShares(t.Counts), fam: fam}, nil
}

func (p *casePlan) method() string    { return CaseResampling }
func (p *casePlan) estimate() Params  { return p.fam.FitCounts(p.t.Values, p.t.Counts) }
func (p *casePlan) newScratch() []int { return make([]int, len(p.t.Values)) }
func (p *casePlan) replicate(rng *rand.Rand, counts []int) Params {
	numeric.Multinomial(rng, p.n, p.cond, counts)
	return p.fam.FitCounts(p.t.Values, counts)
}

func (p *casePlan) jackknife() ([]Params, []float64, int) {
	return jackknifeCounts(p.t.Counts, p.n, func(counts []int) Params { return p.fam.FitCounts(p.t.Values, counts) })
}

// jackknifeCounts is the delete-one jackknife of a fit over a frequency table's counts: one
// estimate with one case of each observed value left out, weighted by how many cases have
// that value (each leaves out the same estimate), and the number of cases n.
func jackknifeCounts(base []int, n int, fit func(counts []int) Params) ([]Params, []float64, int) {
	counts := append([]int(nil), base...)
	var vals []Params
	var w []float64
	for i, c := range base {
		if c == 0 {
			continue
		}
		counts[i]--
		vals = append(vals, fit(counts))
		w = append(w, float64(c))
		counts[i]++
	}
	return vals, w, n
}

// clusterRows places each cluster's counts in the rows of one table that holds every
// cluster: idx[c][j] is the row of cluster c's j-th count, counts[c][j] that count. The
// plain and the truncation-aware cluster bootstraps resample and leave out clusters
// through it, each refitting the summed rows its own way.
type clusterRows struct {
	idx    [][]int
	counts [][]int
}

// resample sets counts to the summed rows of len(idx) clusters drawn with replacement.
func (r *clusterRows) resample(rng *rand.Rand, counts []int) {
	clear(counts)
	C := len(r.idx)
	for range C {
		c := rng.IntN(C)
		for j, i := range r.idx[c] {
			counts[i] += r.counts[c][j]
		}
	}
}

// jackknife fits the summed rows with each cluster left out in turn; total is the sum of
// every cluster's rows.
func (r *clusterRows) jackknife(total []int, fit func(counts []int) Params) ([]Params, []float64, int) {
	counts := append([]int(nil), total...)
	vals := make([]Params, len(r.idx))
	w := make([]float64, len(r.idx))
	for c := range r.idx {
		for j, i := range r.idx[c] {
			counts[i] -= r.counts[c][j]
		}
		vals[c] = fit(counts) // NaN when the only cluster is left out
		w[c] = 1
		for j, i := range r.idx[c] {
			counts[i] += r.counts[c][j]
		}
	}
	return vals, w, len(r.idx)
}

type clusterPlan struct {
	values []int // union of the clusters' values, ascending
	clusterRows
	total []int // summed table
	fam   Family
}

func newClusterPlan(clusters []FreqTable, fam Family) (*clusterPlan, error) {
	all := map[int]int{}
	for ci, c := range clusters {
		if len(c.Values) != len(c.Counts) {
			return nil, fmt.Errorf("bootstrap: cluster %d has %d values but %d counts", ci+1, len(c.Values), len(c.Counts))
		}
		size := 0
		for j, v := range c.Values {
			if v < 0 || c.Counts[j] < 0 {
				return nil, fmt.Errorf("bootstrap: cluster %d has a negative value or count (%d×%d)", ci+1, c.Counts[j], v)
			}
			size += c.Counts[j]
			all[v] += c.Counts[j]
		}
		if size == 0 {
			return nil, fmt.Errorf("bootstrap: cluster %d has no cases", ci+1)
		}
	}
	total := FromMap(all)
	if _, _, _, err := checkTable(total); err != nil {
		return nil, fmt.Errorf("bootstrap: %w", err)
	}
	pos := make(map[int]int, len(total.Values))
	for i, v := range total.Values {
		pos[v] = i
	}
	p := &clusterPlan{values: total.Values, total: total.Counts, fam: fam}
	for _, c := range clusters {
		ix := make([]int, len(c.Values))
		for j, v := range c.Values {
			ix[j] = pos[v]
		}
		p.idx = append(p.idx, ix)
		p.counts = append(p.counts, c.Counts)
	}
	return p, nil
}

func (p *clusterPlan) method() string    { return ClusterResampling }
func (p *clusterPlan) estimate() Params  { return p.fam.FitCounts(p.values, p.total) }
func (p *clusterPlan) newScratch() []int { return make([]int, len(p.values)) }
func (p *clusterPlan) replicate(rng *rand.Rand, counts []int) Params {
	p.resample(rng, counts)
	return p.fam.FitCounts(p.values, counts)
}

func (p *clusterPlan) jackknife() ([]Params, []float64, int) {
	return p.clusterRows.jackknife(p.total, func(counts []int) Params { return p.fam.FitCounts(p.values, counts) })
}

// Interval is a two-sided bootstrap confidence interval for one statistic.
// An infinite bound means unbounded (for k: compatible with the Poisson limit).
type Interval struct {
	Estimate   float64
	Level      float64
	Percentile [2]float64
	BCa        [2]float64
	// BCaFallback is set when the BCa interval could not be formed (non-finite estimate,
	// bias correction or acceleration); BCa then repeats Percentile and Note says why.
	BCaFallback bool
	Note        string
	// Bias is the BCa bias correction z0, Acceleration its acceleration a.
	Bias, Acceleration float64
	// Dropped counts replicates whose statistic was NaN and were left out.
	Dropped int
}

// Interval computes the percentile and BCa intervals at the given level (e.g. 0.95) for
// stat(parameters), whose value at the estimate is estimate, from the replicates [Efron 1987,
// JASA 82:171; Davison & Hinkley 1997, Bootstrap Methods and their Application, §5.3].
//
// Percentile: the α and 1−α quantiles of the replicate values, α = (1 − level)/2, each the
// (B+1)α-th order statistic, interpolated on the normal-quantile scale between neighbours
// when (B+1)α is not an integer (Davison & Hinkley 1997, eq. 5.8; also R boot 1.3-28's
// norm.inter). +Inf replicate values (k in the Poisson limit) sort above all others, so an
// upper bound falling among them is +Inf (unbounded).
//
// BCa: z0 = Φ⁻¹(#{θ*_b < θ̂}/B), a = Σ w_i L_i³ / (6 (Σ w_i L_i²)^{3/2}) with jackknife
// influence values L_i = (m − 1)(θ̄ − θ_(i)), θ̄ the weighted mean of the m leave-one-out
// values; the endpoints are the percentile quantiles at
// α' = Φ(z0 + (z0 + z_α)/(1 − a(z0 + z_α))). Unlike R's boot.ci, infinite replicates are
// kept (they are genuine "k̂ = ∞" outcomes); when the estimate, z0 or a is not finite (e.g. a
// leave-one-out fit in the Poisson limit) BCa falls back to the percentile interval and
// BCaFallback is set.
func (r *BootstrapResult) Interval(stat func(p Params) float64, estimate float64, level float64) (Interval, error) {
	if stat == nil {
		return Interval{}, errors.New("interval: no statistic given")
	}
	if !(level > 0 && level < 1) {
		return Interval{}, fmt.Errorf("interval: level %v must be in (0, 1)", level)
	}
	iv := Interval{Estimate: estimate, Level: level, Bias: math.NaN(), Acceleration: math.NaN()}
	t := make([]float64, 0, len(r.Replicates))
	for _, p := range r.Replicates {
		v := stat(p)
		if math.IsNaN(v) {
			iv.Dropped++
			continue
		}
		t = append(t, v)
	}
	if len(t) == 0 {
		return Interval{}, errors.New("interval: the statistic is NaN in every replicate")
	}
	sort.Float64s(t)
	alpha := (1 - level) / 2
	iv.Percentile = [2]float64{orderQuantile(t, alpha), orderQuantile(t, 1-alpha)}
	iv.BCa = iv.Percentile
	fallback := func(why string) (Interval, error) {
		iv.BCaFallback = true
		iv.Note = why
		return iv, nil
	}
	if math.IsNaN(estimate) || math.IsInf(estimate, 0) {
		return fallback("BCa needs a finite estimate; the percentile interval is reported")
	}
	below := sort.SearchFloat64s(t, estimate) // #{θ*_b < θ̂}
	z0 := stdNormal.Quantile(float64(below) / float64(len(t)))
	iv.Bias = z0
	if math.IsInf(z0, 0) || math.IsNaN(z0) {
		return fallback("the estimate lies outside the bootstrap distribution (bias correction infinite); the percentile interval is reported")
	}
	a, ok := r.acceleration(stat)
	iv.Acceleration = a
	if !ok {
		return fallback("a leave-one-out value of the statistic is not finite (acceleration undefined); the percentile interval is reported")
	}
	for i, za := range [2]float64{stdNormal.Quantile(alpha), stdNormal.Quantile(1 - alpha)} {
		w := z0 + za
		adj := stdNormal.CDF(z0 + w/(1-a*w))
		if math.IsNaN(adj) {
			return fallback("the BCa-adjusted level is undefined; the percentile interval is reported")
		}
		iv.BCa[i] = orderQuantile(t, adj)
	}
	return iv, nil
}

var stdNormal = distuv.Normal{Mu: 0, Sigma: 1}

// acceleration is the jackknife estimate of the BCa acceleration [Efron 1987, eq. 6.6].
func (r *BootstrapResult) acceleration(stat func(p Params) float64) (float64, bool) {
	m := 0.0
	vals := make([]float64, len(r.Jackknife))
	for i, p := range r.Jackknife {
		v := stat(p)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return math.NaN(), false
		}
		vals[i] = v
		m += r.JackknifeWeights[i] * v
	}
	units := float64(r.Units)
	if units < 2 {
		return math.NaN(), false
	}
	m /= units
	var s2, s3 float64
	for i, v := range vals {
		L := (units - 1) * (m - v)
		s2 += r.JackknifeWeights[i] * L * L
		s3 += r.JackknifeWeights[i] * L * L * L
	}
	if s2 == 0 {
		return 0, true // constant statistic: no skewness to correct
	}
	a := s3 / (6 * math.Pow(s2, 1.5))
	return a, !math.IsNaN(a) && !math.IsInf(a, 0)
}

// orderQuantile is the alpha quantile of sorted t: the (B+1)α-th order statistic,
// interpolated on the normal-quantile scale, clamped to the extremes (boot's norm.inter).
func orderQuantile(t []float64, alpha float64) float64 {
	B := len(t)
	rk := float64(B+1) * alpha
	k := int(math.Floor(rk))
	switch {
	case k <= 0:
		return t[0]
	case k >= B:
		return t[B-1]
	case float64(k) == rk:
		return t[k-1]
	}
	lo, hi := t[k-1], t[k]
	if lo == hi {
		return lo
	}
	if math.IsInf(hi, 1) {
		return hi
	}
	if math.IsInf(lo, -1) {
		return lo
	}
	z := stdNormal.Quantile(alpha)
	z1 := stdNormal.Quantile(float64(k) / float64(B+1))
	z2 := stdNormal.Quantile(float64(k+1) / float64(B+1))
	return lo + (z-z1)/(z2-z1)*(hi-lo)
}
