package timing

import (
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"sort"
	"strings"
	"sync"
)

// NegativeTreatment is how FitSerialInterval treats negative intervals, as reported in the
// summary: gamma, lognormal and Weibull live on (0, ∞) and cannot produce them.
const NegativeTreatment = "excluded from the parametric fit"

// ModelFit is one family's interval-censored maximum-likelihood fit.
type ModelFit struct {
	Name   string
	Mean   float64
	SD     float64
	Params map[string]float64
	// LogLik is Σ_d n_d·log(F(d + 0.5) − F(max(d − 0.5, 0))) at the maximum, less
	// Σ_T m_T·log F(T + 0.5) over the links' truncation bounds when FitOptions.Truncation
	// is set.
	LogLik float64
	// AIC = 2·2 − 2·LogLik (two parameters) [Akaike 1974, IEEE Trans Autom Control 19:716].
	AIC float64
	// AtBound is true when the optimum sits on the edge of the search box on the
	// log-parameter scale: the data (typically all in one or two daily bins) do not pin
	// the distribution down and the likelihood keeps rising towards a degenerate limit.
	AtBound bool
	// Degenerate is true when the intervals fill one daily bin or two adjacent ones: then
	// a distribution shrinking to a point reaches the saturated likelihood, no finite
	// maximum exists, and the parameters are where the optimiser stopped. Only the mean
	// is then meaningful; the spread and quantiles are not.
	Degenerate bool
	// Dist is the fitted distribution.
	Dist SerialInterval
}

// Quantiles of the best-fitting serial interval, in days.
type Quantiles struct {
	P50 float64
	P95 float64
	P99 float64
}

// BootstrapInfo describes the case bootstrap behind the confidence intervals.
type BootstrapInfo struct {
	Replicates int
	Failed     int
	Level      float64
	Method     string
}

// SerialFit is the serial-interval section of the JSON summary.
type SerialFit struct {
	// N is the number of intervals used in the fit (the non-negative ones).
	N int
	// Negative is the number of negative intervals, treated as NegativeTreatment says.
	Negative          int
	NegativeTreatment string
	BestModel         string
	Models            []ModelFit
	Quantiles         Quantiles
	// MeanCI and P95CI are percentile bootstrap intervals for the best model's mean and
	// 95th percentile; absent when no bootstrap was asked for or every replicate failed.
	MeanCI    []float64
	P95CI     []float64
	Bootstrap *BootstrapInfo
	// Best is the best model's distribution (lowest AIC).
	Best SerialInterval
}

// FitOptions control FitSerialInterval's bootstrap.
type FitOptions struct {
	// Bootstrap is the number of case-bootstrap replicates B; 0 skips the intervals.
	Bootstrap int
	// Level is the confidence level of the intervals; 0 means 0.95.
	Level float64
	// Workers is the number of goroutines for the replicates; ≤ 0 means GOMAXPROCS.
	// Results do not depend on it.
	Workers int
	// Rand seeds the bootstrap; required when Bootstrap > 0.
	Rand *rand.Rand
	// Truncation, when not nil, holds for each interval (same order and length) the largest
	// interval the data could show: the analysis date minus the infector's onset, in days. A
	// link whose infectee falls ill after the analysis date is not yet in the line list, so
	// in a growing outbreak the observed intervals are right-truncated; each one's likelihood
	// is then conditioned on the interval being at most its bound (see FitSerialInterval).
	// A bound below its interval (an onset after the analysis date) is raised to it.
	Truncation []int
	// Delay, with Truncation, is the distribution of the days from onset to report,
	// Delay[d] = P(D = d) (nil: every case with onset up to the analysis date is listed).
	// An infectee is then in the list only once reported too, so a link with bound T is
	// observed with probability Σ_{e ≤ T} P(round(X) = e)·P(D ≤ T − e) (FitSerialInterval).
	Delay []float64
}

// TooFewIntervalsError says the fit had fewer than two usable (non-negative) intervals.
type TooFewIntervalsError struct {
	Usable, Negative int
}

func (e *TooFewIntervalsError) Error() string {
	return fmt.Sprintf("serial interval: %d usable interval(s) (%d negative excluded); at least 2 non-negative intervals are needed for a fit",
		e.Usable, e.Negative)
}

