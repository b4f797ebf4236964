package analysis

import (
	"errors"
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"
	"math/rand/v2"
	"slices"
	"sort"

	"github.com/caseweave/caseweave/pipeline/branching"
	"github.com/caseweave/caseweave/pipeline/forecast"
	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/offspring"
	"github.com/caseweave/caseweave/pipeline/timing"
)

// Options are the analysis choices of `estimate` and `report`.
type Options struct {
	AsOf linelist.Day
	// CensorDays is the censoring window w: cases with onset fewer than w days before AsOf
	// are left out of offspring estimation. Nil: the serial interval's 95th percentile
	// (rounded up), or DefaultCensorDays when no serial interval could be fitted.
	CensorDays *int
	Replicates int     // bootstrap replicates B
	Seed       uint64  // seeds every random draw of the run
	Level      float64 // confidence level, e.g. 0.95
	Interval   string  // IntervalProfile, IntervalPercentile or IntervalBCa: which interval headlines
	Unit       string  // UnitCase or UnitCluster: what the bootstrap resamples
	Workers    int     // goroutines for the bootstrap (≤ 0: all cores); results do not depend on it
	// Progress, if set, is called as bootstrap replicates finish.
	Progress func(done, total int)
	// SerialFixed, if set, is an agreed gamma serial interval (mean, sd in days) used instead
	// of fitting one.
	SerialFixed *[2]float64
	// InferMissing assigns infectors to unlinked, non-imported cases by InferMethod, one
	// completed tree per bootstrap replicate.
	InferMissing bool
	Generations  int // generations projected (default 4)
	// ForecastWeeks is how many ISO weeks after the analysis date are forecast (0:
	// DefaultForecastWeeks; at most forecast.MaxWeeks; NoForecast for none).
	ForecastWeeks int
	// ImportsPerWeek adds imported cases to the forecast at this mean weekly rate.
	ImportsPerWeek float64
	Share          float64 // target share of transmission (default 0.8)
	// IncubationDays, if positive, adds the "twice the longest incubation period" rule of thumb.
	IncubationDays int
	// Select restricts the summary to some cases (a --by value); nil selects all. Offspring
	// are still counted over every infectee, wherever it lives.
	Select func(c *linelist.Case) bool
	Scope  *Scope
	// Likelihood is how recent cases enter the offspring fit: LikelihoodTruncation (default)
	// keeps every case with its observed share of infectees (offspring.Exposed),
	// LikelihoodCensor leaves out the cases inside the censoring window.
	Likelihood string
	// InferMethod is InferAugmentation (default) or InferWallingaTeunis, InferAscertainment
	// the share ρ of infectors in the list for the augmentation (0: 1); see infer.go.
	InferMethod        string
	InferAscertainment float64
	InferWithin        string // InferWithinJurisdiction (default), InferWithinSetting, InferWithinBoth or InferWithinAll
}

// Choices for Options.Interval and Options.Unit.
const (
	IntervalPercentile = "percentile"
	IntervalBCa        = "bca"
	// IntervalProfile is the profile-likelihood interval for R and k (the percentile
	// bootstrap for every other quantity); the default, chosen by the small-sample coverage
	// study in VALIDATION.md.
	IntervalProfile      = "profile"
	LikelihoodTruncation = "truncation"
	LikelihoodCensor     = "censor"
	UnitCase             = "case"
	UnitCluster          = "cluster"
)

// Defaults, each with its reason.
const (
	// DefaultCensorDays is the censoring window when no serial interval is available: two
	// weeks covers the serial interval of most respiratory infections (common practice).
	DefaultCensorDays = 14
	// DefaultReplicates keeps Monte-Carlo error in a 95% percentile bound small (Efron &
	// Tibshirani 1993, ch. 13, recommend ≥ 1000 for percentile intervals).
	DefaultReplicates = 2000
	// projectionReplicates caps how many bootstrap replicates the projection mixes over.
	// On the demo, 100 and 400 replicates gave 50% and 90% prediction bounds within a few
	// cases of each other for the first generations (up to 7% apart by the fourth); 200 is
	// the compromise between that Monte-Carlo error and the cost of decoding each replicate.
	projectionReplicates = 200
	// serialBootstrap is the number of replicates behind the serial interval's intervals.
	serialBootstrap = 500
	// chainReplicates caps the cluster bootstrap of the chain-size fit, whose every
	// replicate is a two-parameter numerical maximisation.
	chainReplicates = 500
	// chainEvaluationsPerFit is about how many likelihood evaluations one bootstrap refit of
	// the chain-size model takes (Newton steps from the full-data fit: 61 measured on issue
	// 8's 1M-case file), and chainBootstrapBudget the chain-size log-probabilities a
	// bootstrap may compute in all, about 5 s of one core at the ~110 ns per term measured
	// there (BENCHMARKS.md): beyond it, Wald intervals.
	chainEvaluationsPerFit = 60
	chainBootstrapBudget   = 45_000_000
	treesShown             = 6
	nodesPerTree           = 120
	eooHorizon             = 60
)

