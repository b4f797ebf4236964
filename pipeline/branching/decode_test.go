package branching

import (
	"math"
	"math/rand/v2"
	"os"
	"reflect"
	"runtime"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
	"gonum.org/v1/gonum/stat/distuv"
)

func pmfMoments(p []float64) (mean, variance float64) {
	var m, m2 float64
	for j, v := range p {
		m += float64(j) * v
		m2 += float64(j) * float64(j) * v
	}
	return m, m2 - m*m
}

func TestGenerationSizesTwoOffspring(t *testing.T) {
	// G(s) = s²: X_n = 2^n·a exactly (common practice).
	for _, a := range []int{1, 3} {
		gs, err := GenerationSizes(mustEmpirical(t, []float64{0, 0, 1}, false), a, 6)
		if err != nil {
			t.Fatal(err)
		}
		for _, g := range gs {
			want := a << g.N
			if len(g.PMF) != want+1 || !near(g.PMF[want], 1, 1e-12) || g.TruncatedMass > 1e-12 {
				t.Errorf("a=%d n=%d: len %d, P(X=%d) = %v, truncated %v", a, g.N, len(g.PMF), want, g.PMF[min(want, len(g.PMF)-1)], g.TruncatedMass)
			}
			for j, v := range g.PMF[:len(g.PMF)-1] {
				if v > 1e-13 {
					t.Errorf("a=%d n=%d: P(X=%d) = %v, want 0", a, g.N, j, v)
				}
			}
		}
	}
}

func TestGenerationSizesLinearFractional(t *testing.T) {
	// p_x = 2^{−(x+1)}: P(X_n=0) = n/(n+1), P(X_n=j) = n^{j−1}/(n+1)^{j+1}
	// [Athreya & Ney 1972, I.4].
	gs, err := GenerationSizes(offspring.Geometric{R: 1}, 1, 12)
	if err != nil {
		t.Fatal(err)
	}
	for _, g := range gs {
		n := float64(g.N)
		if !near(g.PZero, n/(n+1), 1e-14) {
			t.Errorf("n=%d: p_zero %v, want %v", g.N, g.PZero, n/(n+1))
		}
		for j := 1; j < len(g.PMF); j++ {
			want := math.Exp(float64(j-1)*math.Log(n) - float64(j+1)*math.Log(n+1))
			if !near(g.PMF[j], want, 1e-14+1e-9*want) {
				t.Fatalf("n=%d j=%d: %v, want %v", g.N, j, g.PMF[j], want)
			}
		}
		// Exact tail beyond the list: P(X_n ≥ L) = (n/(n+1))^{L−1}/(n+1) (geometric sum).
		L := float64(len(g.PMF))
		tail := math.Pow(n/(n+1), L-1) / (n + 1)
		if !near(g.TruncatedMass, tail, 1e-13) {
			t.Errorf("n=%d: truncated mass %v, exact tail %v", g.N, g.TruncatedMass, tail)
		}
	}
}

