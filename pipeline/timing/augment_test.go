package timing

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

// smallTree: A (day 0, imported) infected B (day 1) and E (day 3) by record; C (day 2) and
// D (day 3) have no infector. Candidates (handInterval: f(0..3) = 0.1, 0.5, 0.3, 0.1):
// C ← A (Δ 2), B (Δ 1); D ← A (Δ 3), B (Δ 2), C (Δ 1); E is after D in input order, so it is
// not D's candidate on their shared day.
func smallTree(t *testing.T) (*Infectors, []int32, []float64) {
	t.Helper()
	x, err := InferInfectors(
		[]linelist.Day{0, 1, 2, 3, 3},
		[]string{"g", "g", "g", "g", "g"},
		[]bool{true, false, false, false, false},
		[]bool{false, true, false, false, true},
		handInterval())
	if err != nil {
		t.Fatal(err)
	}
	return x, []int32{2, 0, 0, 0, 0}, []float64{1, 1, 0.8, 0.5, 0.5}
}

// enumerate gives the exact posterior of every assignment of C and D (−1 outside the list),
// from the model of Chain with ν integrated out: p(a | R, k) ∝ Π_j g_j(a_j) ·
// Π_i Γ(k + o_i)/(k/R + F_i)^{o_i}, g_j(i) = f(t_j − t_i) and g_j(out) = R̄(1 − ρ)/ρ·Z_j (outW = R̄(1 − ρ)/ρ). It
// integrates over (R, k) on a grid of log R, log k under the normal(0, 3) priors when fixed
// is false, writing the ν integral as NB(o_i; R F_i, k)·o_i!/F_i^{o_i}.
func enumerate(x *Infectors, rec []int32, el []float64, rho, R, K, outW float64, fixed bool) map[[2]int]float64 {
	cand := func(j int) []int {
		var c []int
		for i := 0; i < x.n; i++ {
			if x.Weight(i, j) > 0 {
				c = append(c, i)
			}
		}
		if rho < 1 {
			c = append(c, -1)
		}
		return c
	}
	out := map[[2]int]float64{}
	total := 0.0
	for _, ac := range cand(2) {
		for _, ad := range cand(3) {
			o := append([]int32(nil), rec...)
			for _, a := range []int{ac, ad} {
				if a >= 0 {
					o[a]++
				}
			}
			g := 1.0
			zOut := 1.0
			for j, a := range map[int]int{2: ac, 3: ad} {
				if a >= 0 {
					g *= x.DailyMassFor(a, j)
				} else {
					zOut *= outW * x.z[j]
				}
			}
			p := 0.0
			if fixed {
				p = g * zOut
				for i := range o {
					lg, _ := math.Lgamma(K + float64(o[i]))
					p *= math.Exp(lg) / math.Pow(K/R+el[i], float64(o[i]))
				}
			} else {
				const h = 0.06
				for lr := -12.0; lr <= 12; lr += h {
					for lk := -12.0; lk <= 12; lk += h {
						r, k := math.Exp(lr), math.Exp(lk)
						s := -(lr*lr + lk*lk) / 18
						for i := range o {
							s += offspring.NegBin{R: r * el[i], K: k}.LogPMF(int(o[i]))
							lf, _ := math.Lgamma(float64(o[i]) + 1)
							s += lf - float64(o[i])*math.Log(el[i])
						}
						p += math.Exp(s)
					}
				}
				p *= g * zOut
			}
			out[[2]int{ac, ad}] = p
			total += p
		}
	}
	for a := range out {
		out[a] /= total
	}
	return out
}

func checkAgainstEnumeration(t *testing.T, rho, R, K float64, fixed bool, sweeps int) {
	t.Helper()
	x, rec, el := smallTree(t)
	opt := AugmentOptions{Recorded: rec, Elapsed: el, Ascertainment: rho}
	if fixed {
		opt.FixedR, opt.FixedK = R, K
	}
	c, err := x.Augment(rand.New(rand.NewPCG(1, 2)), opt)
	if err != nil {
		t.Fatal(err)
	}
	if fixed && c.OutsideWeight() != (1-rho)/rho*R {
		t.Errorf("outside weight %v, want (1 − ρ)/ρ·R = %v", c.OutsideWeight(), (1-rho)/rho*R)
	}
	want := enumerate(x, rec, el, rho, R, K, c.OutsideWeight(), fixed)
	got := map[[2]int]float64{}
	var a []int
	for s := 0; s < sweeps; s++ {
		a = c.Next(a)
		if a[0] != -1 || a[1] != -1 || a[4] != -1 {
			t.Fatalf("a case with a recorded infector or imported was assigned one: %v", a)
		}
		got[[2]int{a[2], a[3]}] += 1 / float64(sweeps)
	}
	for k, p := range want {
		// Monte Carlo error: sd sqrt(p(1−p)/n) inflated ×3 for the chain's autocorrelation.
		tol := 4*3*math.Sqrt(p*(1-p)/float64(sweeps)) + 1e-3
		t.Logf("C←%d D←%d: exact %.4f, sampled %.4f", k[0], k[1], p, got[k])
		if math.Abs(got[k]-p) > tol {
			t.Errorf("assignment C←%d D←%d: sampled %.4f, exact %.4f (tolerance %.4f)", k[0], k[1], got[k], p, tol)
		}
	}
	for k := range got {
		if _, ok := want[k]; !ok {
			t.Errorf("sampled an impossible assignment C←%d D←%d", k[0], k[1])
		}
	}
}

// The sampler's stationary law over the two missing links equals the exact enumeration, with
// R and k held (k small, so two infectees cluster on one infector more than timing alone
// says) and with an infector outside the list allowed.
func TestAugmentMatchesEnumerationFixed(t *testing.T) {
	checkAgainstEnumeration(t, 1, 0.8, 0.2, true, 60000)
	checkAgainstEnumeration(t, 0.6, 1.5, 0.5, true, 60000)
}

// With step (c) on, the stationary law over assignments is the enumeration integrated over
// the posterior of (R, k) on a grid.
func TestAugmentMatchesEnumerationFull(t *testing.T) {
	checkAgainstEnumeration(t, 1, 0, 0, false, 200000)
	checkAgainstEnumeration(t, 0.7, 0, 0, false, 200000)
}
