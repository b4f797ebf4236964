package analysis

import (
	"fmt"
	"math"
	"sort"
	"strconv"

	"github.com/caseweave/caseweave/pipeline/forecast"
	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/offspring"
	"github.com/caseweave/caseweave/pipeline/timing"
)

// Choices for Options.InferMethod.
const (
	// InferAugmentation draws each replicate's infectors from a data-augmentation chain that
	// lets the cases that spread more draw more of the missing infectees (timing.Chain).
	InferAugmentation = "augmentation"
	// InferWallingaTeunis draws them from onset timing alone [Wallinga & Teunis 2004].
	InferWallingaTeunis = "wallinga-teunis"
)

// Choices for Options.InferWithin: the cases a missing infector is drawn from share the
// unlinked case's jurisdiction (default), its setting, both, or nothing ("all").
const (
	InferWithinJurisdiction = "jurisdiction"
	InferWithinSetting      = "setting"
	InferWithinBoth         = "jurisdiction+setting"
	InferWithinAll          = "all"
)

// CautionInference is the caution written when inferred links move R or k beyond the
// interval of the recorded links alone (inferenceMatters).
const CautionInference = "inferred_links_matter"

// Streams of the inferred-infector draws: streamImpute + b<<8 is replicate b's
// Wallinga–Teunis assignment, streamAugment the one augmentation chain.
const (
	streamImpute  = 101
	streamAugment = 99
)

func (o *Options) inferDefaults() error {
	switch o.InferMethod {
	case "":
		o.InferMethod = InferAugmentation
	case InferAugmentation, InferWallingaTeunis:
	default:
		return fmt.Errorf("the inference method must be %q or %q, got %q", InferAugmentation, InferWallingaTeunis, o.InferMethod)
	}
	switch o.InferWithin {
	case "":
		o.InferWithin = InferWithinJurisdiction
	case InferWithinJurisdiction, InferWithinSetting, InferWithinBoth, InferWithinAll:
	default:
		return fmt.Errorf("inferred infectors are drawn within %q, %q, %q or %q, got %q",
			InferWithinJurisdiction, InferWithinSetting, InferWithinBoth, InferWithinAll, o.InferWithin)
	}
	if o.InferAscertainment == 0 {
		o.InferAscertainment = 1
	}
	if !(o.InferAscertainment > 0 && o.InferAscertainment <= 1) {
		return fmt.Errorf("the share of infectors in the list must be in (0, 1], got %v", o.InferAscertainment)
	}
	return nil
}

// inferMissing prepares the candidate infectors of every non-imported case without a
// recorded infector, restricted to the same group (InferWithin) and to the serial interval's
// 99th percentile, with their Wallinga–Teunis weights [Wallinga & Teunis 2004, Am J Epidemiol
// 160:509]; with InferAugmentation it also starts the augmentation chain from them.
func (a *run) inferMissing() {
	if !a.o.InferMissing {
		return
	}
	a.s.Settings.InferMissing = true
	if a.serial == nil {
		a.note("Missing infectors were not inferred: that needs a serial interval, and none could be fitted (give --serial-fixed MEAN,SD).")
		return
	}
	n := len(a.cases)
	onset := make([]linelist.Day, n)
	group := make([]string, n)
	imported := make([]bool, n)
	linked := make([]bool, n)
	nonImported := 0
	for i := range a.cases {
		onset[i], group[i], imported[i] = a.cases[i].Onset, a.candidateGroup(i), a.cases[i].Imported
		linked[i] = a.f.Infector[i] != forest.None
		if !imported[i] {
			nonImported++
		}
	}
	inf, err := timing.InferInfectors(onset, group, imported, linked, a.serial)
	if err != nil {
		a.note("Missing infectors were not inferred: %v.", err)
		return
	}
	sum := inf.Summary()
	links := &InferredLinks{Inferred: sum.Inferred, NoCandidate: sum.NoCandidate, Method: a.o.InferMethod}
	if nonImported > 0 {
		links.Share = float64(sum.Inferred) / float64(nonImported)
	}
	if a.o.InferMethod == InferAugmentation && sum.Inferred > 0 {
		chain, err := a.startChain(inf)
		if err != nil {
			a.note("Missing infectors were not inferred: %v.", err)
			return
		}
		a.chain = chain
		links.BurnIn = timing.DefaultBurnIn
	}
	a.infer = inf
	a.expected = inf.ExpectedOffspring()
	a.s.InferredLinks = links
	switch a.o.InferMethod {
	case InferAugmentation:
		a.note("%d missing infectors were inferred by data augmentation (Tanner & Wong 1987): each case's chance of being the infector follows its onset and how many infectees it has, so superspreading is kept; %d cases had no candidate. The chain starts from Wallinga–Teunis weights and discards %d sweeps; the offspring table shows one completed tree, and each bootstrap replicate takes the next.",
			sum.Inferred, sum.NoCandidate, timing.DefaultBurnIn)
	default:
		a.note("%d missing infectors were inferred by Wallinga–Teunis weights (%d cases had no candidate); the offspring table shows one imputed assignment, and every bootstrap replicate draws a fresh one.",
			sum.Inferred, sum.NoCandidate)
	}
	a.note("The chain-size fit uses the recorded chains only: untraced links split chains, so it sees more and smaller chains than the outbreak had.")
}