func (o *Options) defaults() error {
	if o.Replicates == 0 {
		o.Replicates = DefaultReplicates
	}
	if o.Replicates < 1 || o.Replicates > 1_000_000 {
		return fmt.Errorf("the number of bootstrap replicates must be between 1 and 1000000, got %d", o.Replicates)
	}
	if o.Level == 0 {
		o.Level = 0.95
	}
	if !(o.Level > 0.5 && o.Level < 1) {
		return fmt.Errorf("the confidence level must be between 0.5 and 1 (e.g. 0.95), got %v", o.Level)
	}
	switch o.Interval {
	case "":
		o.Interval = IntervalProfile
	case IntervalProfile, IntervalPercentile, IntervalBCa:
	default:
		return fmt.Errorf("the headline interval must be %q, %q or %q, got %q", IntervalProfile, IntervalPercentile, IntervalBCa, o.Interval)
	}
	switch o.Likelihood {
	case "":
		o.Likelihood = LikelihoodTruncation
	case LikelihoodTruncation, LikelihoodCensor:
	default:
		return fmt.Errorf("the offspring likelihood must be %q or %q, got %q", LikelihoodTruncation, LikelihoodCensor, o.Likelihood)
	}
	switch o.Unit {
	case "":
		o.Unit = UnitCase
	case UnitCase, UnitCluster:
	default:
		return fmt.Errorf("the bootstrap unit must be %q or %q, got %q", UnitCase, UnitCluster, o.Unit)
	}
	if o.CensorDays != nil && *o.CensorDays < 0 {
		return fmt.Errorf("the censoring window cannot be negative, got %d days", *o.CensorDays)
	}
	if o.Generations == 0 {
		o.Generations = 4
	}
	if o.ForecastWeeks == 0 {
		o.ForecastWeeks = DefaultForecastWeeks
	}
	if o.ForecastWeeks != NoForecast && (o.ForecastWeeks < 1 || o.ForecastWeeks > forecast.MaxWeeks) {
		return fmt.Errorf("the forecast covers 1 to %d weeks, got %d", forecast.MaxWeeks, o.ForecastWeeks)
	}
	if !(o.ImportsPerWeek >= 0) || math.IsInf(o.ImportsPerWeek, 0) {
		return fmt.Errorf("imports per week must be a finite number of at least 0, got %v", o.ImportsPerWeek)
	}
	if o.Generations < 1 || o.Generations > 50 {
		return fmt.Errorf("projections cover 1 to 50 generations, got %d", o.Generations)
	}
	if err := o.inferDefaults(); err != nil {
		return err
	}
	if o.Share == 0 {
		o.Share = 0.8
	}
	if !(o.Share > 0 && o.Share < 1) {
		return fmt.Errorf("the target share of transmission must be between 0 and 1, got %v", o.Share)
	}
	return nil
}

// ErrOptions wraps an invalid option, which the command line reports as a usage error.
var ErrOptions = errors.New("invalid option")

// Run analyses a line list already read and linked: the data-quality summary, the serial
// interval, the offspring distribution with bootstrap intervals, the branching-process
// outlook and the aggregates a report draws. Problems with the data become Notes, never
// errors; only invalid options are errors.
func Run(path string, ll *linelist.LineList, f *forest.Forest, opts Options) (*Summary, error) {
	if err := opts.defaults(); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrOptions, err)
	}
	none := linelist.NoStrata()
	for i := range ll.Cases {
		if ll.Cases[i].Strata == nil {
			ll.Cases[i].Strata = none // cases built by hand may lack strata
		}
	}
	s := CheckSummary(path, ll, f, opts.AsOf)
	s.Seed = opts.Seed
	s.Scope = opts.Scope
	s.Settings = RunSettings{
		Replicates: opts.Replicates, Level: opts.Level, Interval: opts.Interval, Unit: opts.Unit,
	}
	a := &run{s: s, cases: ll.Cases, f: f, o: opts, family: offspring.NegBinFamily{}}
	a.selectCases()
	if opts.Select != nil {
		s.Tree = a.scopedTree()
	}
	a.serialInterval()
	a.censorWindow()
	a.inferMissing()
	a.offspring()
	a.outlook()
	a.control()
	a.endOfOutbreak()
	a.forecast()
	a.nowcast()
	a.weekly()
	a.epiCurve()
	a.assess()
	a.clusters()
	a.ageMixing()
	a.multitype()
	a.strata()
	a.inferenceMatters()
	a.cautions()
	return s, nil
}

// run carries one analysis through its stages.
type run struct {
	s     *Summary
	cases []linelist.Case
	f     *forest.Forest
	o     Options

	selected []int32 // indices of the cases in scope
	inScope  []bool
	local    []int                 // local[c]: the cases of cluster c in scope
	w        int                   // censoring window, days
	serial   timing.SerialInterval // nil when none
	family   offspring.Family      // the family behind the intervals and the outlook
	fit      *offspring.ModelFit   // its fit
	boot     *offspring.BootstrapResult
	infer    *timing.Infectors // nil unless missing infectors are inferred
	chain    *timing.Chain     // the augmentation chain (InferAugmentation), else nil
	tree0    []int             // its first kept tree
	expected []float64         // expected inferred offspring per case
	counts   []int32           // the offspring counts the estimates use
	// shares[i] is case i's observed share of infectees under the truncation-aware
	// likelihood (nil under censoring).
	shares []float64
	// delayPMF is the reporting delay (delay), delayCases the cases it rests on.
	delayPMF   []float64
	delayCases int
	delayDone  bool
	// reportedCases are the cases the delay rests on (reported).
	reportedCases []forecast.Reported
	reportedDone  bool
	weekSums      []weekSum // offspring of the cases of each onset week, in week order
	weekK         float64   // the dispersion behind the weekly intervals
}

