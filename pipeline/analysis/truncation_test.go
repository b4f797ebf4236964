package analysis

import (
	"math"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
	"github.com/caseweave/caseweave/pipeline/timing"
)

// TestTruncationAwareDefault: on a growing outbreak cut at the analysis date the default fit
// keeps every case whose share of infectees already listed reaches the floor, with the
// share F(d) = P(serial interval rounds to ≤ d days) of the agreed gamma serial interval (no
// report dates, so no reporting delay), where the censored fit drops the last ⌈p95⌉ days.
// The fit must equal offspring.FitExposed on the table built here from the cases, and the
// profile interval must headline R and k.
func TestTruncationAwareDefault(t *testing.T) {
	cases, _ := outbreak(t, 1.4, 0.5, 40, 21, "2026-03-12")
	asOf := day("2026-03-12")
	fixed := [2]float64{5, 2.5}
	s := analyse(t, cases, Options{AsOf: asOf, Replicates: 50, Seed: 1, SerialFixed: &fixed})
	c := analyse(t, cases, Options{AsOf: asOf, Replicates: 50, Seed: 1, SerialFixed: &fixed, Likelihood: LikelihoodCensor})
	o, oc := s.Offspring, c.Offspring
	if o == nil || oc == nil {
		t.Fatal("no offspring section")
	}
	if o.Likelihood != LikelihoodTruncation || oc.Likelihood != LikelihoodCensor {
		t.Fatalf("likelihoods %q and %q", o.Likelihood, oc.Likelihood)
	}
	si, _ := timing.FixedGamma(5, 2.5)
	var xs []int
	var fs []float64
	below := 0
	kids := map[string]int{}
	for _, cs := range cases {
		if cs.InfectorID != "" {
			kids[cs.InfectorID]++
		}
	}
	for _, cs := range cases {
		f := si.CDF(float64(asOf-cs.Onset) + 0.5)
		if f < 0.1 {
			below++
			continue
		}
		xs, fs = append(xs, kids[cs.ID]), append(fs, f)
	}
	if o.BelowShareFloor != below || o.Censored != below || o.N != len(xs) {
		t.Fatalf("n %d, below the floor %d (censored %d); want %d and %d", o.N, o.BelowShareFloor, o.Censored, len(xs), below)
	}
	if !(o.N > oc.N+50) {
		t.Fatalf("truncation-aware fit uses %d cases, censored %d: want many more", o.N, oc.N)
	}
	e, _, err := offspring.NewExposed(xs, fs, 0)
	if err != nil {
		t.Fatal(err)
	}
	want, err := offspring.FitExposed(e, offspring.NegBinFamily{})
	if err != nil {
		t.Fatal(err)
	}
	var got *ModelFit
	for i := range o.Models {
		if o.Models[i].Name == offspring.NameNegativeBinomial {
			got = &o.Models[i]
		}
	}
	if got == nil || math.Abs(*got.Parameters[0].Estimate-want.Params[0]) > 1e-9*want.Params[0] || math.Abs(got.LogLik-want.LogLik) > 1e-9*math.Abs(want.LogLik) {
		t.Fatalf("negative binomial fit %+v, want R %v log L %v", got, want.Params[0], want.LogLik)
	}
	// The naive mean count is biased low; the fitted R is above it here.
	if !(want.Params[0] > o.Mean) {
		t.Errorf("R̂ %v not above the mean observed count %v", want.Params[0], o.Mean)
	}
	r, k, err := offspring.ProfileIntervals(e, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	p := o.R.Profile
	if p[0] == nil || p[1] == nil || math.Abs(*p[0]-r.Bounds[0]) > 1e-9 || math.Abs(*p[1]-r.Bounds[1]) > 1e-9 {
		t.Fatalf("R profile interval %v, want %v", p, r.Bounds)
	}
	if h := o.K.Headline(s.Settings.Interval); h[0] == nil || math.Abs(*h[0]-k.Bounds[0]) > 1e-9 {
		t.Fatalf("k headline %v, want the profile interval %v", h, k.Bounds)
	}
	if s.Settings.Interval != IntervalProfile || o.IntervalShown != IntervalProfile || !strings.Contains(o.IntervalCoverage, "profile-likelihood") {
		t.Errorf("interval %q shown %q, sentence %q", s.Settings.Interval, o.IntervalShown, o.IntervalCoverage)
	}
}

// TestCoverageSentence: the sentence quotes the study row at or below n.
func TestCoverageSentence(t *testing.T) {
	for _, c := range []struct {
		n    int
		want string
	}{{12, "fewer than the smallest size simulated; with 30 cases"}, {30, "with 30 cases, the 95% profile-likelihood interval held the true R in at least 93.8%"},
		{99, "with 50 cases"}, {100, "with 100 cases"}, {5000, "with 200 cases"}} {
		if got := coverageSentence(IntervalProfile, c.n); !strings.Contains(got, c.want) {
			t.Errorf("n = %d: %q lacks %q", c.n, got, c.want)
		}
	}
	if got := coverageSentence(IntervalPercentile, 30); !strings.Contains(got, "percentile bootstrap interval held the true R in at least 81.1%") {
		t.Errorf("percentile: %q", got)
	}
}
