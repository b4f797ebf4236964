package offspring

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/caseweave/caseweave/pipeline/internal/numerictest"
)

// TestSimulateNegBin checks the gamma–Poisson mixture (Marsaglia–Tsang gamma) against the
// negative binomial PMF of model.go [Lloyd-Smith et al. 2005], for k below and above 1.
func TestSimulateNegBin(t *testing.T) {
	for i, c := range []struct{ R, k float64 }{{2, 0.1}, {1.5, 0.5}, {3, 2.5}, {0.8, 40}} {
		rng := rand.New(rand.NewPCG(uint64(i), 10))
		tab, err := SimulateNegBin(rng, c.R, c.k, 30_000)
		if err != nil {
			t.Fatal(err)
		}
		var draws []int
		for j, v := range tab.Values {
			for range tab.Counts[j] {
				draws = append(draws, v)
			}
		}
		d := NegBin{R: c.R, K: c.k}
		numerictest.ChiSquareCheck(t, fmt.Sprintf("NB(R=%g, k=%g)", c.R, c.k), draws, d.PMF, 0, 100_000)
	}
	rng := rand.New(rand.NewPCG(1, 1))
	for _, bad := range []struct{ R, k float64 }{{-1, 1}, {math.NaN(), 1}, {1, 0}, {1, math.NaN()}, {math.Inf(1), 1}} {
		if _, err := SimulateNegBin(rng, bad.R, bad.k, 10); err == nil {
			t.Errorf("SimulateNegBin(%v, %v): want an error", bad.R, bad.k)
		}
	}
	if _, err := SimulateNegBin(nil, 1, 1, 10); err == nil {
		t.Error("nil generator: want an error")
	}
	tab, err := SimulateNegBin(rng, 2, math.Inf(1), 10_000)
	if err != nil || math.Abs(tab.Mean()-2) > 5*math.Sqrt(2.0/10_000) {
		t.Errorf("Poisson simulation: mean %g (err %v), want 2 within 5 SE", tab.Mean(), err)
	}
}