// FitSerialInterval fits gamma, lognormal and Weibull serial intervals to integer onset
// differences (infectee minus infector, in days) by maximum likelihood with daily interval
// censoring: interval d contributes log(F(d + 0.5) − F(max(d − 0.5, 0))) (the coarse-data likelihood of Reich et al. 2009, Stat Med 28:2769, with a one-day window;
// citation recalled from memory).
// Negative intervals are counted and excluded. Each fit maximises over log-parameters
// (lognormal: meanlog and log sdlog) with Nelder–Mead from method-of-moments starts
// (with Sheppard's correction −1/12 for the variance of day-rounded data; Sheppard 1898,
// Proc Lond Math Soc 29:353, citation recalled from memory), polished by Newton steps on a central-difference Hessian. The best
// model has the lowest AIC. With opt.Bootstrap = B > 0, the mean and 95th percentile of
// the best family get percentile intervals [Efron & Tibshirani 1993, ch. 13] from B case
// bootstrap replicates, each a multinomial draw over the table of distinct intervals
// (numeric.Multinomial), refitted within the best family.
//
// With opt.Truncation, interval d with bound T (days from the infector's onset to the
// analysis date) is observed only if the continuous interval is below T + 0.5 (its onset
// rounds to a day no later than the analysis date), so its contribution is conditioned on
// that event [Kalbfleisch & Lawless 1989, J Am Stat Assoc 84:360, the likelihood of
// right-truncated data; applied to serial intervals by Seaman, Presanis & Jackson 2022,
// Stat Methods Med Res; both citations recalled from memory]:
//
//	log[(F(d + 0.5) − F(max(d − 0.5, 0))) / F(T + 0.5)],
//
// With opt.Delay as well, an infectee with onset e days after its infector's is listed only
// if its report delay D is at most T − e, so the probability of observing the link, the
// denominator, is Σ_{e=0}^{T} (F(e + 0.5) − F(max(e − 0.5, 0)))·P(D ≤ T − e): the same
// conditioning on the event of being observed, which now also needs the report (the
// numerator's factor P(D ≤ T − d) does not depend on the serial interval and drops out).
//
// for every family and in every bootstrap replicate, which resamples (interval, bound)
// pairs. LogLik and AIC are then those of this conditional likelihood.
func FitSerialInterval(intervals []int, opt FitOptions) (SerialFit, error) {
	if opt.Truncation != nil && len(opt.Truncation) != len(intervals) {
		return SerialFit{}, fmt.Errorf("serial interval: %d truncation bounds for %d intervals", len(opt.Truncation), len(intervals))
	}
	tab, neg := tabulateTruncated(intervals, opt.Truncation)
	out := SerialFit{N: tab.n, Negative: neg, NegativeTreatment: NegativeTreatment}
	if opt.Delay != nil && opt.Truncation != nil {
		cdf, err := numeric.Cumulative(opt.Delay)
		if err != nil {
			return out, fmt.Errorf("serial interval: report delay: %w", err)
		}
		tab.delayCDF = cdf
	}
	if tab.n < 2 {
		return out, &TooFewIntervalsError{Usable: tab.n, Negative: neg}
	}
	level := opt.Level
	if level == 0 {
		level = 0.95
	}
	if !(level > 0 && level < 1) {
		return out, fmt.Errorf("serial interval: confidence level %v is not in (0, 1)", opt.Level)
	}
	if opt.Bootstrap < 0 {
		return out, fmt.Errorf("serial interval: bootstrap replicates %d is negative", opt.Bootstrap)
	}
	if opt.Bootstrap > 0 && opt.Rand == nil {
		return out, fmt.Errorf("serial interval: a bootstrap needs a seeded *rand.Rand")
	}
	fams := families()
	var fits []ModelFit
	var thetas [][2]float64
	var errs []error
	for _, fam := range fams {
		mf, th, err := fitFamily(fam, tab, fam.start(tab))
		if err != nil {
			errs = append(errs, err)
			continue
		}
		fits = append(fits, mf)
		thetas = append(thetas, th)
	}
	if len(fits) == 0 {
		why := make([]string, len(errs))
		for i, e := range errs {
			why[i] = strings.TrimPrefix(e.Error(), "serial interval: ")
		}
		return out, fmt.Errorf("serial interval: no family could be fitted (%s)", strings.Join(why, "; "))
	}
	best := 0
	for i := range fits {
		if fits[i].AIC < fits[best].AIC {
			best = i
		}
	}
	out.Models = fits
	out.BestModel = fits[best].Name
	out.Best = fits[best].Dist
	out.Quantiles = Quantiles{
		P50: out.Best.Quantile(0.5),
		P95: out.Best.Quantile(0.95),
		P99: out.Best.Quantile(0.99),
	}
	if opt.Bootstrap > 0 {
		var fam family
		for _, f := range fams {
			if f.name == out.BestModel {
				fam = f
			}
		}
		means, p95s, failed := bootstrapFits(fam, tab, thetas[best], opt.Bootstrap, opt.Workers, opt.Rand)
		out.Bootstrap = &BootstrapInfo{
			Replicates: opt.Bootstrap, Failed: failed, Level: level,
			Method: "percentile, case bootstrap (multinomial over distinct intervals), best family refitted",
		}
		if len(means) > 0 {
			a := (1 - level) / 2
			slices.Sort(means)
			slices.Sort(p95s)
			out.MeanCI = []float64{numeric.Quantile7(means, a), numeric.Quantile7(means, 1-a)}
			out.P95CI = []float64{numeric.Quantile7(p95s, a), numeric.Quantile7(p95s, 1-a)}
		}
	}
	return out, nil
}