// candidateGroup is case i's key for InferWithin: candidates share it. Both values are
// quoted, so two different pairs never give one key.
func (a *run) candidateGroup(i int) string {
	c := &a.cases[i]
	switch a.o.InferWithin {
	case InferWithinSetting:
		return c.Setting
	case InferWithinBoth:
		return strconv.Quote(c.Jurisdiction) + strconv.Quote(c.Setting)
	case InferWithinAll:
		return ""
	}
	return c.Jurisdiction
}

// startChain runs the augmentation's burn-in. F_i is forecast.Elapsed at the case's days
// from onset to the analysis date (the serial interval and the reporting delay).
func (a *run) startChain(inf *timing.Infectors) (*timing.Chain, error) {
	elapsedAt, err := forecast.Elapsed(a.serial, a.delay())
	if err != nil {
		return nil, err
	}
	el := make([]float64, len(a.cases))
	for i := range a.cases {
		el[i] = 1 // an onset after the analysis date cannot be (the reader rejects it); a guard
		if lag := int64(a.o.AsOf) - int64(a.cases[i].Onset); lag >= 0 {
			el[i] = elapsedAt(int(min(lag, math.MaxInt32)))
		}
	}
	return inf.Augment(a.rng(streamAugment), timing.AugmentOptions{
		Recorded: a.f.Offspring, Elapsed: el, Ascertainment: a.o.InferAscertainment,
	})
}

// firstTree is the completed tree of replicate 0, which the offspring table also shows.
func (a *run) firstTree() []int {
	if a.chain != nil {
		if a.tree0 == nil {
			a.tree0 = a.chain.Next(nil)
		}
		return a.tree0
	}
	return a.infer.Sample(a.rng(streamImpute), nil)
}

// tree is replicate b's completed tree: the chain's next one (b = 0: firstTree), or a
// fresh Wallinga–Teunis draw from the replicate's own stream.
func (a *run) tree(b int, dst []int) []int {
	switch {
	case b == 0:
		return append(dst[:0], a.firstTree()...)
	case a.chain != nil:
		return a.chain.Next(dst)
	default:
		return a.infer.Sample(a.rng(streamImpute+uint64(b)<<8), dst)
	}
}

// recount adds the links of one sampled assignment to the recorded offspring counts.
func (a *run) recount(assign []int, dst []int32) []int32 {
	dst = append(dst[:0], a.f.Offspring...)
	for _, i := range assign {
		if i >= 0 {
			dst[i]++
		}
	}
	return dst
}

// tableOf tabulates counts over the given cases.
func tableOf(counts []int32, cases []int32) offspring.FreqTable {
	m := map[int]int{}
	for _, i := range cases {
		m[int(counts[i])]++
	}
	return offspring.FromMap(m)
}

// imputedBootstrap carries linkage uncertainty into the intervals: replicate b takes one
// completed tree (tree), recounts offspring, and then resamples cases (or clusters) from
// that table. The point estimate is multiple imputation's [Rubin 1987, Multiple Imputation
// for Nonresponse in Surveys]: R̂ the mean offspring count averaged over the trees (for
// Wallinga–Teunis, exactly, from the expected counts), k̂ the median of the k̂ of the
// un-resampled completed tables. The BCa acceleration comes from the jackknife of the first
// completed table. It also fills the stability of the links, the mean number sent outside
// the list, the burn-in check and, for the augmentation, the expected inferred offspring.
func (a *run) imputedBootstrap(used []int32) (*offspring.BootstrapResult, error) {
	B := a.o.Replicates
	res := &offspring.BootstrapResult{Method: a.o.Unit, Seed: a.o.Seed, Family: a.family, Replicates: make([]offspring.Params, B)}
	ks := make([]float64, 0, B)
	var assign []int
	var counts []int32
	pairs := map[[2]int32]int32{} // (case, infector or −1) → trees
	expected := make([]float64, len(a.cases))
	var trace []float64
	meanSum, outside := 0.0, 0
	for b := 0; b < B; b++ {
		assign = a.tree(b, assign)
		counts = a.recount(assign, counts)
		for j, i := range assign {
			if a.infer.Inferred(j) {
				pairs[[2]int32{int32(j), int32(i)}]++
				if i < 0 {
					outside++
				} else {
					expected[i]++
				}
			}
		}
		if a.chain != nil {
			trace = append(trace, a.chain.K())
		}
		one, err := offspring.Bootstrap(a.offspringSample(counts, used), offspring.BootstrapOptions{Replicates: 1, Seed: a.o.Seed + uint64(b) + 1, Workers: 1, Family: a.family})
		if err != nil {
			return nil, err
		}
		if b == 0 {
			res.Jackknife, res.JackknifeWeights, res.Units = one.Jackknife, one.JackknifeWeights, one.Units
		}
		res.Replicates[b] = one.Replicates[0]
		ks = append(ks, one.Estimate[offspring.ParamK])
		meanSum += one.Estimate.R()
		if a.o.Progress != nil {
			a.o.Progress(b+1, B)
		}
	}
	// The mean of the imputed tables' R̂ (Rubin's combined estimate); with Wallinga–Teunis
	// weights under the censoring rule, the mean count with the expected inferred offspring.
	r := meanSum / float64(B)
	if a.chain == nil {
		if a.shares == nil {
			sum := 0.0
			for _, i := range used {
				sum += float64(a.f.Offspring[i]) + a.expected[i]
			}
			r = sum / float64(len(used))
		}
	} else {
		for i := range expected {
			expected[i] /= float64(B)
		}
		a.expected = expected
	}
	sort.Float64s(ks)
	res.Estimate = offspring.Params{r, ks[len(ks)/2]}
	res.Unbounded, res.FailedFits = offspring.CountUnbounded(res.Replicates)
	a.linkStability(pairs, B)
	a.s.InferredLinks.Outside = float64(outside) / float64(B)
	if z := timing.Geweke(trace); !math.IsNaN(z) {
		a.s.InferredLinks.BurnInZ = numeric.FinitePtr(z)
		if math.Abs(z) > 3 {
			a.note("The augmentation's trace of k drifts between the first and last kept trees (Geweke z = %.1f): more bootstrap replicates give it longer to settle.", z)
		}
	}
	return res, nil
}

