package branching

import (
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"
	"math/rand/v2"
	"reflect"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

func simulateClusters(d offspring.Distribution, n, cap int, seed uint64) []ChainObservation {
	rng := rand.New(rand.NewPCG(seed, 7))
	draw := offspringSampler(d, rng)
	obs := make([]ChainObservation, n)
	for i := range obs {
		y, censored := simulateChain(draw, cap)
		obs[i] = ChainObservation{Size: y, Censored: censored}
	}
	return obs
}

func TestFitChainSizesRecovers(t *testing.T) {
	// Clusters simulated with the test's own seeded BGW generator from known (R, k); the
	// maximum-likelihood fit [Blumberg & Lloyd-Smith 2013] must land within 4 bootstrap
	// standard errors of the truth (for R and for log k; a normal-approximation check,
	// false-alarm rate ~1e−4), and the bootstrap intervals must be ordered and contain
	// the estimate.
	n, B := 1500, 60
	if testing.Short() {
		n, B = 600, 30
	}
	cases := []struct {
		R, k float64
		cap  int
	}{
		{0.6, 0.3, 500},
		{0.9, 1.5, 200}, // cap 200 censors a few large clusters
	}
	for ci, c := range cases {
		obs := simulateClusters(offspring.NegBin{R: c.R, K: c.k}, n, c.cap, uint64(100+ci))
		fit, err := FitChainSizes(obs)
		if err != nil {
			t.Fatal(err)
		}
		if fit.K == nil {
			t.Fatalf("R=%v k=%v: Poisson limit reported", c.R, c.k)
		}
		if math.Abs(fit.R-c.R) > 0.1 || math.Abs(math.Log(*fit.K/c.k)) > 0.6 {
			t.Errorf("R=%v k=%v: fitted R=%v k=%v", c.R, c.k, fit.R, *fit.K)
		}
		bs, err := BootstrapChainFit(obs, B, 0.95, 11, 2)
		if err != nil {
			t.Fatal(err)
		}
		seR, seLogK := sdFinite(bs.R, func(x float64) float64 { return x }), sdFinite(bs.K, math.Log)
		if math.Abs(fit.R-c.R) > 4*seR || math.Abs(math.Log(*fit.K/c.k)) > 4*seLogK {
			t.Errorf("R=%v k=%v: fit R=%v (SE %v) k=%v (SE log k %v)", c.R, c.k, fit.R, seR, *fit.K, seLogK)
		}
		if !(bs.RLo <= fit.R && fit.R <= bs.RHi) || bs.KLo == nil || *bs.KLo > *fit.K || (bs.KHi != nil && *bs.KHi < *fit.K) {
			t.Errorf("estimate outside its bootstrap intervals: R %v [%v, %v], k %v [%v, %v]", fit.R, bs.RLo, bs.RHi, *fit.K, bs.KLo, bs.KHi)
		}
		if bs.Failed > 0 {
			t.Errorf("%d bootstrap fits failed", bs.Failed)
		}
	}
}

func TestFitChainSizesPoissonLimit(t *testing.T) {
	// Poisson offspring: the NB fit should find no finite k, and report k as nil.
	obs := simulateClusters(offspring.Poisson{R: 0.5}, 1500, 1000, 5)
	fit, err := FitChainSizes(obs)
	if err != nil {
		t.Fatal(err)
	}
	if !fit.PoissonLimit || fit.K != nil {
		// A finite k is acceptable only if it is large (weak evidence of overdispersion).
		if fit.K != nil && *fit.K < 5 {
			t.Errorf("Poisson data: k = %v", *fit.K)
		}
	}
	if fit.K != nil {
		t.Logf("Poisson data: R = %v, k = %v (finite)", fit.R, *fit.K)
	}
	if math.Abs(fit.R-0.5) > 0.06 {
		t.Errorf("Poisson data: R = %v", fit.R)
	}
	// The Borel MLE without censoring solves mean size = 1/(1 − R) (closed form: the Borel
	// log-likelihood's score is zero there).
	if fit.PoissonLimit {
		var s float64
		for _, o := range obs {
			s += float64(o.Size)
		}
		want := 1 - float64(len(obs))/s
		if !near(fit.R, want, 1e-5) {
			t.Errorf("Borel MLE %v, closed form %v", fit.R, want)
		}
	}
}

func TestFitChainSizesUnderdispersed(t *testing.T) {
	// Offspring 0 or 1 with probability 1/2 each (variance 1/4 < mean 1/2): less dispersed
	// than Poisson, so the NB likelihood increases towards k → ∞ and the fit must report the
	// Poisson limit with k nil (Levin & Reeds 1977), not a huge number.
	obs := simulateClusters(offspring.Empirical{P: []float64{0.5, 0.5}}, 2000, 1000, 8)
	fit, err := FitChainSizes(obs)
	if err != nil {
		t.Fatal(err)
	}
	if !fit.PoissonLimit || fit.K != nil {
		t.Fatalf("underdispersed data: %+v", fit)
	}
	// Borel MLE without censoring: mean size = 1/(1 − R) (the score of the Borel
	// log-likelihood Σ[−R y + (y − 1) log R] vanishes there; closed form).
	var s float64
	for _, o := range obs {
		s += float64(o.Size)
	}
	if want := 1 - float64(len(obs))/s; !near(fit.R, want, 1e-5) {
		t.Errorf("Borel MLE %v, closed form %v", fit.R, want)
	}
}

func TestFitChainSizesEdgeCases(t *testing.T) {
	fit, err := FitChainSizes([]ChainObservation{{1, false}, {1, false}})
	if err != nil || fit.R != 0 || fit.K != nil {
		t.Errorf("all singletons: %+v %v", fit, err)
	}
	if _, err := FitChainSizes([]ChainObservation{{3, true}, {5, true}}); err == nil {
		t.Error("all censored accepted")
	}
	if _, err := FitChainSizes([]ChainObservation{{0, false}}); err == nil {
		t.Error("size 0 accepted")
	}
	if _, err := FitChainSizes(nil); err == nil {
		t.Error("no clusters accepted")
	}
	// Censoring changes the likelihood: P(Y ≥ y) = 1 − Σ_{j<y} P(Y=j) [Blumberg & Lloyd-Smith 2013].
	tab, _ := tabulateChains([]ChainObservation{{4, true}})
	var below float64
	for y := 1; y < 4; y++ {
		below += math.Exp(offspring.NegBin{R: 0.7, K: 0.5}.ChainSizeLogPMF(y))
	}
	if ll := chainLogLik(&tab, 0.7, 0.5); !near(ll, math.Log(1-below), 1e-14) {
		t.Errorf("censored log-likelihood %v, want %v", ll, math.Log(1-below))
	}
	// A far-censored cluster, where 1 − Σ cancels, uses the direct tail sum.
	tab, _ = tabulateChains([]ChainObservation{{400, true}})
	var tail float64
	for y := 400; y < 20000; y++ {
		tail += math.Exp(offspring.NegBin{R: 0.3, K: 2}.ChainSizeLogPMF(y))
	}
	if ll := chainLogLik(&tab, 0.3, 2); !near(ll, math.Log(tail), 1e-9*math.Abs(math.Log(tail))) {
		t.Errorf("far-censored log-likelihood %v, want %v", ll, math.Log(tail))
	}
}

func TestBootstrapWorkerIndependence(t *testing.T) {
	obs := simulateClusters(offspring.NegBin{R: 0.7, K: 0.5}, 300, 300, 9)
	a, err := BootstrapChainFit(obs, 24, 0.9, 42, 1)
	if err != nil {
		t.Fatal(err)
	}
	b, err := BootstrapChainFit(obs, 24, 0.9, 42, 4)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(a, b) {
		t.Errorf("1 worker %+v\n4 workers %+v", a, b)
	}
	c, _ := BootstrapChainFit(obs, 24, 0.9, 43, 2)
	if reflect.DeepEqual(a.R, c.R) {
		t.Error("different seeds gave identical replicates")
	}
	if _, err := BootstrapChainFit(obs, 0, 0.9, 1, 1); err == nil {
		t.Error("B = 0 accepted")
	}
}

// sdFinite is the sample standard deviation of f(x) over the finite entries of xs.
func sdFinite(xs []float64, f func(float64) float64) float64 {
	var v []float64
	for _, x := range xs {
		if y := f(x); !math.IsNaN(y) && !math.IsInf(y, 0) {
			v = append(v, y)
		}
	}
	var m, ss float64
	for _, y := range v {
		m += y / float64(len(v))
	}
	for _, y := range v {
		ss += (y - m) * (y - m)
	}
	return math.Sqrt(ss / float64(len(v)-1))
}

// The Wald intervals of the chain-size fit agree with the cluster bootstrap's percentile
// intervals on a sample large enough for both to be near their asymptotics (both estimate
// the same sampling spread; Efron & Tibshirani 1993, ch. 13): each bound within 25% of the
// interval's width. The threshold is our own, for a check of agreement, not of accuracy.
func TestWaldChainFitAgreesWithBootstrap(t *testing.T) {
	obs := simulateClusters(offspring.NegBin{R: 0.6, K: 0.5}, 800, 10000, 5)
	fit, err := FitChainSizes(obs)
	if err != nil || fit.K == nil {
		t.Fatalf("fit %+v, %v", fit, err)
	}
	w, err := WaldChainFit(obs, fit, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	bs, err := BootstrapChainFit(obs, 400, 0.95, 1, 0)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("R %.3f: Wald %.3f–%.3f, bootstrap %.3f–%.3f", fit.R, w.RLo, w.RHi, bs.RLo, bs.RHi)
	width := bs.RHi - bs.RLo
	if math.Abs(w.RLo-bs.RLo) > 0.25*width || math.Abs(w.RHi-bs.RHi) > 0.25*width || !(w.RLo < fit.R && fit.R < w.RHi) {
		t.Errorf("R: Wald %.3f–%.3f, bootstrap %.3f–%.3f, estimate %.3f", w.RLo, w.RHi, bs.RLo, bs.RHi, fit.R)
	}
	if bs.KLo != nil && bs.KHi != nil {
		kw := *bs.KHi - *bs.KLo
		if math.Abs(*w.KLo-*bs.KLo) > 0.25*kw || math.Abs(*w.KHi-*bs.KHi) > 0.25*kw {
			t.Errorf("k: Wald %.3f–%.3f, bootstrap %.3f–%.3f", *w.KLo, *w.KHi, *bs.KLo, *bs.KHi)
		}
	}
	if c, err := ChainFitCost(obs); err != nil || c < 1 {
		t.Errorf("cost %d, %v", c, err)
	}
}

// A bootstrap replicate refitted by Newton steps from the full-data fit reaches the optimum
// the full Nelder–Mead search finds (the two are the same maximum-likelihood estimate).
func TestNewtonRefitMatchesFullSearch(t *testing.T) {
	obs := simulateClusters(offspring.NegBin{R: 0.6, K: 0.5}, 800, 10000, 5)
	full, _ := tabulateChains(obs)
	f0, err := fitTable(&full, nil)
	if err != nil {
		t.Fatal(err)
	}
	for b := 0; b < 5; b++ {
		rng := numeric.StreamRand(1, b)
		sample := make([]ChainObservation, len(obs))
		for i := range sample {
			sample[i] = obs[rng.IntN(len(obs))]
		}
		tb, _ := tabulateChains(sample)
		f, ok := newtonRefit(&tb, f0)
		g, err := fitTable(&tb, nil)
		if !ok || err != nil {
			t.Fatalf("replicate %d: refit ok %v, full search %v", b, ok, err)
		}
		if !near(f.R, g.R, 1e-5) || (f.K == nil) != (g.K == nil) || (f.K != nil && !near(*f.K, *g.K, 1e-4)) || math.Abs(f.LogLik-g.LogLik) > 1e-7 {
			t.Errorf("replicate %d: Newton R %v k %v ll %v; search R %v k %v ll %v", b, f.R, f.K, f.LogLik, g.R, g.K, g.LogLik)
		}
	}
}