// weekSum is one onset week's cases and the offspring they caused.
type weekSum struct {
	start    linelist.Day
	n        int
	sum      float64
	censored bool
}

func (a *run) note(format string, args ...any) {
	a.s.Notes = append(a.s.Notes, fmt.Sprintf(format, args...))
}

func (a *run) selectCases() {
	a.inScope = make([]bool, len(a.cases))
	a.local = make([]int, len(a.f.Clusters))
	for i := range a.cases {
		if a.o.Select == nil || a.o.Select(&a.cases[i]) {
			a.inScope[i] = true
			a.selected = append(a.selected, int32(i))
			a.local[a.f.Cluster[i]]++
		}
	}
}

// touches reports whether cluster ci holds a case in scope: a chain belongs to the report of
// every jurisdiction (or other --by value) it touches, with its whole size.
func (a *run) touches(ci int) bool { return a.local[ci] > 0 }

// scopedTree is TreeStats restricted to the selected cases; a tree belongs to the scope of
// every value it touches, and the chains that reach beyond it are counted with the cases they
// hold elsewhere.
func (a *run) scopedTree() Tree {
	t := Tree{Cases: len(a.selected)}
	for _, i := range a.selected {
		if a.f.Infector[i] != forest.None {
			t.Linked++
		} else {
			t.Roots++
		}
		if a.cases[i].Imported {
			t.Imported++
		}
	}
	for ci, c := range a.f.Clusters {
		if !a.touches(ci) {
			continue
		}
		t.Clusters++
		t.LargestCluster = max(t.LargestCluster, c.Size)
		t.MaxGeneration = max(t.MaxGeneration, c.Depth)
		if elsewhere := c.Size - a.local[ci]; elsewhere > 0 {
			t.CrossingChains++
			t.CasesElsewhere += elsewhere
		}
	}
	return t
}

// censored reports whether case i is inside the censoring window: its onset is fewer than w
// days before the analysis date, so its offspring may not all have appeared yet.
func (a *run) censored(i int32) bool {
	return int(a.o.AsOf-a.cases[i].Onset) < a.w
}

func (a *run) rng(stream uint64) *rand.Rand { return rand.New(rand.NewPCG(a.o.Seed, stream)) }

// Streams of the run's random numbers, one per stage, so stages do not share draws.
const (
	streamSerial = iota + 1
	streamWeekly
	streamChain
)

func (a *run) serialInterval() {
	var intervals, bounds []int
	for _, i := range a.selected {
		if j := a.f.Infector[i]; j != forest.None {
			intervals = append(intervals, int(a.cases[i].Onset-a.cases[j].Onset))
			bounds = append(bounds, int(a.o.AsOf-a.cases[j].Onset)) // right truncation at the analysis date
		}
	}
	if a.o.SerialFixed != nil {
		g, err := timing.FixedGamma(a.o.SerialFixed[0], a.o.SerialFixed[1])
		if err != nil {
			a.note("The agreed serial interval could not be used: %v.", err)
			return
		}
		a.serial = g
		si := &SerialInterval{
			N: len(intervals), Fixed: true, BestModel: g.Name(),
			NegativeTreatment: "not fitted: an agreed serial interval was given",
			Models:            []SerialModel{{Name: g.Name(), Mean: g.Mean(), SD: g.SD(), Params: g.Params()}},
			Quantiles:         SerialQuantiles{P50: g.Quantile(0.5), P95: g.Quantile(0.95), P99: g.Quantile(0.99)},
		}
		for _, d := range intervals {
			if d < 0 {
				si.Negative++
			}
		}
		si.Histogram, si.Density = serialViews(intervals, g)
		a.s.SerialInterval = si
		return
	}
	delay := a.delay()
	fit, err := timing.FitSerialInterval(intervals, timing.FitOptions{
		Bootstrap: serialBootstrap, Level: a.o.Level, Workers: a.o.Workers, Rand: a.rng(streamSerial), Truncation: bounds,
		Delay: delay,
	})
	if err != nil {
		a.note("No serial interval was fitted: %v.", err)
		return
	}
	a.serial = fit.Best
	si := &SerialInterval{
		N: fit.N, Negative: fit.Negative, NegativeTreatment: fit.NegativeTreatment, BestModel: fit.BestModel,
		Quantiles:           SerialQuantiles{P50: fit.Quantiles.P50, P95: fit.Quantiles.P95, P99: fit.Quantiles.P99},
		TruncationCorrected: bounds != nil,
		DelayCorrected:      bounds != nil && delay != nil,
	}
	for _, m := range fit.Models {
		si.Models = append(si.Models, SerialModel{Name: m.Name, Mean: m.Mean, SD: m.SD, Params: m.Params, LogLik: m.LogLik, AIC: m.AIC})
	}
	if len(fit.MeanCI) == 2 {
		si.MeanCI = [2]*float64{numeric.FinitePtr(fit.MeanCI[0]), numeric.FinitePtr(fit.MeanCI[1])}
	}
	si.Histogram, si.Density = serialViews(intervals, fit.Best)
	a.s.SerialInterval = si
}

