package offspring

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// chiSquareCheck bins draws against a PMF (cells merged until the expected count is ≥ 5)
// and fails when Pearson's X² exceeds the 1 − 1e-4 quantile of χ² with cells − 1 degrees of
// freedom (Pearson 1900; quantile from gonum distuv.ChiSquared v0.17.0). With fixed seeds
// the test is deterministic; the 1e-4 level keeps a correct sampler from failing by chance.
func chiSquareCheck(t *testing.T, name string, draws []int, pmf func(x int) float64, from, maxX int) {
	t.Helper()
	obs := map[int]int{}
	for _, d := range draws {
		if d < 0 || d > maxX {
			t.Fatalf("%s: draw %d outside the support [0, %d]", name, d, maxX)
		}
		obs[d]++
	}
	M := float64(len(draws))
	var x2, e, o, closedE, closedO, cum float64
	cells := 0
	// The mass below `from` (≥ 12 SDs under the mean) is negligible; it joins the first cell.
	for x := from; x <= maxX; x++ {
		p := pmf(x)
		cum += p
		e += M * p
		o += float64(obs[x])
		if x == from {
			for d, c := range obs {
				if d < from {
					o += float64(c)
				}
			}
		}
		if M*(1-cum) < 5 {
			break // the rest, with this partial cell, is the tail cell
		}
		if e >= 5 {
			x2 += (o - e) * (o - e) / e
			cells++
			closedE += e
			closedO += o
			e, o = 0, 0
		}
	}
	tailE, tailO := M-closedE, M-closedO
	if tailE > 0 {
		x2 += (tailO - tailE) * (tailO - tailE) / tailE
		cells++
	}
	if cells < 2 {
		t.Fatalf("%s: only %d cells", name, cells)
	}
	crit := distuv.ChiSquared{K: float64(cells - 1)}.Quantile(1 - 1e-4)
	if x2 > crit {
		t.Errorf("%s: X² = %.1f on %d df exceeds %.1f", name, x2, cells-1, crit)
	}
}

// from12 is max(0, ⌊mean − 12·sd⌋).
func from12(mean, sd float64) int { return max(0, int(math.Floor(mean-12*sd))) }

// TestBinomialChiSquare checks the exact binomial sampler, both the inversion and the BTPE
// branch and the p > 1/2 reflection, against the binomial PMF of gonum distuv.Binomial
// (v0.17.0).
func TestBinomialChiSquare(t *testing.T) {
	cases := []struct {
		n int
		p float64
	}{
		{1, 0.5}, {10, 0.3}, {50, 0.2}, {59, 0.5}, {61, 0.5}, {200, 0.9},
		{1000, 0.5}, {100_000, 0.0004}, {100_000, 0.37}, {10_000_000, 0.3},
		{10_000_000, 1e-6}, {10_000_000, 0.999},
	}
	M := 40_000
	for i, c := range cases {
		rng := rand.New(rand.NewPCG(uint64(i), 77))
		draws := make([]int, M)
		for j := range draws {
			draws[j] = binomial(rng, c.n, c.p)
		}
		d := distuv.Binomial{N: float64(c.n), P: c.p}
		np := float64(c.n) * c.p
		chiSquareCheck(t, fmt.Sprintf("Binomial(%d, %g)", c.n, c.p), draws,
			func(x int) float64 { return d.Prob(float64(x)) }, from12(np, math.Sqrt(np*(1-c.p))), c.n)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for _, c := range []struct {
		n    int
		p    float64
		want int
	}{{0, 0.5, 0}, {7, 0, 0}, {7, 1, 7}, {-3, 0.5, 0}} {
		if got := binomial(rng, c.n, c.p); got != c.want {
			t.Errorf("Binomial(%d, %g) = %d, want %d", c.n, c.p, got, c.want)
		}
	}
}

// TestMultinomialMarginals checks that a multinomial draw sums to n and that each marginal
// is Binomial(n, w_i/Σw) (the multinomial's marginal law), by a chi-square test.
func TestMultinomialMarginals(t *testing.T) {
	w := []int{500, 3, 120, 0, 77, 300}
	n := 1000
	cond := conditionalShares(w)
	rng := rand.New(rand.NewPCG(5, 6))
	M := 20_000
	marg := make([][]int, len(w))
	out := make([]int, len(w))
	for j := 0; j < M; j++ {
		multinomialInto(rng, n, cond, out)
		s := 0
		for i, v := range out {
			s += v
			marg[i] = append(marg[i], v)
		}
		if s != n {
			t.Fatalf("draw sums to %d, want %d", s, n)
		}
	}
	tot := 0
	for _, v := range w {
		tot += v
	}
	for i := range w {
		p := float64(w[i]) / float64(tot)
		if p == 0 {
			for _, v := range marg[i] {
				if v != 0 {
					t.Fatalf("zero-weight category got %d", v)
				}
			}
			continue
		}
		d := distuv.Binomial{N: float64(n), P: p}
		chiSquareCheck(t, fmt.Sprintf("marginal %d", i), marg[i], func(x int) float64 { return d.Prob(float64(x)) },
			from12(float64(n)*p, math.Sqrt(float64(n)*p*(1-p))), n)
	}
}

// TestPoissonVariate checks the Poisson sampler (inversion and Knuth's gamma reduction)
// against the Poisson PMF of gonum distuv.Poisson (v0.17.0).
func TestPoissonVariate(t *testing.T) {
	for i, mu := range []float64{0.05, 2.5, 15.9, 16, 40, 333.3, 5000} {
		rng := rand.New(rand.NewPCG(uint64(i), 9))
		M := 30_000
		draws := make([]int, M)
		for j := range draws {
			draws[j] = poissonVariate(rng, mu)
		}
		d := distuv.Poisson{Lambda: mu}
		chiSquareCheck(t, fmt.Sprintf("Poisson(%g)", mu), draws, func(x int) float64 { return d.Prob(float64(x)) },
			from12(mu, math.Sqrt(mu)), int(mu+50*math.Sqrt(mu)+50))
	}
}

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
		chiSquareCheck(t, fmt.Sprintf("NB(R=%g, k=%g)", c.R, c.k), draws, d.PMF, 0, 100_000)
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

// TestGammaVariateMoments checks the gamma sampler's mean a and variance a (Gamma(a, 1))
// within 5 standard errors, for the boosted (a < 1) and the direct branch.
func TestGammaVariateMoments(t *testing.T) {
	for i, a := range []float64{0.05, 0.3, 1, 7.5} {
		rng := rand.New(rand.NewPCG(uint64(i), 11))
		M := 100_000
		var s, s2 float64
		for range M {
			g := gammaVariate(rng, a)
			s += g
			s2 += g * g
		}
		mean := s / float64(M)
		v := s2/float64(M) - mean*mean
		// SE of the mean √(a/M); of the variance √((μ4 − σ⁴)/M) with μ4 = 3a² + 6a for Gamma(a).
		if math.Abs(mean-a) > 5*math.Sqrt(a/float64(M)) {
			t.Errorf("Gamma(%g): mean %g", a, mean)
		}
		if math.Abs(v-a) > 5*math.Sqrt((3*a*a+6*a-a*a)/float64(M)) {
			t.Errorf("Gamma(%g): variance %g", a, v)
		}
	}
}
