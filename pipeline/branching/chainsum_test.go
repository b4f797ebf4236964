package branching

import (
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/offspring"
	"math"
	"strconv"
	"testing"
)

// termSum is Σ_{j=a}^{b−1} e^{g(j)}, term by term: what smoothSum stands in for.
func termSum(g func(float64) float64, a, b int) float64 {
	var s numeric.Sum
	for j := a; j < b; j++ {
		s.Add(math.Exp(g(float64(j))))
	}
	return s.Value()
}

// chainLogPMFs returns the chain-size log-probability of NB(R, k) (Borel for k = +Inf) at
// integer sizes, from the package's closed forms, as a function of a real argument.
func chainLogPMF(R, k float64) func(float64) float64 {
	if math.IsInf(k, 1) {
		return func(x float64) float64 { return offspring.Poisson{R: R}.ChainSizeLogPMF(int(x)) }
	}
	return func(x float64) float64 { return offspring.NegBin{R: R, K: k}.ChainSizeLogPMF(int(x)) }
}

// TestSmoothSumMatchesTermByTerm compares the Euler–Maclaurin quadrature of smoothSum with
// the plain sum of the closed-form chain-size probabilities over ranges a censored cluster
// needs, for sub-, near- and supercritical R and strong to no overdispersion. The sums enter
// the likelihood through 1 − Σ, so they must agree to round-off in absolute terms.
func TestSmoothSumMatchesTermByTerm(t *testing.T) {
	ranges := [][2]int{{256, 257}, {256, 300}, {256, 1500}, {1024, 21729}, {3000, 3001}, {5000, 60000}}
	for _, R := range []float64{0.3, 0.8, 0.95, 0.99, 1, 1.01, 1.3, 3} {
		for _, k := range []float64{0.02, 0.1, 0.5, 1, 10, 1e3, math.Inf(1)} {
			_, cont := chainLogPMFs(&chainTable{}, R, k)
			for _, r := range ranges {
				got := smoothSum(cont, r[0], r[1])
				want := termSum(chainLogPMF(R, k), r[0], r[1])
				// log Γ((k+1)·j) is of size L = (k+1)·j·log((k+1)·j) and carries round-off
				// of about L·2⁻⁵², in both sums alike (the closed form cancels it too).
				L := (k + 1) * float64(r[1]) * math.Log((k+1)*float64(r[1]))
				if math.IsInf(k, 1) {
					L = float64(r[1]) * math.Log(float64(r[1]))
				}
				if d := math.Abs(got - want); d > 1e-17+(1e-12+4e-16*L)*want {
					t.Errorf("R=%g k=%g Σ_{%d}^{%d}: quadrature %.17g, terms %.17g (diff %.3g)", R, k, r[0], r[1]-1, got, want, d)
				}
			}
		}
	}
}

// TestChainLogLikQuadratureNational checks the likelihood and the fit on the cluster sizes
// of the benchmark's 1M-case file, whose largest censored cluster has 21,729 cases: the quadrature
// sum beyond chainSumFrom must give the log-likelihood of the term-by-term sum to 1e−11
// relative, and the fit must be a maximum of the term-by-term likelihood too: no point a
// small step away (far inside the standard errors) may score higher.
func TestChainLogLikQuadratureNational(t *testing.T) {
	obs := nationalChains(t)
	quick, err := tabulateChains(obs)
	if err != nil {
		t.Fatal(err)
	}
	slow := quick
	slow.sumFrom = math.MaxInt
	for _, p := range [][2]float64{{0.99, 0.51}, {0.9, 0.3}, {0.5, 0.3}, {0.2, 0.1}, {0.999, 2}, {1.05, 0.5}, {0.99, math.Inf(1)}, {0.6, math.Inf(1)}} {
		a, b := chainLogLik(&quick, p[0], p[1]), chainLogLik(&slow, p[0], p[1])
		if math.Abs(a-b) > 1e-11*math.Abs(b) {
			t.Errorf("R=%g k=%g: log-likelihood %.12f with quadrature, %.12f term by term", p[0], p[1], a, b)
		}
	}
	fit, err := fitTable(&quick, nil)
	if err != nil {
		t.Fatal(err)
	}
	if fit.K == nil {
		t.Fatalf("fit %+v: want a negative binomial fit", fit)
	}
	at := chainLogLik(&slow, fit.R, *fit.K)
	for _, step := range [][2]float64{{1e-4, 0}, {-1e-4, 0}, {0, 1e-3}, {0, -1e-3}, {1e-4, 1e-3}, {-1e-4, -1e-3}} {
		R, k := fit.R*(1+step[0]), *fit.K*(1+step[1])
		if v := chainLogLik(&slow, R, k); v > at+1e-7 {
			t.Errorf("term-by-term log-likelihood %.10f at (R, k) = (%.7f, %.7f) beats %.10f at the fit (%.7f, %.7f)",
				v, R, k, at, fit.R, *fit.K)
		}
	}
}

// TestChainLogLikExtremeParameters evaluates the national table's likelihood at the corners
// of the region the optimisers may visit: each must return (finite or not) rather than run on.
func TestChainLogLikExtremeParameters(t *testing.T) {
	tab, err := tabulateChains(nationalChains(t))
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range [][2]float64{{1e-300, 1}, {1e-12, 1e-8}, {999, 1e-8}, {999, 1e5}, {0.5, 1e-8}, {1, 1e5}, {1, 1e-8}, {5e-324, math.Inf(1)}, {999, math.Inf(1)}} {
		v := chainLogLik(&tab, p[0], p[1])
		// A log-likelihood is at most 0 or −∞; NaN fails the comparison and is caught too.
		if !(v <= 0) {
			t.Errorf("R=%g k=%g: log-likelihood %v is positive or NaN", p[0], p[1], v)
		}
	}
}

// TestChainLogLikMatchesR compares the chain-size log-likelihood of the national table,
// censored clusters included, with R's term-by-term computation
// (testdata/branching/chain_loglik_reference.R, R 4.2.2: lgamma, and tails summed from the
// top with cumsum over five million terms).
func TestChainLogLikMatchesR(t *testing.T) {
	tab, err := tabulateChains(nationalChains(t))
	if err != nil {
		t.Fatal(err)
	}
	rows := readTestCSV(t, "chain_loglik_reference.txt")
	n := 0
	for _, row := range rows {
		if row[0] == "R" { // the header
			continue
		}
		var v [3]float64
		for i, f := range row {
			if v[i], err = strconv.ParseFloat(f, 64); err != nil {
				t.Fatal(err)
			}
		}
		got := chainLogLik(&tab, v[0], v[1])
		if math.Abs(got-v[2]) > 1e-12*math.Abs(v[2]) { // agreement seen: 3e-16 to 1.2e-14
			t.Errorf("R=%g k=%g: log-likelihood %.9f, R computes %.9f", v[0], v[1], got, v[2])
		}
		n++
	}
	if n != 6 {
		t.Fatalf("%d reference rows, want 6", n)
	}
}