// FitFamily fits one family by name (NameGamma, NameLogNormal or NameWeibull) with the
// same likelihood and optimiser as FitSerialInterval; negative intervals are excluded.
func FitFamily(name string, intervals []int) (ModelFit, error) {
	tab, neg := tabulateIntervals(intervals)
	if tab.n < 2 {
		return ModelFit{}, &TooFewIntervalsError{Usable: tab.n, Negative: neg}
	}
	for _, fam := range families() {
		if fam.name == name {
			mf, _, err := fitFamily(fam, tab, fam.start(tab))
			return mf, err
		}
	}
	return ModelFit{}, fmt.Errorf("serial interval: unknown family %q (want %s, %s or %s)", name, NameGamma, NameLogNormal, NameWeibull)
}

// intervalTable is the frequency table of non-negative intervals and, for right-truncated
// data, of their bounds.
type intervalTable struct {
	values []int
	counts []int
	n      int
	// delayCDF[j] = P(D ≤ j) of the report delay (FitOptions.Delay); nil without one.
	delayCDF []float64
	// bounds are the distinct truncation bounds T (ascending) and bcounts how many links
	// have each; empty without truncation.
	bounds  []int
	bcounts []int
	// pairs are the distinct (interval, bound) pairs the bootstrap resamples: value index
	// pv, bound index pb (−1 without truncation) and count pc. Without truncation they are
	// the values in order, so the replicates are those of the table of intervals.
	pv, pb, pc []int
}

// tabulateTruncated is tabulateIntervals with each interval's truncation bound (nil: none).
func tabulateTruncated(intervals, bounds []int) (intervalTable, int) {
	t, neg := tabulateIntervals(intervals)
	if bounds == nil {
		return t, neg
	}
	vi := map[int]int{}
	for i, v := range t.values {
		vi[v] = i
	}
	type pair struct{ d, b int }
	pm := map[pair]int{}
	bm := map[int]int{}
	for i, d := range intervals {
		if d < 0 {
			continue
		}
		b := max(bounds[i], d)
		pm[pair{d, b}]++
		bm[b]++
	}
	for b := range bm {
		t.bounds = append(t.bounds, b)
	}
	sort.Ints(t.bounds)
	bi := map[int]int{}
	t.bcounts = make([]int, len(t.bounds))
	for i, b := range t.bounds {
		bi[b] = i
		t.bcounts[i] = bm[b]
	}
	ps := make([]pair, 0, len(pm))
	for p := range pm {
		ps = append(ps, p)
	}
	sort.Slice(ps, func(i, j int) bool { return ps[i].d < ps[j].d || (ps[i].d == ps[j].d && ps[i].b < ps[j].b) })
	t.pv, t.pb, t.pc = nil, nil, nil
	for _, p := range ps {
		t.pv = append(t.pv, vi[p.d])
		t.pb = append(t.pb, bi[p.b])
		t.pc = append(t.pc, pm[p])
	}
	return t, neg
}

