package analysis

import (
	"bytes"
	"encoding/json"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/offspring"
	"github.com/caseweave/caseweave/pipeline/simulate"
)

func day(s string) linelist.Day {
	d, err := linelist.ParseISODay(s)
	if err != nil {
		panic(err)
	}
	return d
}

// outbreak simulates a finished outbreak (observation long after its end) as cases.
func outbreak(t *testing.T, R, k float64, index int, seed uint64, untilDate string) ([]linelist.Case, []simulate.Record) {
	t.Helper()
	until := day(untilDate)
	recs, err := simulate.Run(simulate.Scenario{
		R: R, K: k, SerialMean: 5, SerialSD: 2.5, IndexCases: index, Start: day("2026-01-05"),
		IndexSpreadDays: 60, Until: &until, Jurisdictions: []string{"North", "South"},
		Settings: []string{"home", "work"}, AgeGroups: []string{"0-17", "18-64", "65+"},
		StayProbability: 0.95, AssortativeAge: 0.5, Seed: seed,
	})
	if err != nil {
		t.Fatal(err)
	}
	cases := make([]linelist.Case, len(recs))
	for i, r := range recs {
		cases[i] = linelist.Case{ID: r.ID, InfectorID: r.InfectorID, Onset: r.Onset, Imported: r.Imported, Row: i + 2,
			Strata: &linelist.Strata{Jurisdiction: r.Jurisdiction, Setting: r.Setting, AgeGroup: r.AgeGroup}}
	}
	return cases, recs
}

