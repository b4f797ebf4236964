package branching

import (
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/offspring"
	"math"
	"runtime"
	"sort"
	"sync"
)

// ChainObservation is one observed transmission chain (cluster).
type ChainObservation struct {
	// Size is the number of cases in the cluster, root included (≥ 1).
	Size int
	// Censored marks a cluster that may still grow: it contributes P(Y ≥ Size).
	Censored bool
}

// ChainFit is a maximum-likelihood fit of the negative binomial chain-size model.
type ChainFit struct {
	R float64
	// K is nil in the Poisson limit (k → ∞, Borel chain sizes) and when R = 0.
	K *float64
	// PoissonLimit is set when the negative binomial does not improve on Poisson offspring.
	PoissonLimit bool
	LogLik       float64
	Clusters     int
	Censored     int
	// borelR is the Borel (Poisson-offspring) optimum, kept as a start for refits.
	borelR float64
}

// Thresholds of the Poisson-limit decision (common practice: k beyond 1000 is
// indistinguishable from Poisson at outbreak sample sizes, and a log-likelihood gain below
// 1e−6 is no gain).
const (
	poissonLimitK    = 1e3
	poissonLimitGain = 1e-6
	maxFittedR       = 100
)

type chainClass struct {
	size     int
	censored bool
	count    int
}

type chainTable struct {
	// lgy1[y] = log Γ(y + 1), cached for the sizes the likelihood visits.
	lgy1    []float64
	classes []chainClass
	// sumFrom is where sums of P(Y = j) switch from term by term to smoothSum
	// (chainSumFrom; the tests raise it to compare the two).
	sumFrom   int
	maxCens   int
	n, nCens  int
	allOnes   bool
	meanSize  float64
	allCensor bool
}

func tabulateChains(obs []ChainObservation) (chainTable, error) {
	var t chainTable
	if len(obs) == 0 {
		return t, fmt.Errorf("branching: no clusters to fit")
	}
	m := map[chainClass]int{}
	t.allOnes, t.allCensor = true, true
	total := 0
	for i, o := range obs {
		if o.Size < 1 {
			return t, fmt.Errorf("branching: cluster %d has size %d: a cluster has at least one case", i+1, o.Size)
		}
		if o.Size > MaxChainSize {
			return t, fmt.Errorf("branching: cluster %d has size %d, above the limit %d", i+1, o.Size, MaxChainSize)
		}
		m[chainClass{size: o.Size, censored: o.Censored}]++
		if o.Censored {
			t.nCens++
			t.maxCens = max(t.maxCens, o.Size)
		} else {
			t.allCensor = false
		}
		if o.Size > 1 || o.Censored {
			t.allOnes = false
		}
		total += o.Size
	}
	for c, n := range m {
		c.count = n
		t.classes = append(t.classes, c)
	}
	sort.Slice(t.classes, func(i, j int) bool {
		a, b := t.classes[i], t.classes[j]
		if a.size != b.size {
			return a.size < b.size
		}
		return !a.censored && b.censored
	})
	t.n = len(obs)
	t.sumFrom = chainSumFrom
	t.meanSize = float64(total) / float64(t.n)
	top := t.classes[len(t.classes)-1].size
	t.lgy1 = make([]float64, top+2)
	for y := range t.lgy1 {
		t.lgy1[y], _ = math.Lgamma(float64(y) + 1)
	}
	return t, nil
}

// lgammaY1 is log Γ(y + 1), from the cache when y is within it.
func (t *chainTable) lgammaY1(y int) float64 {
	if y < len(t.lgy1) {
		return t.lgy1[y]
	}
	v, _ := math.Lgamma(float64(y) + 1)
	return v
}

