package analysis

import (
	"fmt"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

func cautionOf(s *Summary, kind string) (Caution, bool) {
	for _, c := range s.Cautions {
		if c.Kind == kind {
			return c, true
		}
	}
	return Caution{}, false
}

// The cautions say what the numbers show: removing the links of 30 non-imported cases gives
// an unlinked caution that counts them (with those that started chains already), points to
// --infer-missing, and bounds the bias by their number over the cases counted.
func TestCautionsComeFromTheData(t *testing.T) {
	cases, _ := outbreak(t, 0.8, 0.5, 120, 21, "2026-06-15")
	base := analyse(t, cases, Options{AsOf: day("2026-06-15"), Seed: 2, Replicates: 50, Likelihood: LikelihoodCensor})
	unlinked0 := base.Tree.Roots - base.Tree.Imported
	removed := 0
	for i := range cases {
		if removed < 30 && cases[i].InfectorID != "" && !cases[i].Imported {
			cases[i].InfectorID = ""
			removed++
		}
	}
	s := analyse(t, cases, Options{AsOf: day("2026-06-15"), Seed: 2, Replicates: 50, Likelihood: LikelihoodCensor})
	c, ok := cautionOf(s, CautionUnlinked)
	if !ok {
		t.Fatalf("no unlinked caution in %+v", s.Cautions)
	}
	n := unlinked0 + removed
	want := fmt.Sprintf("%d cases (%.0f%%) were neither imported nor linked", n, 100*float64(n)/float64(s.Tree.Cases))
	if !strings.HasPrefix(c.Text, want) || !strings.Contains(c.Text, "--infer-missing") ||
		!strings.Contains(c.Text, fmt.Sprintf("up to %.2f here", float64(n)/float64(s.Offspring.N))) {
		t.Errorf("unlinked caution %q, want it to start %q, bound the bias and name --infer-missing", c.Text, want)
	}
	if _, ok := cautionOf(s, CautionCensored); !ok || s.Offspring.Censored == 0 {
		t.Errorf("censored %d cases but no caution: %+v", s.Offspring.Censored, s.Cautions)
	}
	if _, ok := cautionOf(s, CautionCrossingChains); ok {
		t.Error("an unscoped report has no border to cross")
	}
	inf := analyse(t, cases, Options{AsOf: day("2026-06-15"), Seed: 2, Replicates: 50, InferMissing: true})
	if c, ok := cautionOf(inf, CautionUnlinked); !ok || !strings.Contains(c.Text, "inferred from onset times") {
		t.Errorf("with --infer-missing the caution says what inference did: %q", c.Text)
	}
}

func TestCautionsForSmallAndScopedReports(t *testing.T) {
	cases, _ := outbreak(t, 0.8, 0.5, 60, 5, "2027-12-31")
	north := &Scope{Column: "jurisdiction", Value: "North"}
	s := analyse(t, cases[:12], Options{AsOf: day("2027-12-31"), Seed: 2, Replicates: 50})
	if _, ok := cautionOf(s, CautionSmallSample); !ok {
		t.Errorf("%d cases counted, no small-sample caution", s.Offspring.N)
	}
	scoped := analyse(t, cases, Options{AsOf: day("2027-12-31"), Seed: 2, Replicates: 50, Scope: north,
		Select: func(c *linelist.Case) bool { return c.Strata.Jurisdiction == "North" }})
	c, ok := cautionOf(scoped, CautionCrossingChains)
	if scoped.Tree.CrossingChains == 0 || !ok {
		t.Fatalf("%d crossing chains, caution %v (the fixture needs one)", scoped.Tree.CrossingChains, ok)
	}
	if !strings.Contains(c.Text, fmt.Sprintf("with %d cases elsewhere", scoped.Tree.CasesElsewhere)) {
		t.Errorf("crossing caution %q does not count the %d cases elsewhere", c.Text, scoped.Tree.CasesElsewhere)
	}
	r, err := Release(scoped, Policy{SuppressBelow: 5})
	if err != nil {
		t.Fatal(err)
	}
	if _, ok := cautionOf(r.Summary(), CautionWithheldCounts); !ok {
		t.Errorf("a 60-chain report split by setting and age withholds nothing? %+v", r.Summary().Cautions)
	}
	if _, ok := cautionOf(scoped, CautionWithheldCounts); ok {
		t.Error("the analyst's summary withholds nothing, yet says it does")
	}
}
