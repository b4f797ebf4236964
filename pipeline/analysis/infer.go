package analysis

import (
	"github.com/caseweave/caseweave/pipeline/linelist"
	"sort"

	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/offspring"
	"github.com/caseweave/caseweave/pipeline/timing"
)

// streamImpute is the random stream of the inferred-infector assignments.
const streamImpute = 101

// inferMissing prepares Wallinga–Teunis infector probabilities for every non-imported case
// without a recorded infector [Wallinga & Teunis 2004, Am J Epidemiol 160:509], candidates
// restricted to the same jurisdiction and to the serial interval's 99th percentile.
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
	for i := range a.cases {
		onset[i], group[i], imported[i] = a.cases[i].Onset, a.cases[i].Jurisdiction, a.cases[i].Imported
		linked[i] = a.f.Infector[i] != forest.None
	}
	inf, err := timing.InferInfectors(onset, group, imported, linked, a.serial)
	if err != nil {
		a.note("Missing infectors were not inferred: %v.", err)
		return
	}
	a.infer = inf
	a.expected = inf.ExpectedOffspring()
	sum := inf.Summary()
	a.s.InferredLinks = &InferredLinks{Inferred: sum.Inferred, NoCandidate: sum.NoCandidate}
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

// imputedBootstrap carries linkage uncertainty into the intervals: replicate b draws a fresh
// infector assignment (its own seeded stream), recounts offspring, and then resamples cases
// (or clusters) from that table. The point estimate is multiple imputation's [Rubin 1987,
// Multiple Imputation for Nonresponse in Surveys]: R̂ is the mean of the expected offspring
// counts (exact), k̂ the median of the k̂ of the un-resampled imputed tables. The BCa
// acceleration comes from the jackknife of the first imputed table.
func (a *run) imputedBootstrap(used []int32) (*offspring.BootstrapResult, error) {
	B := a.o.Replicates
	res := &offspring.BootstrapResult{Method: a.o.Unit, Seed: a.o.Seed, Family: a.family, Replicates: make([]offspring.Params, B)}
	ks := make([]float64, 0, B)
	rSum := 0.0 // Σ of the imputed tables' R̂, for the truncation-aware point estimate
	var assign []int
	var counts []int32
	for b := 0; b < B; b++ {
		rng := a.rng(streamImpute + uint64(b)<<8)
		assign = a.infer.Sample(rng, assign)
		counts = a.recount(assign, counts)
		one, err := offspring.Bootstrap(a.offspringSample(counts, used), offspring.BootstrapOptions{Replicates: 1, Seed: a.o.Seed + uint64(b) + 1, Workers: 1, Family: a.family})
		if err != nil {
			return nil, err
		}
		if b == 0 {
			res.Jackknife, res.JackknifeWeights, res.Units = one.Jackknife, one.JackknifeWeights, one.Units
		}
		res.Replicates[b] = one.Replicates[0]
		ks = append(ks, one.Estimate[offspring.ParamK])
		rSum += one.Estimate.R()
		if a.o.Progress != nil {
			a.o.Progress(b+1, B)
		}
	}
	sum := 0.0
	for _, i := range used {
		sum += float64(a.f.Offspring[i]) + a.expected[i]
	}
	sort.Float64s(ks)
	res.Estimate = offspring.Params{sum / float64(len(used)), ks[len(ks)/2]}
	if a.shares != nil {
		// Under the truncation-aware likelihood the mean count is not R̂: the mean of the
		// imputed tables' R̂ is (Rubin's combined estimate).
		res.Estimate[offspring.ParamR] = rSum / float64(B)
	}
	res.Unbounded, res.FailedFits = offspring.CountUnbounded(res.Replicates)
	return res, nil
}