// chainLogLik is the log-likelihood of the table under NB(R, k) chain sizes, or Borel when
// k is +Inf: Σ log P(Y = y) over complete clusters plus Σ log P(Y ≥ y) over censored ones,
// P(Y ≥ y) = 1 − Σ_{j<y} P(Y = j) [Blumberg & Lloyd-Smith 2013]. The sum below y runs term
// by term up to t.sumFrom and by smoothSum beyond, so a censored cluster of tens of
// thousands of cases costs about as much as one of a few hundred. Where the difference
// would cancel (R < 1 and a tail below 1e−4) the tails are summed from above instead.
func chainLogLik(t *chainTable, R, k float64) float64 {
	logp, logpx := chainLogPMFs(t, R, k)
	ll := 0.0
	// The censored classes, in increasing size y_i, with cum_i = Σ_{j<y_i} P(Y = j) and the
	// increments seg_i = cum_i − cum_{i−1}, each summed on its own.
	type censoredClass struct {
		size, count int
		cum, seg    float64
	}
	var cens []censoredClass
	var cum numeric.Sum
	next := 1 // cum holds Σ_{j<next} P(Y = j)
	for _, c := range t.classes {
		if !c.censored {
			ll += float64(c.count) * logp(c.size)
			continue
		}
		var seg numeric.Sum
		direct := c.size
		if logpx != nil {
			direct = min(c.size, t.sumFrom)
		}
		for ; next < direct; next++ {
			seg.Add(math.Exp(logp(next)))
		}
		if next < c.size {
			seg.Add(smoothSum(logpx, next, c.size))
			next = c.size
		}
		cum.Add(seg.Value())
		cens = append(cens, censoredClass{size: c.size, count: c.count, cum: cum.Value(), seg: seg.Value()})
	}
	// P(Y ≥ y_i) = 1 − cum_i loses digits as it shrinks. For R < 1 (every chain finite) it is
	// also T_i = Σ_{j≥y_i} P(Y = j) = T_m + Σ_{l>i} seg_l, summed from the top without
	// cancellation: used once 1 − cum_i is below smallTail. T_m is summed directly.
	const smallTail = 1e-4
	top := math.NaN()
	var above numeric.Sum // Σ_{l>i} seg_l
	for i := len(cens) - 1; i >= 0; i-- {
		c := cens[i]
		tail := 1 - c.cum
		if tail < smallTail && R < 1 {
			if math.IsNaN(top) {
				top = directTail(logp, logpx, cens[len(cens)-1].size, t.sumFrom)
			}
			tail = top + above.Value()
		}
		above.Add(c.seg)
		ll += float64(c.count) * math.Log(math.Max(tail, math.SmallestNonzeroFloat64))
	}
	return ll
}

// directTail returns Σ_{j≥y} P(Y = j) for a decaying chain-size distribution: by smoothTail
// from t.sumFrom on, term by term below it, until a term falls below 1e−17 of the sum (or
// underflows, and the rest with it).
func directTail(logp func(int) float64, logpx func(float64) float64, y, sumFrom int) float64 {
	if logpx != nil && y >= sumFrom {
		return smoothTail(logpx, y)
	}
	var s numeric.Sum
	for j := y; j < y+1_000_000; j++ {
		if logpx != nil && j >= sumFrom {
			s.Add(smoothTail(logpx, j))
			break
		}
		p := math.Exp(logp(j))
		s.Add(p)
		if p < 1e-17*s.Value() || p == 0 {
			break
		}
	}
	return s.Value()
}

// chainLogPMFs returns the chain-size log-probability of NB(R, k), or Borel for k = +Inf
// (offspring.NegBinChainSize, offspring.BorelChainSize), twice from one formula: at integer sizes,
// with log Γ(y + 1) from the table's cache, and continued to real sizes x through log Γ, for
// smoothSum (nil when R ≤ 0, where every chain is its root alone). The (R, k)-only terms are
// hoisted out of the returned functions: the likelihood runs inside every optimiser step of
// every bootstrap replicate.
func chainLogPMFs(t *chainTable, R, k float64) (logp func(y int) float64, logpx func(x float64) float64) {
	if !(R > 0) {
		return offspring.NegBin{R: R, K: k}.ChainSizeLogPMF, nil
	}
	var core func(x, lgx1 float64) float64 // log P(Y = x) given log Γ(x + 1)
	if math.IsInf(k, 1) {
		core = offspring.NewBorelChainSize(R).LogPMF
	} else {
		core = offspring.NewNegBinChainSize(R, k).LogPMF
	}
	logp = func(y int) float64 { return core(float64(y), t.lgammaY1(y)) }
	logpx = func(x float64) float64 {
		c, _ := math.Lgamma(x + 1)
		return core(x, c)
	}
	return logp, logpx
}