// serialViews bins the observed intervals by day and tabulates the model's density.
func serialViews(intervals []int, si timing.SerialInterval) ([]SerialHistogramBin, []CurvePoint) {
	m := map[int]int{}
	hi := 0
	for _, d := range intervals {
		m[d]++
		hi = max(hi, d)
	}
	days := make([]int, 0, len(m))
	for d := range m {
		days = append(days, d)
	}
	sort.Ints(days)
	hist := make([]SerialHistogramBin, len(days))
	for i, d := range days {
		hist[i] = SerialHistogramBin{Days: d, Count: m[d]}
	}
	top := math.Max(float64(hi), si.Quantile(0.99))
	if math.IsNaN(top) || math.IsInf(top, 0) {
		top = float64(hi)
	}
	var dens []CurvePoint
	for d := 0; d <= int(math.Ceil(top)) && d <= 365; d++ {
		// The model's probability of an interval that rounds to d days.
		p := si.CDF(float64(d)+0.5) - si.CDF(math.Max(float64(d)-0.5, 0))
		if !math.IsNaN(p) {
			dens = append(dens, CurvePoint{X: float64(d), Y: p})
		}
	}
	return hist, dens
}

func (a *run) censorWindow() {
	switch {
	case a.o.CensorDays != nil:
		a.w, a.s.Settings.CensorDaysSource = *a.o.CensorDays, "flag"
	case a.serial != nil && a.s.SerialInterval != nil && !math.IsNaN(a.s.SerialInterval.Quantiles.P95) && a.s.SerialInterval.Quantiles.P95 < 365:
		a.w, a.s.Settings.CensorDaysSource = int(math.Ceil(a.s.SerialInterval.Quantiles.P95)), "serial_interval_p95"
	default:
		a.w, a.s.Settings.CensorDaysSource = DefaultCensorDays, "default"
	}
	a.s.Settings.CensorDays = a.w
}

// offspringTable tabulates the offspring counts of the selected cases the fit uses: under
// censoring those outside the censoring window (censored counts the others), under the
// truncation-aware likelihood those whose observed share reaches offspring.DefaultShareFloor
// (censored counts the others).
func (a *run) offspringTable() (offspring.FreqTable, []int32, int) {
	m := map[int]int{}
	var used []int32
	censored := 0
	for _, i := range a.selected {
		if a.leftOut(i) {
			censored++
			continue
		}
		m[int(a.counts[i])]++
		used = append(used, i)
	}
	return offspring.FromMap(m), used, censored
}

// leftOut reports whether case i is left out of the offspring fit: its observed share is
// below the floor (truncation-aware likelihood) or it is inside the censoring window.
func (a *run) leftOut(i int32) bool {
	if a.shares != nil {
		return a.shares[i] < offspring.DefaultShareFloor
	}
	return a.censored(i)
}

// observedShares sets a.shares under the truncation-aware likelihood: case i with onset d
// days before the analysis date has the share forecast.Elapsed(d) of its infectees in the
// list (the serial interval combined with the reporting delay when one is known). Without a
// serial interval there is no share, and the run falls back to the censoring window.
func (a *run) observedShares() {
	if a.o.Likelihood != LikelihoodTruncation {
		return
	}
	if a.serial == nil {
		a.note("No serial interval is available, so recent cases are left out by the %d-day censoring window instead of being weighted by the share of their infectees already listed.", a.w)
		return
	}
	elapsed, err := forecast.Elapsed(a.serial, a.delay())
	if err != nil {
		a.note("The share of each case's infectees already listed could not be computed (%v); recent cases are left out by the %d-day censoring window instead.", err, a.w)
		return
	}
	a.shares = make([]float64, len(a.cases))
	for _, i := range a.selected {
		a.shares[i] = elapsed(int(a.o.AsOf - a.cases[i].Onset))
	}
}

// exposedOf is the offspring.Exposed table of the given cases' counts and shares.
func (a *run) exposedOf(counts []int32, cases []int32) offspring.Exposed {
	xs, fs := make([]int, len(cases)), make([]float64, len(cases))
	for k, i := range cases {
		xs[k], fs[k] = int(counts[i]), a.shares[i]
	}
	e, _, _ := offspring.NewExposed(xs, fs, 0) // the cases were checked against the floor already
	return e
}

// offspringSample is what the bootstrap resamples: the cases or their clusters, with their
// observed shares under the truncation-aware likelihood.
func (a *run) offspringSample(counts []int32, used []int32) offspring.Sample {
	switch {
	case a.shares != nil && a.o.Unit == UnitCluster:
		var cs []offspring.Exposed
		for _, ids := range a.clusterCases(used) {
			cs = append(cs, a.exposedOf(counts, ids))
		}
		return offspring.Sample{ExposedClusters: cs}
	case a.shares != nil:
		e := a.exposedOf(counts, used)
		return offspring.Sample{Exposed: &e}
	case a.o.Unit == UnitCluster:
		return offspring.Sample{Clusters: a.clusterTablesOf(counts, used)}
	}
	return offspring.Sample{Cases: tableOf(counts, used)}
}

