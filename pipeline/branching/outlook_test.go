package branching

import (
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

func TestOutlookValues(t *testing.T) {
	res, err := Outlook(offspring.NegBin{R: 2.5, K: 0.1}, 3, 4, 0)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Generations) != 4 || res.ChainSize == nil || res.Distribution.Name() != offspring.NameNegativeBinomial {
		t.Fatalf("outlook %+v", res)
	}
	// Values agree with the functions they come from.
	q, _ := ExtinctionProbability(offspring.NegBin{R: 2.5, K: 0.1})
	if !near(res.ExtinctionProbability, q, 1e-15) || res.ShareTarget != 0.8 || res.SSEThreshold != 7 {
		t.Errorf("q %v/%v target %v threshold %d", res.ExtinctionProbability, q, res.ShareTarget, res.SSEThreshold)
	}
	if res.ShareByNu == nil || !near(*res.ShareByNu, 0.0979, 1e-3) {
		t.Errorf("share %v", res.ShareByNu)
	}
	if res.ChainSize.Mean != nil {
		t.Error("chain mean for R > 1")
	}
	for _, g := range res.Generations {
		if len(g.PMF) > OutlookMaxPMFLength {
			t.Errorf("n=%d: PMF length %d", g.N, len(g.PMF))
		}
	}
}

func TestOutlookListAndShare(t *testing.T) {
	res, err := Outlook(mustEmpirical(t, []float64{0.4, 0.3, 0.2, 0.1}, false), 2, 3, 0.5)
	if err != nil {
		t.Fatal(err)
	}
	if res.ShareByNu != nil || res.ShareTarget != 0.5 || res.Distribution.Name() != offspring.NameEmpirical {
		t.Errorf("a list has no ν: share %v, target %v, model %s", res.ShareByNu, res.ShareTarget, res.Distribution.Name())
	}
	// The list has mean exactly 1 (critical): the chain mean is infinite, so null.
	if res.ShareByOffspring == nil || res.ChainSize.Mean != nil || !near(res.ExtinctionProbability, 1, 0) {
		t.Errorf("share %v, chain mean %v, q %v", res.ShareByOffspring, res.ChainSize.Mean, res.ExtinctionProbability)
	}
	if _, err := Outlook(offspring.Poisson{R: 1}, 1, 1, 1.5); err == nil {
		t.Error("share 1.5 accepted")
	}
}

func TestOutlookLargeGrowthFinite(t *testing.T) {
	// Many generations at R = 4: every number stays finite (Outlook checks it) and the
	// lists stay capped.
	if testing.Short() {
		t.Skip("large FFT")
	}
	res, err := Outlook(offspring.Poisson{R: 4}, 50, 12, 0.8)
	if err != nil {
		t.Fatal(err)
	}
	last := res.Generations[len(res.Generations)-1]
	if len(last.PMF) > OutlookMaxPMFLength || last.TruncatedMass < 0.99 {
		t.Errorf("last generation: %d entries, truncated %v", len(last.PMF), last.TruncatedMass)
	}
}