// FitChainSizes fits the negative binomial offspring model to cluster sizes alone by maximum
// likelihood [Blumberg & Lloyd-Smith 2013, PLoS Comput Biol 9:e1002993], censored clusters
// contributing P(Y ≥ y). The search runs Nelder–Mead [Nelder & Mead 1965] on (log R, log k),
// so the positivity bounds hold without a bounded optimiser, from several starts. The Borel (Poisson) model is
// fitted too; when the negative binomial k exceeds 1000 or gains less than 1e−6 in
// log-likelihood over it, the Poisson limit is reported: R from the Borel fit and K nil.
// Every cluster of size 1 and complete gives R = 0 (K nil). All clusters censored, or an R
// estimate running above 100, has no useful maximum and is an error.
func FitChainSizes(obs []ChainObservation) (*ChainFit, error) {
	t, err := tabulateChains(obs)
	if err != nil {
		return nil, err
	}
	return fitTable(&t, nil)
}

// fitStarts are the Nelder–Mead starting points of one fit: Borel R values, and (R, k)
// pairs for the negative binomial. A bootstrap replicate starts from the full-data fit,
// which is near its optimum, instead of the full fan of starts.
type fitStarts struct {
	borel  []float64
	negbin [][2]float64
	// ftol is the Nelder–Mead tolerance; a replicate needs its optimum only to well within
	// the spread of the bootstrap distribution.
	ftol float64
}

func fitTable(t *chainTable, starts *fitStarts) (*ChainFit, error) {
	fit := &ChainFit{Clusters: t.n, Censored: t.nCens}
	if t.allOnes {
		fit.R, fit.PoissonLimit = 0, true
		return fit, nil
	}
	if t.allCensor {
		return nil, fmt.Errorf("branching: every cluster is censored: the chain-size likelihood has no finite maximum")
	}
	r0 := math.Min(0.95, math.Max(0.05, 1-1/t.meanSize))
	nll := func(x []float64) float64 {
		R := math.Exp(x[0])
		k := math.Inf(1)
		if len(x) == 2 {
			k = math.Exp(x[1])
		}
		if R > 1e3 || k < 1e-8 || (len(x) == 2 && k > 100*poissonLimitK) {
			return 1e300
		}
		v := -chainLogLik(t, R, k)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 1e300
		}
		return v
	}
	borelStarts := []float64{r0, 0.5 * r0, math.Min(1.5, 2*r0)}
	nbStarts := [][2]float64{{r0, 0.1}, {r0, 1}, {r0, 10}}
	ftol := 1e-12
	if starts != nil {
		borelStarts, nbStarts, ftol = starts.borel, starts.negbin, starts.ftol
	}
	// Every search from a fixed start is independent: a full fit runs them side by side
	// (a bootstrap, already parallel over replicates, runs them in turn). Results are
	// compared in start order, so the outcome does not depend on scheduling.
	type search struct {
		x0      []float64
		step    float64
		maxIter int
		x       []float64
		v       float64
	}
	var runs []*search
	for _, r := range borelStarts {
		runs = append(runs, &search{x0: []float64{math.Log(r)}, step: 0.3, maxIter: 2000})
	}
	for _, st := range nbStarts {
		runs = append(runs, &search{x0: []float64{math.Log(st[0]), math.Log(st[1])}, step: 0.5, maxIter: 4000})
	}
	do := func(sr *search) { sr.x, sr.v = numeric.NelderMead(nll, sr.x0, sr.step, ftol, 1e-7, sr.maxIter) }
	if starts == nil {
		var wg sync.WaitGroup
		for _, sr := range runs {
			wg.Add(1)
			go func() { defer wg.Done(); do(sr) }()
		}
		wg.Wait()
	} else {
		for _, sr := range runs {
			do(sr)
		}
	}
	bestB, bestN := math.Inf(1), math.Inf(1)
	var rB, rN, kN float64
	for _, sr := range runs {
		switch {
		case len(sr.x) == 1 && sr.v < bestB:
			bestB, rB = sr.v, math.Exp(sr.x[0])
		case len(sr.x) == 2 && sr.v < bestN:
			bestN, rN, kN = sr.v, math.Exp(sr.x[0]), math.Exp(sr.x[1])
		}
	}
	if math.IsInf(bestB, 1) {
		return nil, fmt.Errorf("branching: the Borel chain-size fit failed")
	}
	// One more negative-binomial search from the Poisson limit at the Borel optimum.
	if x, v := numeric.NelderMead(nll, []float64{math.Log(rB), math.Log(poissonLimitK)}, 0.5, ftol, 1e-7, 4000); v < bestN {
		bestN, rN, kN = v, math.Exp(x[0]), math.Exp(x[1])
	}
	if kN >= poissonLimitK || math.IsInf(bestN, 1) || bestB-bestN < poissonLimitGain {
		fit.R, fit.PoissonLimit, fit.LogLik = rB, true, -bestB
		fit.borelR = rB
	} else {
		fit.R, fit.K, fit.LogLik = rN, &kN, -bestN
		fit.borelR = rB
	}
	if fit.R > maxFittedR {
		return nil, fmt.Errorf("branching: the fitted R runs above %d: the clusters carry no finite estimate (too many censored?)", maxFittedR)
	}
	return fit, nil
}