func (a *run) offspring() {
	a.counts = a.f.Offspring
	if a.infer != nil {
		// The model table and the empirical views use one imputed assignment, seeded.
		a.counts = a.recount(a.firstTree(), nil)
	}
	a.observedShares()
	t, used, censored := a.offspringTable()
	o := &Offspring{
		N: t.N(), Censored: censored, CensorDays: a.w, Mean: t.Mean(), Variance: t.Variance(),
		Histogram: t.Histogram(), Superspreaders: []string{}, Likelihood: LikelihoodCensor,
	}
	if a.shares != nil {
		o.Likelihood, o.ShareFloor, o.BelowShareFloor = LikelihoodTruncation, offspring.DefaultShareFloor, censored
	}
	o.SmallSample = smallSample(o.N)
	if o.N < 2 {
		if a.shares != nil {
			a.note("Only %d case(s) have at least %g of their infectees' serial interval behind them: too few to estimate the offspring distribution.", o.N, offspring.DefaultShareFloor)
		} else {
			a.note("Only %d case(s) lie outside the %d-day censoring window: too few to estimate the offspring distribution.", o.N, a.w)
		}
		return
	}
	var exposed offspring.Exposed
	var fits []offspring.ModelFit
	var best string
	var err error
	if a.shares != nil {
		exposed = a.exposedOf(a.counts, used)
		fits, best, err = offspring.FitAllExposed(exposed)
	} else {
		exposed = offspring.FullyObserved(t)
		fits, best, err = offspring.FitAll(t)
	}
	if err != nil {
		a.note("The offspring models could not be fitted: %v.", err)
		return
	}
	o.BestModel = best
	bestAIC := math.Inf(1)
	for _, m := range fits {
		bestAIC = math.Min(bestAIC, m.AIC)
	}
	for i := range fits {
		m := fits[i]
		mf := ModelFit{Name: m.Name, LogLik: m.LogLik, AIC: m.AIC, DeltaAIC: m.AIC - bestAIC}
		for j, name := range m.ParamNames {
			mf.Parameters = append(mf.Parameters, Parameter{Name: name,
				Estimate: numeric.FinitePtr(m.Params[j]), SE: numeric.FinitePtr(m.SE[j])})
		}
		mf.Expected = offspring.ExpectedCounts(exposed, familyNamed(m.Name), m.Params, len(o.Histogram)-1)
		o.Models = append(o.Models, mf)
		if m.Name == a.family.Name() {
			a.fit = &fits[i]
		}
	}
	if a.fit == nil {
		a.note("The %s model was not fitted; no intervals or outlook.", a.family.Name())
		a.s.Offspring = o
		return
	}
	o.PoissonLimit = a.fit.AtLimit()

	var boot *offspring.BootstrapResult
	if a.infer != nil {
		boot, err = a.imputedBootstrap(used)
		a.recordedEstimates(used)
	} else {
		boot, err = offspring.Bootstrap(a.offspringSample(a.counts, used), offspring.BootstrapOptions{
			Replicates: a.o.Replicates, Seed: a.o.Seed, Workers: a.o.Workers, Progress: a.o.Progress,
			Family: a.family,
		})
	}
	if err != nil {
		a.note("The bootstrap failed: %v.", err)
		a.s.Offspring = o
		return
	}
	a.boot = boot
	o.Bootstrap = BootstrapInfo{Replicates: a.o.Replicates, Seed: a.o.Seed, Unit: a.o.Unit, Level: a.o.Level,
		PoissonLimitShare: float64(boot.Unbounded) / float64(len(boot.Replicates))}
	o.R = a.interval(offspring.StatR, boot.Estimate.R())
	o.K = a.interval(offspring.StatK, boot.Estimate[offspring.ParamK])
	a.profile(o, exposed)
	o.ReplicatesR = bins(boot.Replicates, offspring.StatR)
	o.ReplicatesK = bins(boot.Replicates, offspring.StatK)

	o.ZeroShare, _ = offspring.ZeroShare(t) // t has at least two cases here
	o.ShareCausing80pctObserved = numeric.FinitePtr(offspring.ObservedShare(t, a.o.Share))
	counts := make([]int, len(used))
	for k, i := range used {
		counts[k] = int(a.counts[i])
	}
	var sse []int
	o.SSEThreshold, sse, _ = offspring.Superspreaders(counts, a.fit.R()) // R is a finite mean
	sort.SliceStable(sse, func(x, y int) bool { return counts[sse[x]] > counts[sse[y]] })
	o.SuperspreaderOffspring = make([]int, len(sse))
	for k, j := range sse {
		o.Superspreaders = append(o.Superspreaders, a.cases[used[j]].ID)
		o.SuperspreaderOffspring[k] = counts[j]
	}
	for _, p := range offspring.ConcentrationCurve(t) {
		o.Concentration = append(o.Concentration, CurvePoint{X: p.CaseShare, Y: p.TransmissionShare})
	}
	if o.ChainSizeFit = a.chainSizeFit(); o.ChainSizeFit != nil {
		c := o.ChainSizeFit
		c.Overlaps = overlaps(c.RCI[0], c.RCI[1], a.headlineBounds(o.R))
	}
	a.s.Offspring = o
}

// clusterCases groups the used cases by tree, trees in ascending order.
func (a *run) clusterCases(used []int32) [][]int32 {
	per := map[int32][]int32{}
	for _, i := range used {
		per[a.f.Cluster[i]] = append(per[a.f.Cluster[i]], i)
	}
	ids := make([]int32, 0, len(per))
	for c := range per {
		ids = append(ids, c)
	}
	sort.Slice(ids, func(i, j int) bool { return ids[i] < ids[j] })
	out := make([][]int32, len(ids))
	for k, c := range ids {
		out[k] = per[c]
	}
	return out
}

