package branching

import (
	"math"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

func mustEmpirical(t testing.TB, p []float64, normalize bool) offspring.Empirical {
	t.Helper()
	e, err := offspring.NewEmpirical(p, normalize)
	if err != nil {
		t.Fatal(err)
	}
	return e
}

func TestExtinctionProbability(t *testing.T) {
	ref := loadReference(t)
	type tc struct {
		name string
		d    offspring.Distribution
		want float64
		tol  float64
	}
	cases := []tc{
		// G(s) = s² (every case has two offspring): q = 0 (common practice).
		{"two offspring", mustEmpirical(t, []float64{0, 0, 1}, false), 0, 0},
		// p_1 = 1: G(s) = s; the process never dies, q = 0 (documented choice).
		{"one offspring", mustEmpirical(t, []float64{0, 1}, false), 0, 0},
		// Subcritical and critical: q = 1 [Harris 1963].
		{"subcritical", offspring.Poisson{R: 0.7}, 1, 0},
		{"critical", offspring.NegBin{R: 1, K: 0.3}, 1, 0},
		{"R=0", offspring.Poisson{R: 0}, 1, 0},
		// Linear fractional p_x = 2^{−(x+1)} has R = 1: q = 1 [Athreya & Ney 1972, I.4].
		{"linear fractional", offspring.Geometric{R: 1}, 1, 0},
		// Geometric with mean R: G(s) = 1/(1 + R(1 − s)), roots 1 and 1/R (closed form).
		{"geometric R=2", offspring.Geometric{R: 2}, 0.5, 1e-15},
		// Lotka (1931) for American male lines, p0 = 0.4825, p_k = 0.2126·0.5893^{k−1},
		// q ≈ 0.819: quoted from memory as given in Feller, An Introduction to Probability
		// Theory and Its Applications, vol. 1, XII.5. The list sums to 1.00015 and is
		// normalized; it is truncated at k = 60 (tail ~1e−14).
		{"Lotka 1931", lotka(t), 0.819, 0.0015},
	}
	for _, r := range ref.PoissonExtinction {
		// SciPy 1.10.1 scipy.special.lambertw: q = −W0(−Re^{−R})/R [Corless et al. 1996].
		cases = append(cases, tc{"scipy lambertw", offspring.Poisson{R: r.R}, r.Q, 1e-12})
		// The same formula with the test's own Halley-iteration Lambert W.
		cases = append(cases, tc{"halley lambertw", offspring.Poisson{R: r.R}, -lambertW0(-r.R*math.Exp(-r.R)) / r.R, 1e-12})
	}
	for _, r := range ref.NegbinExtinction {
		// SciPy 1.10.1 scipy.optimize.brentq on G(s) − s.
		cases = append(cases, tc{"scipy brentq NB", offspring.NegBin{R: r.R, K: r.K}, r.Q, 1e-13})
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			q, err := ExtinctionProbability(c.d)
			if err != nil {
				t.Fatal(err)
			}
			if !near(q, c.want, c.tol) {
				t.Errorf("%v: q = %.17g, want %.17g ± %g", c.d, q, c.want, c.tol)
			}
			u, err := MajorOutbreakProbability(c.d)
			if err != nil {
				t.Fatal(err)
			}
			if !near(u, 1-q, 1e-15) {
				t.Errorf("1 − q = %v but MajorOutbreakProbability = %v", 1-q, u)
			}
		})
	}
}

func lotka(t testing.TB) offspring.Empirical {
	p := []float64{0.4825}
	for k := 1; k <= 60; k++ {
		p = append(p, 0.2126*math.Pow(0.5893, float64(k-1)))
	}
	return mustEmpirical(t, p, true)
}

func TestLambertWHelper(t *testing.T) {
	// The test's Halley Lambert W against SciPy 1.10.1 scipy.special.lambertw.
	for _, r := range loadReference(t).Lambertw {
		if got := lambertW0(r.Z); !near(got, r.W, 1e-14) {
			t.Errorf("W0(%v) = %v, SciPy %v", r.Z, got, r.W)
		}
	}
}

