package offspring_test

import (
	"math"
	"testing"

	"github.com/caseweave/caseweave/pipeline/branching"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

// zeroInflatedPoisson is a fourth offspring family defined only here, to show that a model
// needs nothing but this file to run through package branching: with probability Pi a case
// infects no one whatever happens, otherwise it infects Poisson(Lambda) others. So
//
//	P(Z = 0) = π + (1 − π)e^{−λ},  P(Z = x) = (1 − π)e^{−λ}λ^x/x! (x ≥ 1),
//	G(s) = π + (1 − π)e^{λ(s − 1)},  R = (1 − π)λ,  Var Z = (1 − π)λ(1 + πλ)
//
// (the zero-inflated Poisson; Johnson, Kemp & Kotz 2005, Univariate Discrete Distributions,
// §8.2.3). It implements Distribution and, as its one optional capability, MixedPoisson:
// ν is 0 with probability π and λ otherwise.
type zeroInflatedPoisson struct{ Pi, Lambda float64 }

func (d zeroInflatedPoisson) Name() string      { return "zero_inflated_poisson" }
func (d zeroInflatedPoisson) Mean() float64     { return (1 - d.Pi) * d.Lambda }
func (d zeroInflatedPoisson) Variance() float64 { return (1 - d.Pi) * d.Lambda * (1 + d.Pi*d.Lambda) }
func (d zeroInflatedPoisson) PMF(x int) float64 { return math.Exp(d.LogPMF(x)) }
func (d zeroInflatedPoisson) LogPMF(x int) float64 {
	if x < 0 {
		return math.Inf(-1)
	}
	lg, _ := math.Lgamma(float64(x) + 1)
	p := math.Log1p(-d.Pi) - d.Lambda + float64(x)*math.Log(d.Lambda) - lg
	if x == 0 {
		return math.Log(d.Pi + math.Exp(p))
	}
	return p
}
func (d zeroInflatedPoisson) PGF(s float64) float64 {
	return d.Pi + (1-d.Pi)*math.Exp(d.Lambda*(s-1))
}
func (d zeroInflatedPoisson) PGFComplex(s complex128) complex128 {
	return complex(d.Pi, 0) + complex(1-d.Pi, 0)*cexp(complex(d.Lambda, 0)*(s-1))
}
func (d zeroInflatedPoisson) IndividualR() offspring.IndividualR { return twoPointNu{d.Pi} }

func cexp(z complex128) complex128 {
	return complex(math.Exp(real(z))*math.Cos(imag(z)), math.Exp(real(z))*math.Sin(imag(z)))
}

// twoPointNu is ν = 0 with probability Pi and ν = λ otherwise: every infection comes from
// the cases with ν = λ, so a share target of transmission needs the share target·(1 − π) of
// cases (interpolating within that atom, as the "20/80" reading does).
type twoPointNu struct{ Pi float64 }

func (n twoPointNu) ShareCausing(target float64) (float64, error) { return target * (1 - n.Pi), nil }

// lambertW0 is the principal branch of W (w·e^w = x, x ≥ −1/e) by Halley's iteration
// [Corless et al. 1996, Adv Comput Math 5:329], written here as an independent reference.
func lambertW0(x float64) float64 {
	w := 0.0
	if x > 1 {
		w = math.Log(x)
	}
	for range 100 {
		e := math.Exp(w)
		f := w*e - x
		next := w - f/(e*(w+1)-(w+2)*f/(2*w+2))
		if math.Abs(next-w) <= 1e-16*(1+math.Abs(w)) {
			return next
		}
		w = next
	}
	return w
}

func close(a, b, rel float64) bool { return math.Abs(a-b) <= rel*math.Max(math.Abs(b), 1e-300) }

// Extinction. q solves q = π + (1 − π)e^{λ(q − 1)}; with y = q − π this is y = c·e^{λy},
// c = (1 − π)e^{−λ(1−π)}, so −λy·e^{−λy} = −λc and the smallest root is
// q = π − W₀(−λ(1 − π)e^{−λ(1 − π)})/λ (derived here; W₀ the principal Lambert W branch).
func TestZeroInflatedExtinction(t *testing.T) {
	for _, d := range []zeroInflatedPoisson{{0.2, 2.5}, {0.5, 3}, {0.05, 1.2}} {
		m := d.Lambda * (1 - d.Pi)
		want := d.Pi - lambertW0(-m*math.Exp(-m))/d.Lambda
		got, err := branching.ExtinctionProbability(d)
		if err != nil || !close(got, want, 1e-10) {
			t.Errorf("%+v: q = %v (%v), want %v", d, got, err, want)
		}
	}
	// R = (1 − π)λ ≤ 1: extinction is certain [Harris 1963, ch. 1].
	if q, _ := branching.ExtinctionProbability(zeroInflatedPoisson{0.4, 1.5}); q != 1 {
		t.Errorf("R = 0.9: q = %v, want 1", q)
	}
}

// Generation sizes from a = 3 cases. X_1: J ~ Binomial(3, 1 − π) of the cases are not
// inflated and X_1 | J ~ Poisson(λJ), so P(X_1 = x) = Σ_j C(3, j)(1 − π)^j π^{3−j}·Pois(x; λj).
// X_2: P(X_2 = 0) = G(G(0))³, mean 3R² [Harris 1963, ch. 1, §5].
func TestZeroInflatedGenerationSizes(t *testing.T) {
	d := zeroInflatedPoisson{0.3, 2}
	gens, err := branching.GenerationSizes(d, 3, 2)
	if err != nil {
		t.Fatal(err)
	}
	binom := []float64{1, 3, 3, 1}
	for x := 0; x < 25; x++ {
		want := 0.0
		for j := 0; j <= 3; j++ {
			mu := d.Lambda * float64(j)
			pois := 0.0
			switch {
			case mu == 0 && x == 0:
				pois = 1
			case mu > 0:
				lg, _ := math.Lgamma(float64(x) + 1)
				pois = math.Exp(-mu + float64(x)*math.Log(mu) - lg)
			}
			want += binom[j] * math.Pow(1-d.Pi, float64(j)) * math.Pow(d.Pi, float64(3-j)) * pois
		}
		if got := gens[0].PMF[x]; math.Abs(got-want) > 1e-10 {
			t.Errorf("P(X_1 = %d) = %v, want %v", x, got, want)
		}
	}
	if want := math.Pow(d.PGF(d.PGF(0)), 3); !close(gens[1].PZero, want, 1e-12) {
		t.Errorf("P(X_2 = 0) = %v, want %v", gens[1].PZero, want)
	}
	if want := 3 * d.Mean() * d.Mean(); gens[1].Mean == nil || !close(*gens[1].Mean, want, 1e-12) {
		t.Errorf("E X_2 = %v, want %v", gens[1].Mean, want)
	}
	// The decoded PMF's own mean agrees with the closed form.
	mean := 0.0
	for x, p := range gens[1].PMF {
		mean += float64(x) * p
	}
	if !close(mean, 3*d.Mean()*d.Mean(), 1e-6) {
		t.Errorf("decoded E X_2 = %v", mean)
	}
}

// Chain sizes. Lagrange inversion, P(Y = y) = (1/y)[s^{y−1}]G(s)^y [Blumberg & Lloyd-Smith
// 2013], with G(s)^y = Σ_j C(y, j)π^{y−j}(1 − π)^j e^{−λj}e^{λjs}, gives the finite sum
// P(Y = y) = (1/y) Σ_{j=1}^{y} C(y, j) π^{y−j}(1 − π)^j e^{−λj}(λj)^{y−1}/(y − 1)!
// for y ≥ 2, plus the j = 0 term π for y = 1, where P(Y = 1) = G(0) (derived here). The model has no closed form of its own, so ChainSizes takes the
// Lagrange path.
func TestZeroInflatedChainSizes(t *testing.T) {
	d := zeroInflatedPoisson{0.3, 1.2} // R = 0.84
	cs, err := branching.ChainSizes(d, 60)
	if err != nil {
		t.Fatal(err)
	}
	if cs.Method != branching.ChainMethodLagrange {
		t.Errorf("method %s, want the general path", cs.Method)
	}
	for y := 1; y <= 40; y++ {
		fy := float64(y)
		sum := 0.0
		if y == 1 {
			sum = d.Pi
		}
		for j := 1; j <= y; j++ {
			fj := float64(j)
			lc, _ := math.Lgamma(fy + 1)
			l1, _ := math.Lgamma(fj + 1)
			l2, _ := math.Lgamma(fy - fj + 1)
			ly, _ := math.Lgamma(fy)
			lt := lc - l1 - l2 - fj*d.Lambda + (fy-1)*math.Log(d.Lambda*fj) - ly + fj*math.Log1p(-d.Pi)
			if y > j {
				lt += (fy - fj) * math.Log(d.Pi)
			}
			sum += math.Exp(lt)
		}
		want := sum / fy
		if got := cs.PMF[y-1]; math.Abs(got-want) > 1e-10+1e-8*want {
			t.Errorf("P(Y = %d) = %v, want %v", y, got, want)
		}
	}
	// R < 1: the mean chain size is 1/(1 − R) [Harris 1963].
	if cs.Mean == nil || !close(*cs.Mean, 1/(1-d.Mean()), 1e-12) {
		t.Errorf("mean chain size %v", cs.Mean)
	}
}

// Shares. By realised counts: the inflated zeros add no transmission and rank last, and the
// other cases carry weights (1 − π)·Pois(x; λ), so the share is (1 − π) times the Poisson(λ)
// share (derived here). By ν: target·(1 − π) (twoPointNu).
func TestZeroInflatedShares(t *testing.T) {
	d := zeroInflatedPoisson{0.4, 3}
	got, err := branching.ShareByOffspring(d, 0.8)
	if err != nil {
		t.Fatal(err)
	}
	pois, _ := branching.ShareByOffspring(offspring.Poisson{R: d.Lambda}, 0.8)
	if got == nil || pois == nil || !close(*got, (1-d.Pi)**pois, 1e-9) {
		t.Errorf("share by counts %v, want (1 − π)·%v", got, pois)
	}
	nu, err := branching.ShareByNu(d, 0.8)
	if err != nil || nu == nil || !close(*nu, 0.8*(1-d.Pi), 1e-15) {
		t.Errorf("share by ν %v (%v), want %v", nu, err, 0.8*(1-d.Pi))
	}
	// The whole outlook and a projection mixing two members run as well.
	if _, err := branching.Outlook(d, 5, 3, 0.8); err != nil {
		t.Errorf("outlook: %v", err)
	}
	pr, err := branching.Project([]offspring.Distribution{d, zeroInflatedPoisson{0.5, 2}}, 4, 2)
	if err != nil || pr.Generations[0].Interval90.Hi == nil {
		t.Errorf("projection: %v", err)
	}
}