// clusterTablesOf gives one frequency table of counts per tree, over the tree's used cases.
func (a *run) clusterTablesOf(counts []int32, used []int32) []offspring.FreqTable {
	var out []offspring.FreqTable
	for _, ids := range a.clusterCases(used) {
		out = append(out, tableOf(counts, ids))
	}
	return out
}

// interval builds an Estimate for stat from the bootstrap.
func (a *run) interval(stat func(offspring.Params) float64, est float64) Estimate {
	return a.intervalFrom(a.boot, stat, est)
}

// intervalFrom builds an Estimate for stat from boot.
func (a *run) intervalFrom(boot *offspring.BootstrapResult, stat func(offspring.Params) float64, est float64) Estimate {
	iv, err := boot.Interval(stat, est, a.o.Level)
	if err != nil {
		return Estimate{Estimate: numeric.FinitePtr(est)}
	}
	return Estimate{
		Estimate:   numeric.FinitePtr(iv.Estimate),
		Percentile: [2]*float64{numeric.FinitePtr(iv.Percentile[0]), numeric.FinitePtr(iv.Percentile[1])},
		BCa:        [2]*float64{numeric.FinitePtr(iv.BCa[0]), numeric.FinitePtr(iv.BCa[1])},
	}
}

// Minimum chains for a chain-size fit to be shown (ChainSizeInformative).
const (
	MinCompleteChains      = 20
	MinCompleteMultiChains = 5
)

// ChainSizeInformative is the rule that decides whether a chain-size fit says anything: at
// least MinCompleteChains chains have stopped growing and at least MinCompleteMultiChains
// of those hold more than one case. A chain still growing enters the likelihood only as
// "at least this size" [Blumberg & Lloyd-Smith 2013], so it bounds R from below and nothing
// above; chains of one case inform the share that dies at once but not how large the others
// grow. Below these counts the likelihood is flat in R and k, the fit lands anywhere and the
// bootstrap interval runs to the edge of the search (the thresholds are common practice,
// chosen to keep that case out; the reason is stated in the report).
func ChainSizeInformative(complete, completeMulti int) (bool, string) {
	switch {
	case complete < MinCompleteChains:
		return false, fmt.Sprintf("only %d chains have stopped growing, fewer than the %d it needs", complete, MinCompleteChains)
	case completeMulti < MinCompleteMultiChains:
		return false, fmt.Sprintf("only %d of the chains that stopped growing have more than one case, fewer than the %d it needs", completeMulti, MinCompleteMultiChains)
	}
	return true, ""
}

func (a *run) chainSizeFit() *ChainSizeFit {
	var obs []branching.ChainObservation
	complete, multi := 0, 0
	for ci, c := range a.f.Clusters {
		if !a.touches(ci) {
			continue
		}
		growing := int(a.o.AsOf-c.LastOnset) < a.w
		obs = append(obs, branching.ChainObservation{Size: c.Size, Censored: growing})
		if !growing {
			complete++
			if c.Size > 1 {
				multi++
			}
		}
	}
	fit, err := branching.FitChainSizes(obs)
	if err != nil {
		a.note("No chain-size fit: %v.", err)
		return nil
	}
	out := &ChainSizeFit{R: fit.R, K: fit.K, LogLik: fit.LogLik, Clusters: fit.Clusters, Censored: fit.Censored, Converged: true,
		Complete: complete, CompleteMulti: multi}
	out.Informative, out.Reason = ChainSizeInformative(complete, multi)
	// The cluster bootstrap refits the model hundreds of times; with thousands of distinct
	// cluster sizes and many large censored clusters (national line lists) that would keep
	// the analyst waiting, and large-sample (Wald) intervals from the observed information,
	// which such sample sizes justify, stand in for it.
	B := min(a.o.Replicates, chainReplicates)
	cost, _ := branching.ChainFitCost(obs)
	if int64(cost)*chainEvaluationsPerFit*int64(B) > chainBootstrapBudget {
		w, err := branching.WaldChainFit(obs, fit, a.o.Level)
		if err != nil {
			a.note("No intervals for the chain-size fit: %v.", err)
			return out
		}
		out.IntervalMethod = "wald_log"
		out.RCI = [2]*float64{numeric.FinitePtr(w.RLo), numeric.FinitePtr(w.RHi)}
		out.KCI = [2]*float64{w.KLo, w.KHi}
		return out
	}
	bs, err := branching.BootstrapChainFit(obs, B, a.o.Level, a.o.Seed+streamChain, a.o.Workers)
	if err != nil {
		a.note("No intervals for the chain-size fit: %v.", err)
		return out
	}
	out.IntervalMethod, out.Replicates = "cluster_bootstrap", B
	out.RCI = [2]*float64{numeric.FinitePtr(bs.RLo), numeric.FinitePtr(bs.RHi)}
	out.KCI = [2]*float64{bs.KLo, bs.KHi}
	return out
}

// overlaps reports whether the interval [lo, hi] (hi nil: no upper limit) meets the
// interval b; with a bound missing there is no disagreement to explain.
func overlaps(lo, hi *float64, b [2]*float64) bool {
	if lo == nil || b[0] == nil || b[1] == nil {
		return true
	}
	return *lo <= *b[1] && (hi == nil || *hi >= *b[0])
}