// linkStability fills Stability from the trees each (case, infector) pair appeared in.
func (a *run) linkStability(pairs map[[2]int32]int32, trees int) {
	top := map[int32]int32{}
	for p, n := range pairs {
		top[p[0]] = max(top[p[0]], n)
	}
	if len(top) == 0 {
		return
	}
	keys := make([]int32, 0, len(top))
	for j := range top {
		keys = append(keys, j)
	}
	sort.Slice(keys, func(x, y int) bool { return keys[x] < keys[y] }) // a fixed order of the sum
	s := 0.0
	for _, j := range keys {
		s += float64(top[j]) / float64(trees)
	}
	a.s.InferredLinks.Stability = numeric.FinitePtr(s / float64(len(keys)))
}

// recordedEstimates fills RecordedR and RecordedK: the bootstrap of the recorded links
// alone, with the options and seed a run without --infer-missing uses, so the two agree.
func (a *run) recordedEstimates(used []int32) {
	// The same sample, bootstrap and profile intervals as a run without inference.
	boot, err := offspring.Bootstrap(a.offspringSample(a.f.Offspring, used), offspring.BootstrapOptions{
		Replicates: a.o.Replicates, Seed: a.o.Seed, Workers: a.o.Workers, Family: a.family,
	})
	if err != nil {
		return
	}
	l := a.s.InferredLinks
	l.RecordedR = a.intervalFrom(boot, offspring.StatR, boot.Estimate.R())
	l.RecordedK = a.intervalFrom(boot, offspring.StatK, boot.Estimate[offspring.ParamK])
	if a.shares != nil {
		if r, k, err := offspring.ProfileIntervals(a.exposedOf(a.f.Offspring, used), a.o.Level); err == nil {
			l.RecordedR.Profile = [2]*float64{numeric.FinitePtr(r.Bounds[0]), numeric.FinitePtr(r.Bounds[1])}
			l.RecordedK.Profile = [2]*float64{numeric.FinitePtr(k.Bounds[0]), numeric.FinitePtr(k.Bounds[1])}
		}
	}
}

// inferenceMatters applies the rule for the caution: the choice matters when the estimate
// of R or of k with inferred links lies outside the headline interval of the estimate from
// recorded links alone, or the reverse (common practice: two estimates each outside the
// other's interval differ by more than the data can tell apart).
func (a *run) inferenceMatters() {
	l, o := a.s.InferredLinks, a.s.Offspring
	if l == nil || o == nil {
		return
	}
	outside := func(e, in Estimate) bool {
		b := a.headlineBounds(in)
		return e.Estimate != nil && b[0] != nil && b[1] != nil && (*e.Estimate < *b[0] || *e.Estimate > *b[1])
	}
	moved := func(with, without Estimate) bool { return outside(with, without) || outside(without, with) }
	l.Matters = moved(o.R, l.RecordedR) || moved(o.K, l.RecordedK)
	if !l.Matters {
		return
	}
	a.caution(CautionInference, "The infector of %.0f%% of the non-imported cases is inferred, and it moves the estimates beyond what the recorded links alone allow: R %s and k %s with inferred links, R %s and k %s without. Both rest on the recorded links; the difference rests on the inference (%s).",
		100*l.Share, a.estimateText(o.R), a.estimateText(o.K), a.estimateText(l.RecordedR), a.estimateText(l.RecordedK), l.Method)
}

// estimateText is "0.80 (0.70–0.91)" from the headline interval, or "n/a".
func (a *run) estimateText(e Estimate) string {
	if e.Estimate == nil {
		return "n/a"
	}
	b := a.headlineBounds(e)
	if b[0] == nil || b[1] == nil {
		return fmt.Sprintf("%.2f", *e.Estimate)
	}
	return fmt.Sprintf("%.2f (%.2f–%.2f)", *e.Estimate, *b[0], *b[1])
}