// ChainBootstrap holds cluster-bootstrap replicates of a chain-size fit and their
// percentile intervals.
type ChainBootstrap struct {
	Replicates int
	Level      float64
	RLo        float64
	RHi        float64
	// KLo and KHi are nil when the bound lies in the Poisson limit (k = ∞).
	KLo *float64
	KHi *float64
	// PoissonLimit counts replicates whose fit hit the Poisson limit; Failed counts
	// replicates whose fit failed (left out of the intervals).
	PoissonLimit int
	Failed       int
	// R and K are the per-replicate estimates (K = +Inf in the Poisson limit; NaN when
	// failed). They are not serialised.
	R []float64
	K []float64
}

// BootstrapChainFit refits the chain-size model to B cluster-bootstrap resamples (whole
// clusters drawn with replacement, which respects dependence within chains; common practice)
// and returns percentile intervals at `level` [Efron & Tibshirani 1993, ch. 13] using
// Hyndman–Fan type 7 quantiles. Replicate b draws from its own PCG stream derived from
// (seed, b) and the replicates run on `workers` goroutines (< 1 means 1); the result does
// not depend on the number of workers.
func BootstrapChainFit(obs []ChainObservation, B int, level float64, seed uint64, workers int) (*ChainBootstrap, error) {
	if B < 1 || B > 1_000_000 {
		return nil, fmt.Errorf("branching: %d bootstrap replicates: the number must be in 1..1000000", B)
	}
	if !(level > 0 && level < 1) {
		return nil, fmt.Errorf("branching: interval level %v must be strictly between 0 and 1", level)
	}
	full, err := tabulateChains(obs)
	if err != nil {
		return nil, err
	}
	// Replicates start their search from the full-data fit (and the Poisson limit), so each
	// costs a few Nelder–Mead runs instead of seven; a replicate whose search fails there
	// falls back to the full fan of starts.
	var starts *fitStarts
	f0, err := fitTable(&full, nil)
	if err != nil {
		f0 = nil
	}
	if f0 != nil && f0.R > 0 {
		k0 := poissonLimitK
		if f0.K != nil {
			k0 = *f0.K
		}
		starts = &fitStarts{borel: []float64{f0.R}, negbin: [][2]float64{{f0.R, k0}}, ftol: 1e-9}
	}
	if workers < 1 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = max(1, min(workers, B))
	out := &ChainBootstrap{Replicates: B, Level: level, R: make([]float64, B), K: make([]float64, B)}
	jobs := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sample := make([]ChainObservation, len(obs))
			for b := range jobs {
				rng := numeric.StreamRand(seed, b)
				for i := range sample {
					sample[i] = obs[rng.IntN(len(obs))]
				}
				out.R[b], out.K[b] = math.NaN(), math.NaN()
				t, err := tabulateChains(sample)
				if err != nil {
					continue
				}
				f, ok := newtonRefit(&t, f0)
				if !ok {
					f, err = fitTable(&t, starts)
					if err != nil && starts != nil {
						f, err = fitTable(&t, nil)
					}
				}
				if err != nil {
					continue
				}
				out.R[b], out.K[b] = f.R, math.Inf(1)
				if f.K != nil {
					out.K[b] = *f.K
				}
			}
		}()
	}
	for b := 0; b < B; b++ {
		jobs <- b
	}
	close(jobs)
	wg.Wait()
	var rs, ks []float64
	for b := 0; b < B; b++ {
		if math.IsNaN(out.R[b]) {
			out.Failed++
			continue
		}
		if math.IsInf(out.K[b], 1) {
			out.PoissonLimit++
		}
		rs = append(rs, out.R[b])
		ks = append(ks, out.K[b])
	}
	if len(rs) == 0 {
		return nil, fmt.Errorf("branching: every bootstrap replicate failed to fit")
	}
	sort.Float64s(rs)
	sort.Float64s(ks)
	lo, hi := (1-level)/2, (1+level)/2
	out.RLo, out.RHi = numeric.Quantile7(rs, lo), numeric.Quantile7(rs, hi)
	out.KLo, out.KHi = numeric.FinitePtr(numeric.Quantile7(ks, lo)), numeric.FinitePtr(numeric.Quantile7(ks, hi))
	return out, nil
}

