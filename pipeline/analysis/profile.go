package analysis

import (
	"fmt"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

// familyNamed is the offspring family of a fitted model's name (the negative binomial,
// which nests the others, if the name is unknown).
func familyNamed(name string) offspring.Family {
	if f, ok := offspring.FamilyNamed(name); ok {
		return f
	}
	return offspring.NegBinFamily{}
}

// profileCoverage is the smallest coverage of the 95% profile-likelihood interval for R and
// for k over the scenarios k ∈ {0.1, 0.3, 1, 5}, R ∈ {0.5, 0.9, 1.5} of the small-sample
// coverage study at each number of cases (pipeline/offspring TestSmallSampleCoverage with
// CASEWEAVE_LONG=1, 2000 datasets a scenario; VALIDATION.md), with the bootstrap
// percentile interval's beside it.
var profileCoverage = []struct {
	n                  int
	r, k, percR, percK float64
}{
	{30, 0.938, 0.934, 0.811, 0.874},
	{50, 0.938, 0.941, 0.851, 0.904},
	{100, 0.943, 0.944, 0.898, 0.919},
	{200, 0.941, 0.943, 0.922, 0.927},
}

// coverageSentence says how the headline interval for R and k performed in the coverage
// study at the study size nearest below n cases.
func coverageSentence(interval string, n int) string {
	if interval != IntervalProfile && interval != IntervalPercentile {
		return fmt.Sprintf("The coverage study in VALIDATION.md did not cover the %s interval's small-sample behaviour separately from the percentile interval's.", interval)
	}
	row := profileCoverage[0]
	for _, c := range profileCoverage {
		if c.n <= n {
			row = c
		}
	}
	r, k := row.r, row.k
	name := "profile-likelihood"
	if interval == IntervalPercentile {
		r, k, name = row.percR, row.percK, "percentile bootstrap"
	}
	lead := fmt.Sprintf("In simulations with %d cases", row.n)
	if n < profileCoverage[0].n {
		lead = fmt.Sprintf("This estimate rests on %d cases, fewer than the smallest size simulated; with %d cases", n, row.n)
	}
	return fmt.Sprintf("%s, the 95%% %s interval held the true R in at least %.1f%% and the true k in at least %.1f%% of outbreaks, over dispersions k from 0.1 to 5 and R from 0.5 to 1.5.",
		lead, name, 100*r, 100*k)
}

// profile adds the profile-likelihood intervals for R and k (offspring.ProfileIntervals) to
// the offspring section, and says which interval headlines and how it performed at this
// number of cases.
func (a *run) profile(o *Offspring, e offspring.Exposed) {
	o.IntervalShown = a.o.Interval
	o.IntervalCoverage = coverageSentence(a.o.Interval, o.N)
	if a.infer != nil {
		// The likelihood of one imputed table ignores linkage uncertainty: no profile
		// interval, the bootstrap one headlines.
		if a.o.Interval == IntervalProfile {
			o.IntervalShown = IntervalPercentile
			o.IntervalCoverage = "Missing infectors were inferred, so the intervals are the percentile bootstrap's, which carry the linkage uncertainty. " + coverageSentence(IntervalPercentile, o.N)
		}
		return
	}
	r, k, err := offspring.ProfileIntervals(e, a.o.Level)
	if err != nil {
		a.note("The profile-likelihood intervals could not be computed (%v); the percentile bootstrap intervals are shown.", err)
		if a.o.Interval == IntervalProfile {
			o.IntervalShown = IntervalPercentile
			o.IntervalCoverage = coverageSentence(IntervalPercentile, o.N)
		}
		return
	}
	o.R.Profile = [2]*float64{numeric.FinitePtr(r.Bounds[0]), numeric.FinitePtr(r.Bounds[1])}
	o.K.Profile = [2]*float64{numeric.FinitePtr(k.Bounds[0]), numeric.FinitePtr(k.Bounds[1])}
}