func tabulateIntervals(intervals []int) (intervalTable, int) {
	m := map[int]int{}
	neg := 0
	for _, d := range intervals {
		if d < 0 {
			neg++
			continue
		}
		m[d]++
	}
	t := intervalTable{}
	for v := range m {
		t.values = append(t.values, v)
	}
	sort.Ints(t.values)
	t.counts = make([]int, len(t.values))
	for i, v := range t.values {
		t.counts[i] = m[v]
		t.n += m[v]
		t.pv, t.pb, t.pc = append(t.pv, i), append(t.pb, -1), append(t.pc, m[v])
	}
	return t, neg
}

// logLikImpossible is the table's log-likelihood under si and the number of links si gives
// no mass: the interval-censored terms of logLikImpossible, minus log F(T + 0.5) for each
// link with truncation bound T (FitSerialInterval). F(T + 0.5) ≥ the mass of any interval
// d ≤ T, so it is 0 only where those links are already counted impossible.
func (t intervalTable) logLikImpossible(si SerialInterval) (float64, int) {
	ll, impossible := logLikImpossible(si, t.values, t.counts)
	if len(t.bounds) == 0 || si.Validate() != nil {
		return ll, impossible
	}
	var mass []float64 // P(round(X) = e) for e up to the largest bound, with a delay
	if t.delayCDF != nil {
		mass = make([]float64, t.bounds[len(t.bounds)-1]+1)
		prev := 0.0
		for e := range mass {
			c := si.CDF(float64(e) + 0.5)
			mass[e], prev = c-prev, c
		}
	}
	for i, b := range t.bounds {
		if t.bcounts[i] == 0 {
			continue
		}
		x := float64(b) + 0.5
		var lf float64
		switch s := si.Survival(x); {
		case mass != nil:
			var sum numeric.Sum
			for e := 0; e <= b; e++ {
				sum.Add(mass[e] * t.delayCDF[min(b-e, len(t.delayCDF)-1)])
			}
			lf = math.Log(sum.Value())
		case s < 0.5:
			lf = math.Log1p(-s) // F near 1: log(1 − S) keeps its small digits
		default:
			lf = math.Log(si.CDF(x))
		}
		if math.IsInf(lf, 0) || math.IsNaN(lf) {
			continue
		}
		ll -= float64(t.bcounts[i]) * lf
	}
	return ll, impossible
}

func (t intervalTable) moments() (mean, variance float64) {
	for i, v := range t.values {
		mean += float64(t.counts[i]) * float64(v)
	}
	mean /= float64(t.n)
	for i, v := range t.values {
		d := float64(v) - mean
		variance += float64(t.counts[i]) * d * d
	}
	variance /= float64(t.n - 1)
	return mean, variance
}

// impossiblePenalty replaces log(0) for an observed interval the distribution cannot
// produce (underflow), so the optimiser sees a finite, ordered objective.
const impossiblePenalty = -1e6

// logLikImpossible is the log-likelihood with impossiblePenalty standing for each interval
// the distribution gives no mass, and the number of such intervals: a fit is possible only
// when there are none. The count, not the size of the total, says so: the total of a large
// sample (a few hundred thousand links) lies far below any fixed penalty.
func logLikImpossible(si SerialInterval, values, counts []int) (float64, int) {
	if si.Validate() != nil {
		// Every DailyMass would be NaN: the likelihood is the penalty for every interval.
		ll, n := 0.0, 0
		for _, c := range counts {
			ll += float64(c) * impossiblePenalty
			n += c
		}
		return ll, n
	}
	// values ascend, so day d's upper edge d + 0.5 is day d + 1's lower edge: each edge's
	// CDF and survival are computed once and shared, with the same formulas as DailyMass
	// (intervalMass), so the result is identical and about half the special-function calls.
	type edge struct {
		x, c, s    float64
		hasC, hasS bool
	}
	cdf := func(e *edge) float64 {
		if !e.hasC {
			e.c, e.hasC = si.CDF(e.x), true
		}
		return e.c
	}
	surv := func(e *edge) float64 {
		if !e.hasS {
			e.s, e.hasS = si.Survival(e.x), true
		}
		return e.s
	}
	prev := edge{x: math.NaN()}
	ll, impossible := 0.0, 0
	for i, v := range values {
		if counts[i] == 0 {
			continue
		}
		m := 0.0
		if v >= 0 {
			lo, hi := math.Max(float64(v)-0.5, 0), float64(v)+0.5
			le := edge{x: lo}
			if prev.x == lo {
				le = prev
			}
			he := edge{x: hi}
			if lo > 0 && cdf(&le) > 0.5 {
				m = surv(&le) - surv(&he)
			} else {
				m = cdf(&he) - cdf(&le)
			}
			m = math.Max(m, 0)
			prev = he
		}
		if !(m > 0) {
			ll += float64(counts[i]) * impossiblePenalty
			impossible += counts[i]
			continue
		}
		ll += float64(counts[i]) * math.Log(m)
	}
	return ll, impossible
}

