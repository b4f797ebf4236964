package branching

import (
	"errors"
	"math"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/stat/distuv"
)

// Bayes' rule by quadrature, written without the conjugacy: E[e^{−tν} | o seen in share F]
// = ∫ e^{−tν} p(ν) (νF)^o e^{−νF} dν / ∫ p(ν) (νF)^o e^{−νF} dν, p the Gamma(k, mean R)
// density of gonum's distuv, integrated by gonum's Gauss–Legendre rule after ν = s^{1/a}
// (scaled, a = k + o, which makes the integrand smooth at 0 when k < 1) and s = u/(1 − u).
func posteriorLaplaceByQuadrature(r, k, o, f, t float64) (laplace, mean float64) {
	prior := distuv.Gamma{Alpha: k, Beta: k / r}
	like := func(nu float64) float64 {
		return prior.Prob(nu) * math.Exp(o*math.Log(nu*f+1e-300)-nu*f)
	}
	a := k + o
	scale := a / (k/r + f) // puts the bulk of the mass near s = 1
	integrate := func(g func(float64) float64) float64 {
		return quad.Fixed(func(u float64) float64 {
			if u == 0 {
				u = 1e-300
			}
			s := u / (1 - u)
			nu := scale * math.Pow(s, 1/a)
			return g(nu) * nu / (a * s) / ((1 - u) * (1 - u))
		}, 0, 1, 20000, nil, 0)
	}
	z := integrate(like)
	laplace = integrate(func(nu float64) float64 { return math.Exp(-t*nu) * like(nu) }) / z
	mean = integrate(func(nu float64) float64 { return nu * like(nu) }) / z
	return laplace, mean
}

func TestNuPosteriorMatchesBayesByQuadrature(t *testing.T) {
	for _, c := range []struct{ r, k, o, f, t float64 }{
		{0.9, 0.3, 0, 0.2, 0.5},
		{1.5, 0.5, 4, 0.6, 0.3},
		{2.0, 1.2, 1, 0.9, 0.8},
		{0.8, 2.5, 7, 0.4, 0.05},
	} {
		g := offspring.GammaNu{Shape: c.k}
		wantL, wantM := posteriorLaplaceByQuadrature(c.r, c.k, c.o, c.f, c.t)
		if got := math.Exp(g.PosteriorLogLaplace(c.r, c.o, c.f, c.t)); math.Abs(got-wantL) > 1e-6*wantL {
			t.Errorf("%+v: Laplace %.10g, quadrature %.10g", c, got, wantL)
		}
		if got := g.PosteriorMean(c.r, c.o, c.f); math.Abs(got-wantM) > 1e-6*wantM {
			t.Errorf("%+v: posterior mean %.10g, quadrature %.10g", c, got, wantM)
		}
	}
}

func TestCurrentChainsClosedForms(t *testing.T) {
	nb := offspring.NegBin{R: 2, K: 0.5}
	q, err := ExtinctionProbability(nb)
	if err != nil {
		t.Fatal(err)
	}
	// Five new cases (nothing seen, nothing elapsed): q^5, five independent introductions.
	res, err := CurrentChains(nb, []Exposure{{Offspring: 0, Elapsed: 0, Count: 5}})
	if err != nil {
		t.Fatal(err)
	}
	if want := math.Pow(q, 5); math.Abs(res.DieOut-want) > 1e-12 {
		t.Errorf("five new cases: %v, want q^5 = %v", res.DieOut, want)
	}
	if !math.IsInf(res.Further, 1) || math.Abs(res.Pending-10) > 1e-12 {
		t.Errorf("R = 2: pending %v (want 5·R = 10), further %v (want +Inf)", res.Pending, res.Further)
	}
	// Cases whose serial interval has run out add nothing, whatever they did.
	done, err := CurrentChains(nb, []Exposure{{Offspring: 9, Elapsed: 1, Count: 3}})
	if err != nil || done.DieOut != 1 || done.Pending != 0 || done.Further != 0 {
		t.Errorf("finished cases: %+v, %v; want certain extinction and nothing pending", done, err)
	}
	// Poisson offspring: ν = R for all, so P = exp(−R(1−q)·Σ(1−F_i)), whatever was seen.
	po := offspring.Poisson{R: 1.4}
	qp, _ := ExtinctionProbability(po)
	ex := []Exposure{{Offspring: 3, Elapsed: 0.25, Count: 2}, {Offspring: 0, Elapsed: 0.7, Count: 4}}
	pr, err := CurrentChains(po, ex)
	if err != nil {
		t.Fatal(err)
	}
	if want := math.Exp(-1.4 * (1 - qp) * (2*0.75 + 4*0.3)); math.Abs(pr.DieOut-want) > 1e-12 {
		t.Errorf("Poisson: %v, want %v", pr.DieOut, want)
	}
	// A case that has already infected many keeps a high ν: more offspring seen, lower chance.
	few, _ := CurrentChains(nb, []Exposure{{Offspring: 0, Elapsed: 0.5, Count: 1}})
	many, _ := CurrentChains(nb, []Exposure{{Offspring: 6, Elapsed: 0.5, Count: 1}})
	if !(many.DieOut < few.DieOut) || !(many.Pending > few.Pending) {
		t.Errorf("a case with 6 offspring at half its serial interval: die-out %v, pending %v; with none: %v, %v",
			many.DieOut, many.Pending, few.DieOut, few.Pending)
	}
	// Subcritical: certain extinction, and the expected further cases are pending/(1 − R).
	sub := offspring.NegBin{R: 0.8, K: 0.3}
	s, err := CurrentChains(sub, []Exposure{{Offspring: 1, Elapsed: 0.4, Count: 10}})
	if err != nil {
		t.Fatal(err)
	}
	pend := 10 * (0.3 + 1) / (0.3/0.8 + 0.4) * 0.6
	if s.DieOut != 1 || math.Abs(s.Pending-pend) > 1e-12 || math.Abs(s.Further-pend/0.2) > 1e-9 {
		t.Errorf("R = 0.8: %+v; want die-out 1, pending %v, further %v", s, pend, pend/0.2)
	}
}

func TestCurrentChainsRefusesWhatItCannotCondition(t *testing.T) {
	emp := offspring.Empirical{P: []float64{0.5, 0.3, 0.2}}
	if _, err := CurrentChains(emp, []Exposure{{Count: 1}}); !errors.Is(err, ErrNoNuPosterior) {
		t.Errorf("a list model: %v, want ErrNoNuPosterior", err)
	}
	nb := offspring.NegBin{R: 1.2, K: 0.4}
	for _, bad := range []Exposure{{Offspring: -1, Count: 1}, {Elapsed: 1.5, Count: 1}, {Offspring: math.NaN(), Count: 1}, {Elapsed: math.NaN(), Count: 1}} {
		if _, err := CurrentChains(nb, []Exposure{bad}); err == nil {
			t.Errorf("%+v accepted", bad)
		}
	}
}
