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

// A projection too large to decode still has its intervals: from 800,000 cases with
// negative-binomial offspring (R 1.5, k 0.5) the next generation is a sum of 800,000
// independent counts, so by the central limit theorem it is normal with mean a·R and
// variance a·R(1 + R/k); the gamma approximation's 5% and 95% quantiles must agree with the
// normal's (mean ∓ 1.6449 SD) to a small share of the SD.
func TestProjectionBeyondTheDecodedSupport(t *testing.T) {
	d := offspring.NegBin{R: 1.5, K: 0.5}
	const a = 800_000
	pr, err := Project([]offspring.Distribution{d}, a, 2)
	if err != nil {
		t.Fatal(err)
	}
	g := pr.Generations[0]
	if g.Interval90.Lo == nil || g.Interval90.Hi == nil || g.Interval50.Lo == nil || g.Interval50.Hi == nil {
		t.Fatalf("generation 1 intervals missing: %+v %+v", g.Interval50, g.Interval90)
	}
	mean := a * 1.5
	sd := math.Sqrt(a * 1.5 * (1 + 1.5/0.5))
	for _, c := range []struct {
		got  int
		want float64
	}{{*g.Interval90.Lo, mean - 1.6449*sd}, {*g.Interval90.Hi, mean + 1.6449*sd}, {*g.Interval50.Lo, mean - 0.6745*sd}, {*g.Interval50.Hi, mean + 0.6745*sd}} {
		if math.Abs(float64(c.got)-c.want) > 0.02*sd {
			t.Errorf("bound %d, normal limit %.0f (SD %.0f)", c.got, c.want, sd)
		}
	}
	t.Logf("support %d, truncated mass %g, approximate %v", g.Support, g.TruncatedMass, g.Approximate)
	if !g.Approximate {
		t.Error("a count this large lies beyond the decoded support: the bounds must be marked approximate")
	}
	if pr.Generations[1].Interval90.Hi == nil {
		t.Error("generation 2 has no upper bound")
	}
}