// ChainFitCost is about the number of chain-size log-probabilities one likelihood
// evaluation of these clusters computes: one per distinct size, the terms summed one by one
// below the largest censored cluster (at most chainSumFrom), and the quadrature nodes of
// smoothSum beyond (a panel per censored size and per doubling, 23 evaluations each). A
// caller weighs it against the evaluations a bootstrap would need.
func ChainFitCost(obs []ChainObservation) (int, error) {
	t, err := tabulateChains(obs)
	if err != nil {
		return 0, err
	}
	cost := len(t.classes) + min(t.maxCens, t.sumFrom)
	if t.maxCens > t.sumFrom {
		panels := int(math.Ceil(math.Log2(float64(t.maxCens) / float64(t.sumFrom))))
		for _, c := range t.classes {
			if c.censored && c.size > t.sumFrom {
				panels++
			}
		}
		cost += panels * (len(glNodes) + 3)
	}
	return cost, nil
}

// ChainWaldIntervals are large-sample intervals for a chain-size fit: R and k are taken on
// the log scale, where the likelihood is closer to quadratic, and the standard errors come
// from the observed information, the inverse of the numerically differentiated Hessian of
// the negative log-likelihood [Pawitan 2001, In All Likelihood, ch. 2 and 9; common
// practice for positive parameters]. They stand in for the cluster bootstrap when
// that would be too expensive (very large censored clusters).
type ChainWaldIntervals struct {
	Level float64
	RLo   float64
	RHi   float64
	// KLo and KHi are nil in the Poisson limit, or when the information about k is not
	// positive.
	KLo *float64
	KHi *float64
}

