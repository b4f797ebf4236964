package timing

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/simulate"
)

// gappyOutbreak simulates a finished outbreak (R 0.8, k 0.3, about 2,500 cases) and drops
// 20% of its links: the Infectors of the unlinked cases and the recorded offspring counts.
func gappyOutbreak(t testing.TB, seed uint64) (*Infectors, []int32) {
	t.Helper()
	until := linelist.Day(800)
	recs, err := simulate.Run(simulate.Scenario{R: 0.8, K: 0.3, SerialMean: 5, SerialSD: 2.5, IndexCases: 600,
		Start: 0, IndexSpreadDays: 60, Until: &until, Jurisdictions: []string{"A"}, Settings: []string{"s"},
		AgeGroups: []string{"a"}, StayProbability: 1, Seed: seed})
	if err != nil {
		t.Fatal(err)
	}
	idx := map[string]int{}
	for i, r := range recs {
		idx[r.ID] = i
	}
	n := len(recs)
	onset, group := make([]linelist.Day, n), make([]string, n)
	imported, linked := make([]bool, n), make([]bool, n)
	rec := make([]int32, n)
	rng := rand.New(rand.NewPCG(seed, 5))
	for i, r := range recs {
		onset[i], group[i], imported[i] = r.Onset, "A", r.Imported
		if r.TrueInfector != "" && rng.Float64() >= 0.2 {
			linked[i] = true
			rec[idx[r.TrueInfector]]++
		}
	}
	x, err := InferInfectors(onset, group, imported, linked, GammaInterval{Shape: 4, Rate: 0.8})
	if err != nil {
		t.Fatal(err)
	}
	return x, rec
}

// TestAugmentForgetsItsStart is the check behind DefaultBurnIn: chains from the
// Wallinga–Teunis start and from a start with k = 50 (no superspreading at all) or
// k = 0.02 reach the same law of k. Each chain's trace of k over the DefaultBurnIn sweeps
// after its burn-in has a mean within 4 Monte Carlo standard errors (batch means) of the
// others', and every trace is inside the kept chain's central 99% range by sweep 100.
func TestAugmentForgetsItsStart(t *testing.T) {
	x, rec := gappyOutbreak(t, 11)
	type run struct {
		name  string
		k     float64
		trace []float64
	}
	runs := []*run{{name: "Wallinga–Teunis start"}, {name: "k = 50", k: 50}, {name: "k = 0.02", k: 0.02}}
	for m, r := range runs {
		c, err := x.Augment(rand.New(rand.NewPCG(uint64(m), 3)), AugmentOptions{Recorded: rec, BurnIn: 1})
		if err != nil {
			t.Fatal(err)
		}
		if r.k > 0 {
			c.k = r.k
		}
		for s := 0; s < 2*DefaultBurnIn; s++ {
			c.sweep(s < DefaultBurnIn)
			r.trace = append(r.trace, c.k)
		}
	}
	ref := runs[0].trace[DefaultBurnIn:]
	lo, hi := quantiles(ref)
	for _, r := range runs {
		kept := r.trace[DefaultBurnIn:]
		m, v := batchMeans(kept)
		m0, v0 := batchMeans(ref)
		settled := -1
		for s, k := range r.trace {
			if k >= lo && k <= hi {
				settled = s
				break
			}
		}
		t.Logf("%s: k after burn-in %.3f (MC se %.3f), first inside the kept range at sweep %d", r.name, m, math.Sqrt(v), settled)
		if math.Abs(m-m0) > 4*math.Sqrt(v+v0)+1e-9 {
			t.Errorf("%s: mean k %.4f after burn-in, Wallinga–Teunis start %.4f: the chains disagree", r.name, m, m0)
		}
		if settled < 0 || settled > 100 {
			t.Errorf("%s: the trace of k reached the kept chain's range at sweep %d; want by 100", r.name, settled)
		}
	}
}

// quantiles are the 0.5% and 99.5% points of x (type-1, enough for a range check).
func quantiles(x []float64) (float64, float64) {
	y := append([]float64(nil), x...)
	for i := 1; i < len(y); i++ {
		for j := i; j > 0 && y[j] < y[j-1]; j-- {
			y[j], y[j-1] = y[j-1], y[j]
		}
	}
	return y[int(0.005*float64(len(y)))], y[int(0.995*float64(len(y)-1))]
}

// Geweke's z is near 0 for independent draws and large for a trace that drifts.
func TestGeweke(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	flat := make([]float64, 1000)
	drift := make([]float64, 1000)
	for i := range flat {
		flat[i] = rng.NormFloat64()
		drift[i] = rng.NormFloat64() + float64(i)/200
	}
	if z := Geweke(flat); !(math.Abs(z) < 3) {
		t.Errorf("Geweke z of white noise %.2f, want |z| < 3", z)
	}
	if z := Geweke(drift); !(z < -3) {
		t.Errorf("Geweke z of a rising trace %.2f, want < −3", z)
	}
	if z := Geweke(flat[:50]); !math.IsNaN(z) {
		t.Errorf("Geweke z of 50 draws %v, want NaN", z)
	}
}

// BenchmarkAugmentSweep is one sweep of the chain (ν, infectors, R and k) on about 2,500
// cases with 20% of links missing.
func BenchmarkAugmentSweep(b *testing.B) {
	x, rec := gappyOutbreak(b, 11)
	c, err := x.Augment(rand.New(rand.NewPCG(1, 1)), AugmentOptions{Recorded: rec, BurnIn: 1})
	if err != nil {
		b.Fatal(err)
	}
	var dst []int
	b.ResetTimer()
	for b.Loop() {
		dst = c.Next(dst)
	}
}