func TestGenerationMomentsAgainstPMF(t *testing.T) {
	// Closed forms [Harris 1963, ch. 1, §5] against the decoded PMF's moments.
	cases := []struct {
		d     offspring.Distribution
		a, n  int
		relTo float64
	}{
		{offspring.Poisson{R: 1.5}, 3, 6, 1e-8},
		{offspring.NegBin{R: 0.8, K: 0.2}, 5, 6, 1e-7},
		{offspring.NegBin{R: 1, K: 0.5}, 2, 8, 1e-7},
		{offspring.NegBin{R: 2.5, K: 0.1}, 1, 4, 1e-6},
		{offspring.Geometric{R: 0.5}, 10, 5, 1e-8},
		{mustEmpirical(t, []float64{0.2, 0.3, 0.3, 0.2}, false), 4, 5, 1e-8},
	}
	for _, c := range cases {
		gs, err := GenerationSizes(c.d, c.a, c.n)
		if err != nil {
			t.Fatal(err)
		}
		for _, g := range gs {
			m, v := pmfMoments(g.PMF)
			if g.Mean == nil || g.Variance == nil {
				t.Fatalf("%v n=%d: nil moments", c.d, g.N)
			}
			if math.Abs(m-*g.Mean) > c.relTo*(1+*g.Mean) || math.Abs(v-*g.Variance) > 10*c.relTo*(1+*g.Variance) {
				t.Errorf("%v a=%d n=%d: PMF mean %v var %v; closed form %v, %v (truncated %v)", c.d, c.a, g.N, m, v, *g.Mean, *g.Variance, g.TruncatedMass)
			}
			if g.TruncatedMass > 1e-9 {
				t.Errorf("%v n=%d: truncated mass %v", c.d, g.N, g.TruncatedMass)
			}
		}
	}
	// R = 1: Var X_n = a·n·σ² [Harris 1963].
	if _, v := GenerationMoments(1, 2, 3, 4); v != 24 {
		t.Errorf("critical variance %v, want 24", v)
	}
	// R → 1 continuity: the R ≠ 1 form tends to a·n·σ².
	if _, v := GenerationMoments(1+1e-12, 2, 3, 4); !near(v, 24, 1e-9) {
		t.Errorf("near-critical variance %v, want ≈ 24", v)
	}
}

func TestGenerationSizesSciPy(t *testing.T) {
	// X_2 by conditioning on X_1, computed with SciPy 1.10.1 scipy.stats.poisson/nbinom
	// (testdata/branching/make_reference.py).
	for _, r := range loadReference(t).Generation2 {
		var d offspring.Distribution = offspring.Poisson{R: r.R}
		if r.K != nil {
			d = offspring.NegBin{R: r.R, K: *r.K}
		}
		gs, err := GenerationSizes(d, r.A, 2)
		if err != nil {
			t.Fatal(err)
		}
		p := gs[1].PMF
		for j, want := range r.PMF {
			if j >= len(p) {
				// Trimmed: the list ends where less than TrimMass remains.
				if want > TrimMass {
					t.Errorf("%s: list ends at %d but SciPy P(X=%d) = %v", r.Model, len(p), j, want)
				}
				continue
			}
			if got := p[j]; !near(got, want, 1e-13+1e-9*want) {
				t.Errorf("%s j=%d: %v, SciPy %v", r.Model, j, got, want)
			}
		}
	}
}

// TestGenerationSizesSimulation compares the decoded PMF with a seeded simulation of the
// process (the test's own BGW simulator) by Pearson's chi-square test over bins pooled to an
// expected count ≥ 5 [Cochran 1954], at the 1e−4 level (gonum distuv.ChiSquared quantile).
func TestGenerationSizesSimulation(t *testing.T) {
	runs := 20000
	if testing.Short() {
		runs = 5000
	}
	cases := []struct {
		d    offspring.Distribution
		a, n int
	}{
		{offspring.NegBin{R: 1.2, K: 0.5}, 2, 3},
		{offspring.Poisson{R: 0.9}, 5, 4},
		{mustEmpirical(t, []float64{0.3, 0.4, 0.2, 0.1}, false), 3, 3},
	}
	for ci, c := range cases {
		gs, err := GenerationSizes(c.d, c.a, c.n)
		if err != nil {
			t.Fatal(err)
		}
		g := gs[c.n-1]
		rng := rand.New(rand.NewPCG(42, uint64(ci)))
		draw := offspringSampler(c.d, rng)
		const cap = 1 << 16
		counts := map[int]int{}
		for i := 0; i < runs; i++ {
			counts[simulateGeneration(draw, c.a, c.n, cap)]++
		}
		chi2, bins := pooledChiSquare(g.PMF, counts, runs)
		crit := distuv.ChiSquared{K: float64(bins - 1)}.Quantile(1 - 1e-4)
		if chi2 > crit {
			t.Errorf("%v: chi-square %v over %d bins exceeds the 1e-4 critical value %v", c.d, chi2, bins, crit)
		}
		// The check has power: the same sample against a model with R 20% higher fails.
		wrong, err := GenerationSizes(offspring.Poisson{R: c.d.Mean() * 1.2}, c.a, c.n)
		if err != nil {
			t.Fatal(err)
		}
		chiW, binsW := pooledChiSquare(wrong[c.n-1].PMF, counts, runs)
		if critW := (distuv.ChiSquared{K: float64(binsW - 1)}).Quantile(1 - 1e-4); chiW <= critW {
			t.Errorf("%v: a wrong model passed (chi-square %v ≤ %v)", c.d, chiW, critW)
		}
	}
}