func (a *run) outlook() {
	if a.fit == nil || a.boot == nil {
		return
	}
	point := a.boot.Estimate
	d := a.family.Distribution(point)
	ol := &Outlook{Model: d.Name()}
	q := func(p offspring.Params) float64 {
		v, err := branching.ExtinctionProbability(a.family.Distribution(p))
		if err != nil {
			return math.NaN()
		}
		return v
	}
	share := func(p offspring.Params) float64 {
		v, err := branching.ShareByNu(a.family.Distribution(p), a.o.Share)
		if err != nil || v == nil {
			return math.NaN()
		}
		return *v
	}
	ol.ExtinctionProbability = a.interval(q, q(point))
	ol.MajorOutbreakProbability = a.interval(func(p offspring.Params) float64 { return 1 - q(p) }, 1-q(point))
	ol.ShareCausing80pct = a.interval(share, share(point))
	ol.SSEThreshold = offspring.SuperspreadingThreshold(point.R())
	a.currentChains(ol)
	for _, i := range a.selected {
		if a.censored(i) {
			ol.Active++
		}
	}
	reps := make([]offspring.Distribution, 0, projectionReplicates)
	for b := 0; b < len(a.boot.Replicates) && b < projectionReplicates; b++ {
		if p := a.boot.Replicates[b]; !slices.ContainsFunc(p, math.IsNaN) {
			reps = append(reps, a.family.Distribution(p))
		}
	}
	if len(reps) == 0 {
		reps = append(reps, d)
	}
	if pr, err := branching.Project(reps, ol.Active, a.o.Generations); err != nil {
		a.note("No projection: %v.", err)
	} else {
		for _, g := range pr.Generations {
			p := Projection{Generation: g.N, PZero: g.PZero, Mean: g.Mean,
				P50: [2]*int{g.Interval50.Lo, g.Interval50.Hi}, P90: [2]*int{g.Interval90.Lo, g.Interval90.Hi}, Approximate: g.Approximate}
			ol.Projection = append(ol.Projection, p)
		}
	}
	if cs, err := branching.ChainSizes(d, max(a.s.Tree.LargestCluster, 1)); err == nil {
		ol.ChainSize = cs.PMF
	}
	a.s.Outlook = ol
}

func (a *run) endOfOutbreak() {
	if a.serial == nil || a.boot == nil || len(a.selected) == 0 {
		return
	}
	onsets := make([]int, len(a.selected))
	last := a.cases[a.selected[0]].Onset
	for k, i := range a.selected {
		onsets[k] = int(a.cases[i].Onset)
		if a.cases[i].Onset > last {
			last = a.cases[i].Onset
		}
	}
	res, err := branching.EndOfOutbreak(onsets, a.family.Distribution(a.boot.Estimate), a.serial.CDF, int(a.o.AsOf), eooHorizon)
	if err != nil {
		a.note("No end-of-outbreak curve: %v.", err)
		return
	}
	e := &EndOfOutbreak{LastOnset: last}
	if gap := int(a.o.AsOf - last); gap < a.w {
		ago := fmt.Sprintf("%d days before the analysis date", gap)
		switch gap {
		case 0:
			ago = "on the analysis date"
		case 1:
			ago = "the day before the analysis date"
		}
		e.NotYet = fmt.Sprintf("the last case had onset %s, inside the %d-day window in which the people it infected may not yet be reported", ago, a.w)
	}
	lower, upper := a.endOfOutbreakBand(onsets, len(res.Days))
	for k, day := range res.Days {
		p := DayProbability{Date: linelist.Day(day), Probability: res.Probability[k]}
		if lower != nil {
			p.Lower, p.Upper = numeric.FinitePtr(lower[k]), numeric.FinitePtr(upper[k])
		}
		e.Curve = append(e.Curve, p)
	}
	if lower != nil {
		for k, day := range res.Days {
			d := linelist.Day(day)
			if e.P95Range[0] == nil && upper[k] >= 0.95 {
				e.P95Range[0] = &d
			}
			if e.P95Range[1] == nil && lower[k] >= 0.95 {
				e.P95Range[1] = &d
			}
		}
	}
	if res.Day95 != nil {
		d := linelist.Day(*res.Day95)
		e.P95Date = &d
	}
	if res.Day99 != nil {
		d := linelist.Day(*res.Day99)
		e.P99Date = &d
	}
	if a.o.IncubationDays > 0 {
		e.RuleOfThumb = &RuleOfThumb{LongestIncubationDays: a.o.IncubationDays, Date: last + linelist.Day(2*a.o.IncubationDays)}
	}
	a.s.EndOfOutbreak = e
}

