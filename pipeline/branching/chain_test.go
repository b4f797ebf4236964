package branching

import (
	"math"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

func TestChainSizeClosedFormsSciPy(t *testing.T) {
	ref := loadReference(t)
	// NB chain sizes [Blumberg & Lloyd-Smith 2013, eq. 3], evaluated with SciPy 1.10.1
	// scipy.special.gammaln (testdata/branching/make_reference.py).
	for _, r := range ref.ChainNegbin {
		got := math.Exp(offspring.NegBin{R: r.R, K: r.K}.ChainSizeLogPMF(r.Y))
		if !near(got, r.P, 1e-12*r.P+1e-300) {
			t.Errorf("NB(%v,%v) y=%d: %v, SciPy %v", r.R, r.K, r.Y, got, r.P)
		}
	}
	// Borel e^{−Ry}(Ry)^{y−1}/y! [Blumberg & Lloyd-Smith 2013], SciPy gammaln.
	for _, r := range ref.ChainBorel {
		got := math.Exp(offspring.Poisson{R: r.R}.ChainSizeLogPMF(r.Y))
		if !near(got, r.P, 1e-12*r.P+1e-300) {
			t.Errorf("Borel(%v) y=%d: %v, SciPy %v", r.R, r.Y, got, r.P)
		}
	}
	// The NB with k → ∞ tends to Borel (Poisson limit of the NB [Lloyd-Smith et al. 2005]).
	for _, y := range []int{1, 3, 10} {
		nb := math.Exp(offspring.NegBin{R: 0.7, K: 1e8}.ChainSizeLogPMF(y))
		b := math.Exp(offspring.Poisson{R: 0.7}.ChainSizeLogPMF(y))
		if !near(nb, b, 1e-6*b) {
			t.Errorf("y=%d: NB k=1e8 %v vs Borel %v", y, nb, b)
		}
	}
}

func TestChainSizesSumAndMean(t *testing.T) {
	// Finite sizes sum to q and, for R < 1, the mean is 1/(1 − R) [Blumberg & Lloyd-Smith
	// 2013; Harris 1963].
	cases := []offspring.Distribution{
		offspring.NegBin{R: 0.8, K: 0.2}, offspring.NegBin{R: 0.5, K: 5},
		offspring.NegBin{R: 2.5, K: 0.1}, offspring.NegBin{R: 1.5, K: 1},
		offspring.Poisson{R: 0.6}, offspring.Poisson{R: 1.8}, offspring.Geometric{R: 0.7},
	}
	for _, d := range cases {
		for _, method := range []string{ChainMethodClosedForm, ChainMethodLagrange} {
			var cs *ChainSizeDistribution
			var err error
			if method == ChainMethodClosedForm {
				cs, err = ChainSizes(d, 20000)
			} else {
				cs, err = ChainSizesLagrange(d, 20000)
			}
			if err != nil {
				t.Fatal(err)
			}
			q, _ := ExtinctionProbability(d)
			var sum, mean float64
			for i, p := range cs.PMF {
				sum += p
				mean += float64(i+1) * p
			}
			if !near(sum+cs.TruncatedMass, q, 1e-12) || cs.TruncatedMass > 1e-9 {
				t.Errorf("%v %s: Σ = %v + truncated %v, q = %v", d, method, sum, cs.TruncatedMass, q)
			}
			if d.Mean() < 1 {
				want := 1 / (1 - d.Mean())
				if cs.Mean == nil || !near(*cs.Mean, want, 1e-12) || !near(mean, want, 1e-6*want) {
					t.Errorf("%v %s: mean %v (PMF %v), want %v", d, method, cs.Mean, mean, want)
				}
			} else if cs.Mean != nil {
				t.Errorf("%v: mean %v for R ≥ 1", d, *cs.Mean)
			}
		}
	}
}

func TestChainSizesLagrangeMatchesClosedForms(t *testing.T) {
	for _, d := range []offspring.Distribution{
		offspring.NegBin{R: 0.8, K: 0.2}, offspring.NegBin{R: 2.5, K: 0.1},
		offspring.Poisson{R: 0.9}, offspring.Poisson{R: 1.5}, offspring.Geometric{R: 1},
	} {
		closed, err := ChainSizes(d, 2000)
		if err != nil {
			t.Fatal(err)
		}
		lag, err := ChainSizesLagrange(d, 2000)
		if err != nil {
			t.Fatal(err)
		}
		for i := 0; i < min(len(closed.PMF), len(lag.PMF)); i++ {
			if !near(lag.PMF[i], closed.PMF[i], 1e-13+1e-8*closed.PMF[i]) {
				t.Fatalf("%v y=%d: Lagrange-FFT %v, closed form %v", d, i+1, lag.PMF[i], closed.PMF[i])
			}
		}
		// The one-coefficient Lagrange formula (1/y)[s^{y−1}]G^y.
		for _, y := range []int{1, 2, 5, 20, 60} {
			p, err := ChainSizeLagrangeAt(d, y)
			if err != nil {
				t.Fatal(err)
			}
			want := closed.PMF[y-1]
			if !near(p, want, 1e-13+1e-8*want) {
				t.Errorf("%v y=%d: (1/y)[s^(y-1)]G^y = %v, closed form %v", d, y, p, want)
			}
		}
	}
}

func TestChainSizesListExactPolynomial(t *testing.T) {
	// (1/y)[s^{y−1}]G(s)^y by exact polynomial powers in NumPy 1.24.2
	// (numpy.polynomial.polynomial.polypow; testdata/branching/make_reference.py).
	for _, r := range loadReference(t).ChainList {
		d := mustEmpirical(t, r.P, false)
		cs, err := ChainSizes(d, 0)
		if err != nil {
			t.Fatal(err)
		}
		if cs.Method != ChainMethodLagrange {
			t.Errorf("method %s for a list", cs.Method)
		}
		for i, want := range r.PMF {
			if i >= len(cs.PMF) {
				if want > TrimMass {
					t.Errorf("list %v ends at %d, NumPy P(Y=%d) = %v", r.P, len(cs.PMF), i+1, want)
				}
				continue
			}
			if !near(cs.PMF[i], want, 1e-14+1e-9*want) {
				t.Errorf("list %v y=%d: %v, NumPy %v", r.P, i+1, cs.PMF[i], want)
			}
		}
	}
}

func TestChainSizesEdgeCases(t *testing.T) {
	cs, err := ChainSizes(offspring.Poisson{R: 0}, 0)
	if err != nil || len(cs.PMF) != 1 || cs.PMF[0] != 1 {
		t.Errorf("R = 0: %+v %v", cs, err)
	}
	// The cap on the list length holds and the rest is reported.
	cs, err = ChainSizes(offspring.NegBin{R: 1, K: 0.5}, 100)
	if err != nil || len(cs.PMF) != 100 {
		t.Fatalf("cap: %v %v", err, cs)
	}
	var s float64
	for _, p := range cs.PMF {
		s += p
	}
	if !near(s+cs.TruncatedMass, 1, 1e-12) || cs.TruncatedMass < 0.01 {
		t.Errorf("critical chain, 100 sizes: Σ %v, truncated %v", s, cs.TruncatedMass)
	}
	if _, err := ChainSizes(offspring.Poisson{R: 1}, -1); err == nil {
		t.Error("negative cap accepted")
	}
	if _, err := ChainSizeLagrangeAt(offspring.Poisson{R: 1}, 0); err == nil {
		t.Error("y = 0 accepted")
	}
}