// pooledChiSquare is Pearson's statistic of observed counts against n·p, pooling adjacent
// values until the expected count reaches 5; values beyond the PMF form the last bin.
func pooledChiSquare(p []float64, counts map[int]int, n int) (float64, int) {
	var chi2, e, o float64
	bins := 0
	listed := 0
	for j, pj := range p {
		e += pj * float64(n)
		o += float64(counts[j])
		listed += counts[j]
		if e >= 5 {
			chi2 += (o - e) * (o - e) / e
			bins++
			e, o = 0, 0
		}
	}
	var tail float64
	for _, v := range p {
		tail += v
	}
	e += math.Max(0, 1-tail) * float64(n)
	o += float64(n - listed)
	if e > 0 || o > 0 {
		chi2 += (o - e) * (o - e) / math.Max(e, 1e-9)
		bins++
	}
	return chi2, bins
}

func TestGenerationSizesTruncationHonest(t *testing.T) {
	// R = 3 for 30 generations from 10 cases: mean 2e15, far beyond the cap. P(X=0) is
	// q^10 exactly; the decoded list cannot hold the rest, and must say so. The internal
	// decoder runs with a small cap (2^12 points) so the check is quick; with
	// CASEWEAVE_LONG=1 the public API runs at the full cap too.
	d := offspring.Poisson{R: 3}
	dec, err := decodeMixture([]offspring.Distribution{d}, 10, 30, 1<<12)
	if err != nil {
		t.Fatal(err)
	}
	gs := make([]GenerationDistribution, 30)
	for i := range gs {
		gs[i] = GenerationDistribution{N: i + 1, PZero: dec.pzero[i], PMF: dec.pmf[i], Support: dec.support, TruncatedMass: dec.truncated[i]}
	}
	if os.Getenv("CASEWEAVE_LONG") == "1" {
		if gs, err = GenerationSizes(d, 10, 30); err != nil {
			t.Fatal(err)
		}
	}
	q, _ := ExtinctionProbability(d)
	last := gs[len(gs)-1]
	if !near(last.PZero, math.Pow(q, 10), 1e-12) {
		t.Errorf("p_zero %v, q^10 = %v", last.PZero, math.Pow(q, 10))
	}
	if !near(last.TruncatedMass, 1-last.PZero, 1e-6) {
		t.Errorf("truncated mass %v, want ≈ 1 − p_zero = %v", last.TruncatedMass, 1-last.PZero)
	}
	if last.Support > MaxFFTPoints/2 {
		t.Errorf("support %d beyond the cap", last.Support)
	}
	for _, g := range gs {
		var s float64
		for _, v := range g.PMF {
			if v < 0 || math.IsNaN(v) {
				t.Fatalf("n=%d: bad probability %v", g.N, v)
			}
			s += v
		}
		if !near(s+g.TruncatedMass, 1, 1e-9) {
			t.Errorf("n=%d: Σ PMF + truncated = %v", g.N, s+g.TruncatedMass)
		}
	}
}