// family describes one parametric serial-interval family on the optimiser's scale θ.
type family struct {
	name  string
	lo    [2]float64 // search box on θ, wide enough for any serial interval in days
	hi    [2]float64
	build func(th [2]float64) SerialInterval
	start func(t intervalTable) [2]float64
}

func families() []family {
	return []family{
		{
			name: NameGamma,
			lo:   [2]float64{-7, -15}, hi: [2]float64{12, 15},
			build: func(th [2]float64) SerialInterval {
				return GammaInterval{Shape: math.Exp(th[0]), Rate: math.Exp(th[1])}
			},
			start: func(t intervalTable) [2]float64 {
				m, v := momentStart(t)
				return [2]float64{math.Log(m * m / v), math.Log(m / v)}
			},
		},
		{
			name: NameLogNormal,
			lo:   [2]float64{-15, -8}, hi: [2]float64{15, 3},
			build: func(th [2]float64) SerialInterval {
				return LogNormalInterval{MeanLog: th[0], SDLog: math.Exp(th[1])}
			},
			start: func(t intervalTable) [2]float64 {
				m, v := momentStart(t)
				s2 := math.Log1p(v / (m * m))
				return [2]float64{math.Log(m) - s2/2, 0.5 * math.Log(s2)}
			},
		},
		{
			name: NameWeibull,
			// Shape ≥ e^−4 keeps Γ(1 + 2/k) finite.
			lo: [2]float64{-4, -15}, hi: [2]float64{5, 15},
			build: func(th [2]float64) SerialInterval {
				return WeibullInterval{Shape: math.Exp(th[0]), Scale: math.Exp(th[1])}
			},
			start: func(t intervalTable) [2]float64 {
				m, v := momentStart(t)
				lk := weibullLogShape(1 + v/(m*m))
				lg, _ := math.Lgamma(1 + math.Exp(-lk))
				return [2]float64{lk, math.Log(m) - lg}
			},
		},
	}
}

// momentStart is the sample mean and Sheppard-corrected variance, floored away from 0.
func momentStart(t intervalTable) (mean, variance float64) {
	m, v := t.moments()
	m = math.Max(m, 0.25)
	v = math.Max(v-1.0/12, math.Max(0.01*m*m, 1e-3))
	return m, v
}