// endOfOutbreakBand is the central interval at the run's level of the end-of-outbreak curve
// over the bootstrap replicates (at most projectionReplicates of them), day by day: the
// type-7 quantiles of the replicate curves (a percentile band; common practice). Nil when
// fewer than two replicate curves could be computed.
func (a *run) endOfOutbreakBand(onsets []int, days int) (lower, upper []float64) {
	var curves [][]float64
	for b := 0; b < len(a.boot.Replicates) && b < projectionReplicates; b++ {
		p := a.boot.Replicates[b]
		if slices.ContainsFunc(p, math.IsNaN) {
			continue
		}
		res, err := branching.EndOfOutbreak(onsets, a.family.Distribution(p), a.serial.CDF, int(a.o.AsOf), eooHorizon)
		if err != nil || len(res.Probability) != days {
			continue
		}
		curves = append(curves, res.Probability)
	}
	if len(curves) < 2 {
		return nil, nil
	}
	alpha := (1 - a.o.Level) / 2
	lower, upper = make([]float64, days), make([]float64, days)
	col := make([]float64, len(curves))
	for k := range days {
		for b, c := range curves {
			col[b] = c[k]
		}
		sort.Float64s(col)
		lower[k], upper[k] = numeric.Quantile7(col, alpha), numeric.Quantile7(col, 1-alpha)
	}
	return lower, upper
}

// bins makes a histogram of a statistic over the replicates, of at most 30 bins from the
// smallest value to the 99th percentile; larger values (k can run to thousands in
// replicates near the Poisson limit) are counted in Overflow and +∞ (the Poisson limit
// itself) in Infinite; NaN (failed fits, counted elsewhere) is left out. When the values lie
// on a lattice (R from a case bootstrap is a whole number of offspring over n cases) the bin
// width is a whole number of lattice steps and the edges fall halfway between lattice
// points, so every bin holds the same number of attainable values and no comb appears
// (equal-width bins that ignore the lattice alternate between holding k and k + 1 of them).
func bins(reps []offspring.Params, stat func(offspring.Params) float64) *Bins {
	var xs []float64
	infinite := 0
	for _, p := range reps {
		switch v := stat(p); {
		case math.IsInf(v, 1):
			infinite++
		case !math.IsNaN(v) && !math.IsInf(v, 0):
			xs = append(xs, v)
		}
	}
	if len(xs) == 0 {
		return nil
	}
	sort.Float64s(xs)
	lo, hi := xs[0], xs[int(0.99*float64(len(xs)-1))]
	const maxBins = 30
	n := maxBins
	var start, width float64
	if step := latticeStep(xs); step > 0 {
		per := math.Max(1, math.Ceil((hi-lo)/step/maxBins))
		width = per * step
		start = lo - step/2
		n = max(1, int(math.Ceil((hi-start)/width)))
	} else {
		if hi <= lo {
			hi = lo + 1e-9
		}
		start, width = lo, (hi-lo)/maxBins
	}
	end := start + float64(n)*width
	b := &Bins{Edges: make([]float64, n+1), Counts: make([]int, n), Infinite: infinite}
	for i := range b.Edges {
		b.Edges[i] = start + float64(i)*width
	}
	for _, v := range xs {
		if v > hi || v > end {
			b.Overflow++
			continue
		}
		b.Counts[min(max(int((v-start)/width), 0), n-1)]++
	}
	return b
}

// latticeStep is δ when the distinct values of sorted xs are all whole multiples of δ apart,
// δ their smallest gap (to 1e-6 of a step, well above rounding and well below a step); 0
// when they are not, or when there are fewer than two.
func latticeStep(xs []float64) float64 {
	step := math.Inf(1)
	for i := 1; i < len(xs); i++ {
		if g := xs[i] - xs[i-1]; g > 1e-12*math.Max(1, math.Abs(xs[i])) && g < step {
			step = g
		}
	}
	if math.IsInf(step, 1) {
		return 0
	}
	for i := 1; i < len(xs); i++ {
		g := (xs[i] - xs[0]) / step
		if math.Abs(g-math.Round(g)) > 1e-6 {
			return 0
		}
	}
	return step
}

// weekly computes mean offspring by ISO onset week, all selected cases included and the
// weeks inside the censoring window flagged, with the dispersion of the offspring fit
// behind the intervals.
func (a *run) weekly() {
	if len(a.selected) == 0 {
		return
	}
	onsets := make([]linelist.Day, len(a.selected))
	off := make([]float64, len(a.selected))
	for k, i := range a.selected {
		onsets[k] = a.cases[i].Onset
		off[k] = float64(a.f.Offspring[i])
		if a.expected != nil {
			off[k] += a.expected[i]
		}
	}
	k := 0.0 // let WeeklyR estimate it
	if a.fit != nil {
		if v, _, ok := a.fit.Param("k"); ok {
			k = v // +Inf in the Poisson limit
		}
	}
	res, err := timing.WeeklyR(onsets, off, timing.WeeklyOptions{AnalysisDate: a.o.AsOf, Window: a.w, Level: a.o.Level, Dispersion: k})
	if err != nil {
		a.note("No weekly R: %v.", err)
		return
	}
	a.weekK = k
	if k == 0 {
		a.weekK = res.K
		if res.PoissonLimit {
			a.weekK = math.Inf(1)
		}
	}
	sums := map[linelist.Day]float64{}
	for i, t := range onsets {
		sums[t.ISOWeekStart()] += off[i]
	}
	for _, w := range res.Weeks {
		a.weekSums = append(a.weekSums, weekSum{start: w.WeekStart, n: w.Cases, sum: sums[w.WeekStart], censored: w.Censored})
		a.s.TimeVarying = append(a.s.TimeVarying, WeekR{
			WeekStart: w.WeekStart, Cases: count(w.Cases), R: numeric.FinitePtr(w.R), Lower: numeric.FinitePtr(w.Lower), Upper: numeric.FinitePtr(w.Upper), Censored: w.Censored,
		})
	}
}
