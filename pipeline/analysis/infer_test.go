package analysis

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

// dropLinks blanks each recorded infector with probability p.
func dropLinks(cases []linelist.Case, p float64, seed uint64) []linelist.Case {
	out := append([]linelist.Case(nil), cases...)
	rng := rand.New(rand.NewPCG(seed, 1))
	for i := range out {
		if out[i].InfectorID != "" && rng.Float64() < p {
			out[i].InfectorID = ""
		}
	}
	return out
}

// What the report says about inference: the estimates from recorded links alone are those
// of a run without --infer-missing (same bootstrap, same seed), the share is the inferred
// cases over the non-imported ones, the stability is a share, and the caution follows the
// stated rule (with 30% of links missing both methods move R beyond the recorded interval,
// and Wallinga–Teunis moves k too).
func TestInferredLinksReport(t *testing.T) {
	cases, _ := outbreak(t, 0.8, 0.2, 300, 21, "2027-12-31")
	gappy := dropLinks(cases, 0.3, 4)
	zero := 0
	o := Options{AsOf: day("2028-01-01"), CensorDays: &zero, Replicates: 100, Seed: 5}
	plain := analyse(t, gappy, o)
	for _, method := range []string{InferAugmentation, InferWallingaTeunis} {
		oi := o
		oi.InferMissing, oi.InferMethod = true, method
		s := analyse(t, gappy, oi)
		l := s.InferredLinks
		if l == nil || l.Method != method {
			t.Fatalf("%s: inferred links %+v", method, l)
		}
		// The same fit by two routes: equal to rounding (the order of a sum differs).
		if !sameEstimate(l.RecordedR, plain.Offspring.R) || !sameEstimate(l.RecordedK, plain.Offspring.K) {
			t.Errorf("%s: recorded-only R %v k %v differ from the run without inference R %v k %v", method,
				*l.RecordedR.Estimate, *l.RecordedK.Estimate, *plain.Offspring.R.Estimate, *plain.Offspring.K.Estimate)
			t.Logf("recorded %s / %s", dump(l.RecordedR), dump(l.RecordedK))
			t.Logf("plain    %s / %s", dump(plain.Offspring.R), dump(plain.Offspring.K))
		}
		nonImported := 0
		for _, c := range gappy {
			if !c.Imported {
				nonImported++
			}
		}
		if want := float64(l.Inferred) / float64(nonImported); l.Share != want {
			t.Errorf("%s: share %v, want %d/%d", method, l.Share, l.Inferred, nonImported)
		}
		if l.Stability == nil || !(*l.Stability > 0 && *l.Stability <= 1) {
			t.Errorf("%s: stability %v, want a share in (0, 1]", method, l.Stability)
		}
		caution := false
		for _, c := range s.Cautions {
			caution = caution || c.Kind == CautionInference
		}
		if caution != l.Matters {
			t.Errorf("%s: caution %v but Matters %v", method, caution, l.Matters)
		}
		t.Logf("%s: R %s k %s; recorded R %s k %s; %.0f%% inferred, stability %.2f, matters %v", method,
			ivText(s.Offspring.R), ivText(s.Offspring.K), ivText(l.RecordedR), ivText(l.RecordedK), 100*l.Share, *l.Stability, l.Matters)
		switch method {
		case InferWallingaTeunis:
			if b := l.RecordedK.Percentile; !(*s.Offspring.K.Estimate > *b[1]) || !l.Matters {
				t.Error("Wallinga–Teunis should move k beyond the recorded links' interval here")
			}
		case InferAugmentation:
			if b := l.RecordedK.Percentile; *s.Offspring.K.Estimate < *b[0] || *s.Offspring.K.Estimate > *b[1] {
				t.Error("the augmentation's k should stay within the recorded links' interval (random removal keeps k)")
			}
			if l.BurnIn == 0 || l.BurnInZ == nil {
				t.Errorf("augmentation: burn-in %d, Geweke z %v; want both", l.BurnIn, l.BurnInZ)
			}
		}
	}
}