// weibullLogShape solves Γ(1 + 2/k)/Γ(1 + 1/k)² = ratio (= 1 + CV²) for log k by bisection;
// the ratio decreases in k.
func weibullLogShape(ratio float64) float64 {
	r := func(lk float64) float64 {
		k := math.Exp(lk)
		l2, _ := math.Lgamma(1 + 2/k)
		l1, _ := math.Lgamma(1 + 1/k)
		return l2 - 2*l1
	}
	target := math.Log(ratio)
	lo, hi := -4.0, 5.0
	for i := 0; i < 100; i++ {
		mid := (lo + hi) / 2
		if r(mid) > target {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

func clampBox(fam family, th [2]float64) (c [2]float64, dist2 float64) {
	for i := range th {
		c[i] = math.Min(math.Max(th[i], fam.lo[i]), fam.hi[i])
		d := th[i] - c[i]
		dist2 += d * d
	}
	return c, dist2
}

// objective is −log L at θ clamped into the box, plus a quadratic penalty for leaving it,
// so the optimiser sees a continuous function on all of ℝ².
func objective(fam family, tab intervalTable, th [2]float64) float64 {
	c, d2 := clampBox(fam, th)
	ll, _ := tab.logLikImpossible(fam.build(c))
	return -ll + 1e4*d2
}

func fitFamily(fam family, tab intervalTable, start [2]float64) (ModelFit, [2]float64, error) {
	th := minimise(fam, tab, start)
	si := fam.build(th)
	ll, impossible := tab.logLikImpossible(si)
	mf := ModelFit{
		Name: fam.name, Mean: si.Mean(), SD: si.SD(), Params: si.Params(),
		LogLik: ll, AIC: 2*2 - 2*ll, Dist: si,
	}
	v := tab.values
	mf.Degenerate = len(v) == 1 || (len(v) == 2 && v[1]-v[0] == 1)
	for i := range th {
		if th[i]-fam.lo[i] < 1e-6 || fam.hi[i]-th[i] < 1e-6 {
			mf.AtBound = true
		}
	}
	if !numeric.IsFinite(mf.Mean) || !numeric.IsFinite(mf.SD) || !numeric.IsFinite(mf.LogLik) || impossible > 0 {
		return ModelFit{}, th, fmt.Errorf("serial interval: %s fit did not reach a finite optimum", fam.name)
	}
	return mf, th, nil
}

// minimise runs Nelder–Mead from start, then Newton steps to pin the parameters down to the
// precision the reference comparison needs (Nelder–Mead stops on function changes), and
// returns the optimum clamped into the box.
func minimise(fam family, tab intervalTable, start [2]float64) [2]float64 {
	start, _ = clampBox(fam, start)
	f := objectiveOf(fam, tab)
	x, _ := numeric.NelderMead(f, start[:], 0.1, 1e-12, math.Inf(1), 2000)
	x, _, _ = numeric.NewtonMin(f, x, newtonStep, 30)
	th, _ := clampBox(fam, [2]float64(x))
	return th
}

// objectiveOf is objective as a function of a parameter slice, for the optimisers.
func objectiveOf(fam family, tab intervalTable) func([]float64) float64 {
	return func(x []float64) float64 { return objective(fam, tab, [2]float64(x)) }
}

// newtonStep is the finite-difference step of the Newton refinements on the log-parameter
// scale.
const newtonStep = 1e-4

// bootstrapFits refits fam to B case-bootstrap replicates of tab. Replicate b draws from
// its own PCG stream seeded from rng before any work starts, so results do not depend on
// the number of workers or their scheduling.
func bootstrapFits(fam family, tab intervalTable, start [2]float64, b, workers int, rng *rand.Rand) (means, p95s []float64, failed int) {
	seeds := make([][2]uint64, b)
	for i := range seeds {
		seeds[i] = [2]uint64{rng.Uint64(), rng.Uint64()}
	}
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, b)
	mean := make([]float64, b)
	p95 := make([]float64, b)
	ok := make([]bool, b)
	cond := numeric.ConditionalShares(tab.pc)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			draws := make([]int, len(tab.pc))
			rep := intervalTable{values: tab.values, counts: make([]int, len(tab.values)), n: tab.n, bounds: tab.bounds, delayCDF: tab.delayCDF,
				bcounts: make([]int, len(tab.bounds))}
			for i := w; i < b; i += workers {
				r := rand.New(rand.NewPCG(seeds[i][0], seeds[i][1]))
				numeric.Multinomial(r, tab.n, cond, draws)
				clear(rep.counts)
				clear(rep.bcounts)
				for j, c := range draws {
					rep.counts[tab.pv[j]] += c
					if tab.pb[j] >= 0 {
						rep.bcounts[tab.pb[j]] += c
					}
				}
				// A replicate's optimum lies near the full-data one, where Newton steps with
				// backtracking converge in a few iterations; the full Nelder–Mead search is
				// the fallback when Newton cannot move (curvature not positive there).
				x, _, _ := numeric.NewtonMin(objectiveOf(fam, rep), start[:], newtonStep, 30)
				th := [2]float64(x)
				if th == start {
					th = minimise(fam, rep, start)
				}
				th, _ = clampBox(fam, th)
				si := fam.build(th)
				mean[i], p95[i] = si.Mean(), si.Quantile(0.95)
				ok[i] = numeric.IsFinite(mean[i]) && numeric.IsFinite(p95[i])
			}
		}(w)
	}
	wg.Wait()
	for i := range ok {
		if ok[i] {
			means = append(means, mean[i])
			p95s = append(p95s, p95[i])
		} else {
			failed++
		}
	}
	return means, p95s, failed
}
