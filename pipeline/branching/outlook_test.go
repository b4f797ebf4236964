package branching

import (
	"encoding/json"
	"sort"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

func TestOutlookJSON(t *testing.T) {
	res, err := Outlook(offspring.NegBin{R: 2.5, K: 0.1}, 3, 4, 0)
	if err != nil {
		t.Fatal(err)
	}
	b, err := json.Marshal(res)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]json.RawMessage
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	var keys []string
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	want := "chain_size,extinction_probability,generations,major_outbreak_probability,mean,model,share_causing_80pct,share_causing_80pct_offspring,share_target,sse_threshold"
	if got := strings.Join(keys, ","); got != want {
		t.Errorf("keys %s\nwant %s", got, want)
	}
	var doc struct {
		Model       map[string]any   `json:"model"`
		Generations []map[string]any `json:"generations"`
		ChainSize   map[string]any   `json:"chain_size"`
	}
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"name", "R", "k"} {
		if _, ok := doc.Model[k]; !ok {
			t.Errorf("model lacks %q", k)
		}
	}
	for _, k := range []string{"n", "p_zero", "mean", "variance", "pmf", "truncated_mass"} {
		if _, ok := doc.Generations[0][k]; !ok {
			t.Errorf("generation lacks %q", k)
		}
	}
	for _, k := range []string{"pmf", "mean", "truncated_mass"} {
		if _, ok := doc.ChainSize[k]; !ok {
			t.Errorf("chain_size lacks %q", k)
		}
	}
	// Values agree with the functions they come from.
	q, _ := ExtinctionProbability(offspring.NegBin{R: 2.5, K: 0.1})
	if !near(res.ExtinctionProbability, q, 1e-15) || res.ShareTarget != 0.8 || res.SSEThreshold != 7 {
		t.Errorf("q %v/%v target %v threshold %d", res.ExtinctionProbability, q, res.ShareTarget, res.SSEThreshold)
	}
	if res.ShareByNu == nil || !near(*res.ShareByNu, 0.0979, 1e-3) || res.Model.K == nil || *res.Model.K != 0.1 {
		t.Errorf("share %v k %v", res.ShareByNu, res.Model.K)
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
	b, _ := json.Marshal(res)
	s := string(b)
	for _, frag := range []string{`"share_causing_80pct":null`, `"k":null`, `"share_target":0.5`, `"name":"empirical"`} {
		if !strings.Contains(s, frag) {
			t.Errorf("JSON lacks %s", frag)
		}
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
	// Many generations at R = 4: the JSON must still encode (finite numbers only) and the
	// lists stay capped.
	if testing.Short() {
		t.Skip("large FFT")
	}
	res, err := Outlook(offspring.Poisson{R: 4}, 50, 12, 0.8)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := json.Marshal(res); err != nil {
		t.Fatal(err)
	}
	last := res.Generations[len(res.Generations)-1]
	if len(last.PMF) > OutlookMaxPMFLength || last.TruncatedMass < 0.99 {
		t.Errorf("last generation: %d entries, truncated %v", len(last.PMF), last.TruncatedMass)
	}
}