func TestGenerationSizesArguments(t *testing.T) {
	d := offspring.Poisson{R: 1.2}
	gs, err := GenerationSizes(d, 0, 3)
	if err != nil {
		t.Fatal(err)
	}
	for _, g := range gs {
		if len(g.PMF) != 1 || g.PMF[0] != 1 || g.PZero != 1 || *g.Mean != 0 || *g.Variance != 0 {
			t.Errorf("a = 0: %+v", g)
		}
	}
	for _, c := range []struct{ a, n int }{{-1, 2}, {1, 0}, {1, MaxGenerations + 1}, {MaxActive + 1, 1}} {
		if _, err := GenerationSizes(d, c.a, c.n); err == nil {
			t.Errorf("a=%d n=%d accepted", c.a, c.n)
		}
	}
}

// TestEvalMixtureSkipChangesNothing checks that stopping a replicate's iteration once every
// remaining term must underflow leaves every value bit for bit as the full computation
// gives it, for sub- and supercritical, light- and heavy-tailed offspring, few and many
// active cases (the bound |G(z)| ≤ G(|z|) is the triangle inequality; common practice).
func TestEvalMixtureSkipChangesNothing(t *testing.T) {
	emp := mustEmpirical(t, []float64{0.5, 0.2, 0.1, 0, 0.2}, false)
	mixes := [][]offspring.Distribution{
		{offspring.NegBin{R: 0.99, K: 0.5}, offspring.NegBin{R: 0.95, K: 0.45}, offspring.NegBin{R: 1.02, K: 0.55}},
		{offspring.NegBin{R: 2.5, K: 0.1}},
		{offspring.Poisson{R: 0.7}, offspring.Geometric{R: 1.3}},
		{emp},
	}
	for i, ds := range mixes {
		for _, a := range []int{1, 7, 900, 5000, 20000} {
			const N, M = 4, 1 << 12
			got := evalMixtureSkip(ds, a, N, M, true)
			want := evalMixtureSkip(ds, a, N, M, false)
			for n := range want {
				for m := range want[n] {
					if got[n][m] != want[n][m] {
						t.Fatalf("mix %d, a=%d: vals[%d][%d] = %v with the skip, %v without", i, a, n, m, got[n][m], want[n][m])
					}
				}
			}
		}
	}
}

func TestUnderflowRadiiBound(t *testing.T) {
	// Each radius must satisfy its own definition: at ρ_n, every remaining term underflows.
	d := offspring.NegBin{R: 0.99, K: 0.5}
	const a, N = 20000, 4
	logRho := underflowRadii(d, a, N)
	for n, lr := range logRho {
		if !(lr < 0) || math.IsInf(lr, -1) {
			t.Fatalf("log ρ_%d = %v, want a radius in (0, 1) for a = %d", n, lr, a)
		}
		x := math.Exp(lr)
		for j := 0; j < N-n; j++ {
			if j > 0 {
				x = d.PGF(x)
			}
			if v := math.Pow(x, a); v != 0 {
				t.Fatalf("ρ_%d: G_%d(ρ)^a = %v, want an underflow to 0", n, j, v)
			}
		}
	}
	if r := underflowRadii(d, 1, N); !math.IsInf(r[0], -1) {
		t.Fatalf("a = 1: log ρ_0 = %v, want −∞ (one case never underflows)", r[0])
	}
}

// TestProjectIndependentOfCores runs a many-case projection, whose circle points are handed
// out to workers in blocks, on one core and on four: the results must be identical.
func TestProjectIndependentOfCores(t *testing.T) {
	reps := []offspring.Distribution{offspring.NegBin{R: 0.99, K: 0.5}, offspring.NegBin{R: 0.97, K: 0.45}, offspring.Poisson{R: 1.01}}
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	runtime.GOMAXPROCS(1)
	one, err := Project(reps, 5000, 3)
	if err != nil {
		t.Fatal(err)
	}
	runtime.GOMAXPROCS(4)
	four, err := Project(reps, 5000, 3)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(one, four) {
		t.Fatal("the projection on 4 cores differs from the one on 1")
	}
}