// WaldChainFit computes ChainWaldIntervals at the given level for fit, the maximum-likelihood
// fit of obs.
func WaldChainFit(obs []ChainObservation, fit *ChainFit, level float64) (*ChainWaldIntervals, error) {
	if !(level > 0 && level < 1) {
		return nil, fmt.Errorf("branching: interval level %v must be strictly between 0 and 1", level)
	}
	if fit == nil || !(fit.R > 0) {
		return nil, fmt.Errorf("branching: no positive R to put an interval around")
	}
	t, err := tabulateChains(obs)
	if err != nil {
		return nil, err
	}
	z := distuvNormalQuantile(0.5 + level/2)
	out := &ChainWaldIntervals{Level: level}
	if fit.K == nil {
		nll := func(lr float64) float64 { return -chainLogLik(&t, math.Exp(lr), math.Inf(1)) }
		x, h := math.Log(fit.R), 1e-3
		d2 := (nll(x+h) - 2*nll(x) + nll(x-h)) / (h * h)
		if !(d2 > 0) {
			return nil, fmt.Errorf("branching: the chain-size likelihood is not curved at its maximum")
		}
		se := 1 / math.Sqrt(d2)
		out.RLo, out.RHi = math.Exp(x-z*se), math.Exp(x+z*se)
		return out, nil
	}
	nll := func(lr, lk float64) float64 { return -chainLogLik(&t, math.Exp(lr), math.Exp(lk)) }
	x, y, h := math.Log(fit.R), math.Log(*fit.K), 1e-3
	f0 := nll(x, y)
	hxx := (nll(x+h, y) - 2*f0 + nll(x-h, y)) / (h * h)
	hyy := (nll(x, y+h) - 2*f0 + nll(x, y-h)) / (h * h)
	hxy := (nll(x+h, y+h) - nll(x+h, y-h) - nll(x-h, y+h) + nll(x-h, y-h)) / (4 * h * h)
	det := hxx*hyy - hxy*hxy
	if !(hxx > 0) || !(det > 0) {
		return nil, fmt.Errorf("branching: the chain-size likelihood is not curved at its maximum")
	}
	seR, seK := math.Sqrt(hyy/det), math.Sqrt(hxx/det)
	out.RLo, out.RHi = math.Exp(x-z*seR), math.Exp(x+z*seR)
	lo, hi := math.Exp(y-z*seK), math.Exp(y+z*seK)
	out.KLo, out.KHi = &lo, &hi
	return out, nil
}

// distuvNormalQuantile is the standard normal quantile function.
func distuvNormalQuantile(p float64) float64 { return math.Sqrt2 * math.Erfinv(2*p-1) }

// newtonRefit refits a bootstrap replicate by Newton steps from the full-data fit f0, whose
// optimum the replicate's lies near (numeric.NewtonMin), for both the Borel and the negative
// binomial model, and makes the same Poisson-limit decision as fitTable. It reports false —
// the caller then runs the full search — when f0 is missing or in the Poisson limit (k's
// likelihood is flat there), or when either Newton search meets a Hessian that is not positive definite.
func newtonRefit(t *chainTable, f0 *ChainFit) (*ChainFit, bool) {
	if f0 == nil || f0.K == nil || !(f0.R > 0) || !(f0.borelR > 0) || t.allOnes || t.allCensor {
		return nil, false
	}
	guard := func(R, k float64) float64 {
		if R > 1e3 || k < 1e-8 || (!math.IsInf(k, 1) && k > 100*poissonLimitK) {
			return 1e300
		}
		v := -chainLogLik(t, R, k)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 1e300
		}
		return v
	}
	xb, vb, okB := numeric.NewtonMin(func(x []float64) float64 { return guard(math.Exp(x[0]), math.Inf(1)) },
		[]float64{math.Log(f0.borelR)}, 1e-4, 30)
	xn, vn, okN := numeric.NewtonMin(func(x []float64) float64 { return guard(math.Exp(x[0]), math.Exp(x[1])) },
		[]float64{math.Log(f0.R), math.Log(*f0.K)}, 1e-4, 30)
	if !okB || !okN || vb >= 1e300 || vn >= 1e300 {
		return nil, false
	}
	fit := &ChainFit{Clusters: t.n, Censored: t.nCens, borelR: math.Exp(xb[0])}
	kN := math.Exp(xn[1])
	if kN >= poissonLimitK || vb-vn < poissonLimitGain {
		fit.R, fit.PoissonLimit, fit.LogLik = math.Exp(xb[0]), true, -vb
	} else {
		fit.R, fit.K, fit.LogLik = math.Exp(xn[0]), &kN, -vn
	}
	if fit.R > maxFittedR {
		return nil, false
	}
	return fit, true
}
