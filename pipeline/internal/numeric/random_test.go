package numeric

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/caseweave/caseweave/pipeline/internal/numerictest"
	"gonum.org/v1/gonum/stat/distuv"
)

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
			draws[j] = Binomial(rng, c.n, c.p)
		}
		d := distuv.Binomial{N: float64(c.n), P: c.p}
		np := float64(c.n) * c.p
		numerictest.ChiSquareCheck(t, fmt.Sprintf("Binomial(%d, %g)", c.n, c.p), draws,
			func(x int) float64 { return d.Prob(float64(x)) }, numerictest.From12(np, math.Sqrt(np*(1-c.p))), c.n)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for _, c := range []struct {
		n    int
		p    float64
		want int
	}{{0, 0.5, 0}, {7, 0, 0}, {7, 1, 7}, {-3, 0.5, 0}} {
		if got := Binomial(rng, c.n, c.p); got != c.want {
			t.Errorf("Binomial(%d, %g) = %d, want %d", c.n, c.p, got, c.want)
		}
	}
}

// TestMultinomialMarginals checks that a multinomial draw sums to n and that each marginal
// is Binomial(n, w_i/Σw) (the multinomial's marginal law), by a chi-square test.
func TestMultinomialMarginals(t *testing.T) {
	w := []int{500, 3, 120, 0, 77, 300}
	n := 1000
	cond := ConditionalShares(w)
	rng := rand.New(rand.NewPCG(5, 6))
	M := 20_000
	marg := make([][]int, len(w))
	out := make([]int, len(w))
	for j := 0; j < M; j++ {
		Multinomial(rng, n, cond, out)
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
		numerictest.ChiSquareCheck(t, fmt.Sprintf("marginal %d", i), marg[i], func(x int) float64 { return d.Prob(float64(x)) },
			numerictest.From12(float64(n)*p, math.Sqrt(float64(n)*p*(1-p))), n)
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
			draws[j] = Poisson(rng, mu)
		}
		d := distuv.Poisson{Lambda: mu}
		numerictest.ChiSquareCheck(t, fmt.Sprintf("Poisson(%g)", mu), draws, func(x int) float64 { return d.Prob(float64(x)) },
			numerictest.From12(mu, math.Sqrt(mu)), int(mu+50*math.Sqrt(mu)+50))
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
			g := Gamma(rng, a)
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