// The augmentation is deterministic: same input and seed give the same JSON on any worker
// count. With ascertainment below 1 some cases go to an infector outside the list, and R
// from the listed links drops below the ascertainment-1 value.
func TestAugmentationDeterministicAndOutside(t *testing.T) {
	cases, _ := outbreak(t, 0.9, 0.4, 100, 8, "2027-12-31")
	gappy := dropLinks(cases, 0.3, 2)
	zero := 0
	o := Options{AsOf: day("2028-01-01"), CensorDays: &zero, Replicates: 60, Seed: 2, InferMissing: true, Workers: 1}
	a := analyse(t, gappy, o)
	o.Workers = 2
	b := analyse(t, gappy, o)
	ja, _ := json.Marshal(a)
	jb, _ := json.Marshal(b)
	if !bytes.Equal(ja, jb) {
		t.Fatal("1 and 2 workers gave different summaries with augmentation")
	}
	if a.InferredLinks.Outside != 0 {
		t.Errorf("ascertainment 1 sent %v cases outside the list", a.InferredLinks.Outside)
	}
	o.InferAscertainment = 0.5
	c := analyse(t, gappy, o)
	if !(c.InferredLinks.Outside > 0) || !(*c.Offspring.R.Estimate < *a.Offspring.R.Estimate) {
		t.Errorf("ascertainment 0.5: %v outside, R %v vs %v at 1", c.InferredLinks.Outside, *c.Offspring.R.Estimate, *a.Offspring.R.Estimate)
	}
	found := false
	for _, n := range a.Notes {
		found = found || strings.Contains(n, "data augmentation")
	}
	if !found {
		t.Error("the notes do not say the infectors were inferred by data augmentation")
	}
	o.InferMethod = "guess"
	if _, err := Run("x", &linelist.LineList{}, nil, o); err == nil {
		t.Error("an unknown inference method was accepted")
	}
}

// candidateGroup keys cases by the InferWithin choice, and the pair key of "both" is
// injective ("a", "bc") ≠ ("ab", "c").
func TestCandidateGroup(t *testing.T) {
	mk := func(j, s string) linelist.Case {
		return linelist.Case{Strata: &linelist.Strata{Jurisdiction: j, Setting: s}}
	}
	cases := []linelist.Case{mk("North", "home"), mk("South", "home"), mk("a", "bc"), mk("ab", "c")}
	for _, tc := range []struct {
		within     string
		same, diff [2]int
	}{
		{InferWithinJurisdiction, [2]int{0, 0}, [2]int{0, 1}},
		{InferWithinSetting, [2]int{0, 1}, [2]int{0, 2}},
		{InferWithinBoth, [2]int{1, 1}, [2]int{2, 3}},
		{InferWithinAll, [2]int{0, 3}, [2]int{-1, -1}},
	} {
		a := &run{cases: cases, o: Options{InferWithin: tc.within}}
		if a.candidateGroup(tc.same[0]) != a.candidateGroup(tc.same[1]) {
			t.Errorf("%s: cases %d and %d should share a group", tc.within, tc.same[0], tc.same[1])
		}
		if tc.diff[0] >= 0 && a.candidateGroup(tc.diff[0]) == a.candidateGroup(tc.diff[1]) {
			t.Errorf("%s: cases %d and %d should not share a group", tc.within, tc.diff[0], tc.diff[1])
		}
	}
	if err := (&Options{InferWithin: "ward"}).inferDefaults(); err == nil {
		t.Error("an unknown grouping was accepted")
	}
}

// sameEstimate compares two estimates and their intervals to 1e-9 relative.
func sameEstimate(a, b Estimate) bool {
	close := func(x, y *float64) bool {
		if x == nil || y == nil {
			return x == y
		}
		return math.Abs(*x-*y) <= 1e-9*math.Max(1, math.Abs(*y))
	}
	for _, p := range [][2]*float64{{a.Estimate, b.Estimate}, {a.Percentile[0], b.Percentile[0]}, {a.Percentile[1], b.Percentile[1]},
		{a.BCa[0], b.BCa[0]}, {a.BCa[1], b.BCa[1]}, {a.Profile[0], b.Profile[0]}, {a.Profile[1], b.Profile[1]}} {
		if !close(p[0], p[1]) {
			return false
		}
	}
	return true
}

func dump(e Estimate) string {
	f := func(p *float64) string {
		if p == nil {
			return "nil"
		}
		return fmt.Sprintf("%.12g", *p)
	}
	return fmt.Sprintf("%s p[%s %s] b[%s %s] pr[%s %s]", f(e.Estimate), f(e.Percentile[0]), f(e.Percentile[1]), f(e.BCa[0]), f(e.BCa[1]), f(e.Profile[0]), f(e.Profile[1]))
}