func analyse(t *testing.T, cases []linelist.Case, o Options) *Summary {
	t.Helper()
	ll := &linelist.LineList{Cases: cases, Rows: len(cases), Sources: []linelist.Source{{Path: "test.csv", SHA256: "test", Rows: len(cases), Used: len(cases)}}}
	s, err := Run("test.csv", ll, forest.Build(cases), o)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// Wallinga & Teunis (2004): with 20% of links removed at random, ignoring the gaps biases
// mean offspring low by about 20%, and inference (here the default, data augmentation
// started from Wallinga–Teunis weights) brings it back to the complete-data value within
// sampling error.
func TestInferMissingRecoversR(t *testing.T) {
	cases, _ := outbreak(t, 0.8, 0.5, 600, 42, "2027-12-31")
	zero := 0
	o := Options{AsOf: day("2028-01-01"), CensorDays: &zero, Replicates: 200, Seed: 3}
	full := analyse(t, cases, o)

	gappy := make([]linelist.Case, len(cases))
	copy(gappy, cases)
	rng := rand.New(rand.NewPCG(9, 9))
	removed := 0
	for i := range gappy {
		if gappy[i].InfectorID != "" && rng.Float64() < 0.2 {
			gappy[i].InfectorID = ""
			removed++
		}
	}
	ignored := analyse(t, gappy, o)
	oi := o
	oi.InferMissing = true
	inferred := analyse(t, gappy, oi)

	rFull, rIgn, rInf := *full.Offspring.R.Estimate, *ignored.Offspring.R.Estimate, *inferred.Offspring.R.Estimate
	n := float64(full.Offspring.N)
	// Standard error of the mean under the negative binomial: sqrt(R(1 + R/k)/n)
	// [Lloyd-Smith et al. 2005].
	se := math.Sqrt(rFull * (1 + rFull/0.5) / n)
	t.Logf("%d cases, %d links removed: complete-data R %.4f, gaps ignored %.4f, inferred %.4f (SE %.4f); inferred links %d, no candidate %d",
		len(cases), removed, rFull, rIgn, rInf, se, inferred.InferredLinks.Inferred, inferred.InferredLinks.NoCandidate)
	if math.Abs(rInf-rFull) > 3*se {
		t.Errorf("inferred R %.4f is not within 3 SE of the complete-data %.4f", rInf, rFull)
	}
	if rFull-rIgn < 0.1*rFull {
		t.Errorf("ignoring 20%% of links should bias R low by about 20%%: %.4f vs %.4f", rIgn, rFull)
	}
	// Linkage uncertainty widens the interval relative to the complete data.
	wFull := *full.Offspring.R.Percentile[1] - *full.Offspring.R.Percentile[0]
	wInf := *inferred.Offspring.R.Percentile[1] - *inferred.Offspring.R.Percentile[0]
	t.Logf("95%% interval widths: complete %.4f, inferred %.4f", wFull, wInf)
	if wInf < 0.9*wFull {
		t.Errorf("the inferred interval (%.4f) should not be narrower than the complete-data one (%.4f)", wInf, wFull)
	}
}

// Same input, seed and analysis date give byte-identical JSON, whatever the worker count.
func TestDeterministicAcrossWorkers(t *testing.T) {
	cases, _ := outbreak(t, 1.1, 0.4, 40, 5, "2026-05-01")
	o := Options{AsOf: day("2026-05-01"), Replicates: 300, Seed: 11, Workers: 1}
	a, _ := json.Marshal(analyse(t, cases, o))
	o.Workers = 2
	b, _ := json.Marshal(analyse(t, cases, o))
	if !bytes.Equal(a, b) {
		t.Fatal("1 and 2 workers gave different summaries")
	}
	o.Seed = 12
	c, _ := json.Marshal(analyse(t, cases, o))
	if bytes.Equal(a, c) {
		t.Fatal("a different seed gave the same summary")
	}
}

// The censoring window leaves out exactly the cases with onset fewer than w days before
// the analysis date (common practice).
func TestCensoringWindow(t *testing.T) {
	cases, _ := outbreak(t, 0.9, 0.5, 60, 8, "2026-12-31")
	asOf := cases[len(cases)-1].Onset + 3
	w := 10
	s := analyse(t, cases, Options{AsOf: asOf, CensorDays: &w, Replicates: 50, Seed: 1, Likelihood: LikelihoodCensor})
	want := 0
	for _, c := range cases {
		if int(asOf-c.Onset) < w {
			want++
		}
	}
	if s.Offspring.Censored != want || s.Offspring.N != len(cases)-want || s.Outlook.Active != want {
		t.Fatalf("censored %d, n %d, active %d; want %d, %d, %d", s.Offspring.Censored, s.Offspring.N, s.Outlook.Active, want, len(cases)-want, want)
	}
	if s.Settings.CensorDays != w || s.Settings.CensorDaysSource != "flag" {
		t.Fatalf("settings %+v", s.Settings)
	}
}

// TestBinsCountWhatTheyLeaveOut checks the bootstrap histogram's bookkeeping: every finite
// value is in a bin or in Overflow, +∞ (k in the Poisson limit) in Infinite, NaN nowhere
// (common practice: the counts must add up to the replicates).
func TestBinsCountWhatTheyLeaveOut(t *testing.T) {
	var reps []offspring.Params
	for i := range 200 {
		reps = append(reps, offspring.Params{1, 0.3 + float64(i)/100})
	}
	reps = append(reps, offspring.Params{1, math.Inf(1)}, offspring.Params{1, math.Inf(1)},
		offspring.Params{1, math.NaN()}, offspring.Params{1, 1e4})
	b := bins(reps, offspring.StatK)
	binned := 0
	for _, c := range b.Counts {
		binned += c
	}
	if b.Infinite != 2 || binned+b.Overflow != 201 || b.Overflow < 1 {
		t.Fatalf("binned %d, overflow %d, infinite %d: want 201 finite values binned or over, 2 infinite",
			binned, b.Overflow, b.Infinite)
	}
}

// Bootstrap values of R = (whole number)/n lie on a lattice of step 1/n: each bin must span
// the same whole number of lattice steps, with its edges halfway between lattice points, or
// the histogram shows a comb (common practice for histograms of discrete values).
func TestBinsFollowTheLattice(t *testing.T) {
	const n = 151
	rng := rand.New(rand.NewPCG(1, 2))
	var reps []offspring.Params
	for range 1000 {
		m := 0
		for range n {
			m += rng.IntN(3) // offspring 0, 1 or 2
		}
		reps = append(reps, offspring.Params{float64(m) / n, 0.5})
	}
	b := bins(reps, offspring.StatR)
	step := 1.0 / n
	w := b.Edges[1] - b.Edges[0]
	if per := w / step; math.Abs(per-math.Round(per)) > 1e-6 || per < 1 {
		t.Fatalf("bin width %v is %v lattice steps, not a whole number", w, per)
	}
	for _, e := range b.Edges {
		if off := e/step - math.Floor(e/step); math.Abs(off-0.5) > 1e-6 {
			t.Fatalf("edge %v lies %v of a step past a lattice point, not halfway", e, off)
		}
	}
	if len(b.Counts) > 30 {
		t.Errorf("%d bins", len(b.Counts))
	}
	total := b.Overflow
	for _, c := range b.Counts {
		total += c
	}
	if total != 1000 {
		t.Errorf("%d of 1000 values counted", total)
	}
}
