package branching

import (
	"math"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

func TestProjectMixture(t *testing.T) {
	// The mixture PGF is the average of the PGFs, so the mixture PMF is the average of
	// the component PMFs (the PGF is linear in the PMF). Check against GenerationSizes run per
	// component and averaged here.
	reps := []offspring.Distribution{
		offspring.NegBin{R: 1.1, K: 0.4}, offspring.NegBin{R: 0.7, K: 0.9}, offspring.NegBin{R: 1.4, K: 0.2},
	}
	const a, N = 4, 3
	pr, err := Project(reps, a, N)
	if err != nil {
		t.Fatal(err)
	}
	for n := 0; n < N; n++ {
		want := map[int]float64{}
		wantMean := 0.0
		for _, d := range reps {
			gs, err := GenerationSizes(d, a, N)
			if err != nil {
				t.Fatal(err)
			}
			for j, p := range gs[n].PMF {
				want[j] += p / float64(len(reps))
			}
			wantMean += *gs[n].Mean / float64(len(reps))
		}
		g := pr.Generations[n]
		for j, p := range g.PMF {
			if !near(p, want[j], 1e-11) { // each decoding carries ~1e-13 round-off and aliasing
				t.Fatalf("n=%d j=%d: mixture %v, averaged %v", n+1, j, p, want[j])
			}
		}
		if !near(*g.Mean, wantMean, 1e-12) {
			t.Errorf("n=%d: mean %v, want %v", n+1, *g.Mean, wantMean)
		}
		// Intervals: recompute the quantiles here from the cumulative sums.
		cum := 0.0
		q := map[float64]int{}
		for j, p := range g.PMF {
			cum += p
			for _, lvl := range []float64{0.05, 0.25, 0.75, 0.95} {
				if _, ok := q[lvl]; !ok && cum >= lvl-1e-12 {
					q[lvl] = j
				}
			}
		}
		if *g.Interval50.Lo != q[0.25] || *g.Interval50.Hi != q[0.75] || *g.Interval90.Lo != q[0.05] || *g.Interval90.Hi != q[0.95] {
			t.Errorf("n=%d: intervals 50 [%d,%d] 90 [%d,%d], recomputed %v", n+1, *g.Interval50.Lo, *g.Interval50.Hi, *g.Interval90.Lo, *g.Interval90.Hi, q)
		}
	}
}

func TestProjectPointMassAndErrors(t *testing.T) {
	pr, err := Project([]offspring.Distribution{offspring.Poisson{R: 2}}, 0, 2)
	if err != nil {
		t.Fatal(err)
	}
	for _, g := range pr.Generations {
		if len(g.PMF) != 1 || g.PMF[0] != 1 || *g.Mean != 0 || *g.Interval90.Lo != 0 || *g.Interval90.Hi != 0 {
			t.Errorf("a = 0: %+v", g)
		}
	}
	// Linear fractional from one case, generation 1: P(X ≤ j) = 1 − 2^{−(j+1)}, so the
	// 0.95 quantile is 4 and the 0.75 quantile 1 (closed form).
	pr, _ = Project([]offspring.Distribution{offspring.Geometric{R: 1}}, 1, 1)
	if g := pr.Generations[0]; *g.Interval90.Hi != 4 || *g.Interval50.Hi != 1 || *g.Interval50.Lo != 0 {
		t.Errorf("geometric quantiles: 50 %v–%v, 90 hi %v", *g.Interval50.Lo, *g.Interval50.Hi, *g.Interval90.Hi)
	}
	if _, err := Project(nil, 1, 1); err == nil {
		t.Error("no replicates accepted")
	}
	if _, err := Project([]offspring.Distribution{offspring.Poisson{R: 1}, offspring.Poisson{R: math.NaN()}}, 1, 1); err == nil {
		t.Error("bad replicate accepted")
	}
}