// TestExtinctionNearCritical checks 1 − q for R = 1 + ε against the defining equation
// u = 1 − G(1 − u) (closed form for Poisson: u = −expm1(−Ru)) and the first-order
// asymptote u ≈ 2ε/E[Z(Z−1)] = 2ε/R² [Harris 1963, ch. 1].
func TestExtinctionNearCritical(t *testing.T) {
	for _, eps := range []float64{1e-2, 1e-4, 1e-6, 1e-9} {
		R := 1 + eps
		u, err := MajorOutbreakProbability(offspring.Poisson{R: R})
		if err != nil {
			t.Fatal(err)
		}
		// h(u) = u − (1 − G(1 − u)) is a difference of terms ~u whose result is ~εu, so
		// double precision resolves u only to a relative ~1e−16/ε: the bracket allows for it.
		rel := math.Max(1e-9, 1e3*0x1p-52/eps)
		h := func(u float64) float64 { return u + math.Expm1(-R*u) }
		// The root is bracketed tightly: h < 0 just below, > 0 just above.
		if !(h(u*(1-rel)) < 0 && h(u*(1+rel)) > 0) {
			t.Errorf("R = 1 + %g: u = %v is not the root of u = 1 − e^{−Ru} to %g relative", eps, u, rel)
		}
		asym := 2 * (R - 1) / (R * R)
		if math.Abs(u/asym-1) > 2*eps+rel {
			t.Errorf("R = 1 + %g: u = %v, asymptote %v", eps, u, asym)
		}
		// NB near critical: defining equation with the closed-form complement.
		nb := offspring.NegBin{R: R, K: 0.5}
		u2, err := MajorOutbreakProbability(nb)
		if err != nil {
			t.Fatal(err)
		}
		h2 := func(u float64) float64 { return u + math.Expm1(-0.5*math.Log1p(R/0.5*u)) }
		if !(h2(u2*(1-rel)) < 0 && h2(u2*(1+rel)) > 0) {
			t.Errorf("NB R = 1 + %g: u = %v is not the root", eps, u2)
		}
	}
}

func TestExtinctionByGeneration(t *testing.T) {
	// Linear fractional: G_n(0) = n/(n+1) [Athreya & Ney 1972, I.4].
	for _, n := range []int{0, 1, 2, 5, 50, 1000} {
		got, err := ExtinctionByGeneration(offspring.Geometric{R: 1}, n)
		if err != nil {
			t.Fatal(err)
		}
		want := float64(n) / float64(n+1)
		if !near(got, want, 1e-13) {
			t.Errorf("n = %d: G_n(0) = %v, want %v", n, got, want)
		}
	}
	// It converges to q for R > 1 (Harris 1963): Poisson(2), many generations.
	q, _ := ExtinctionProbability(offspring.Poisson{R: 2})
	g, _ := ExtinctionByGeneration(offspring.Poisson{R: 2}, 200)
	if !near(g, q, 1e-14) {
		t.Errorf("G_200(0) = %v, q = %v", g, q)
	}
	if _, err := ExtinctionByGeneration(offspring.Poisson{R: 2}, -1); err == nil {
		t.Error("negative generation accepted")
	}
}

func TestInvalidDistributions(t *testing.T) {
	bad := []offspring.Distribution{
		nil,
		offspring.Poisson{R: -1},
		offspring.Poisson{R: math.NaN()},
		offspring.Poisson{R: math.Inf(1)},
		offspring.NegBin{R: 1, K: 0},
		offspring.NegBin{R: 1, K: math.Inf(1)},
		offspring.Geometric{R: -0.5},
		offspring.Empirical{P: []float64{0.5, 0.6}},
		offspring.Empirical{P: []float64{-0.1, 1.1}},
		offspring.Empirical{},
	}
	for _, d := range bad {
		if _, err := ExtinctionProbability(d); err == nil {
			t.Errorf("%#v accepted by ExtinctionProbability", d)
		}
		if _, err := GenerationSizes(d, 1, 2); err == nil {
			t.Errorf("%#v accepted by GenerationSizes", d)
		}
		if _, err := ChainSizes(d, 10); err == nil {
			t.Errorf("%#v accepted by ChainSizes", d)
		}
		if _, err := Outlook(d, 1, 2, 0.8); err == nil {
			t.Errorf("%#v accepted by Outlook", d)
		}
	}
}
