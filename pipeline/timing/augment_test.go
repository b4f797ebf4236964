package timing

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

// smallTree: A (day 0, imported) infected B (day 1) by record; C (day 2), D (day 3) and E
// (day 3, after D in input order) have no infector. Candidates (handInterval: f(0..3) = 0.1,
// 0.5, 0.3, 0.1): C ← A (Δ 2), B (Δ 1); D ← A (Δ 3), B (Δ 2), C (Δ 1); E ← the same and D
// (Δ 0, before it on their shared day).
func smallTree(t *testing.T) (*Infectors, []int32, []float64) {
	t.Helper()
	x, err := InferInfectors(
		[]linelist.Day{0, 1, 2, 3, 3},
		[]string{"g", "g", "g", "g", "g"},
		[]bool{true, false, false, false, false},
		[]bool{false, true, false, false, false},
		handInterval())
	if err != nil {
		t.Fatal(err)
	}
	return x, []int32{1, 0, 0, 0, 0}, []float64{1, 1, 0.8, 0.5, 0.5}
}

// missingCases are the unlinked cases of smallTree.
var missingCases = []int{2, 3, 4}

// enumerate gives the exact posterior of every assignment of C, D and E (−1 outside the
// list), from the model of Chain with ν integrated out: p(a | R, k) ∝ Π_j g_j(a_j) ·
// Π_i Γ(k + o_i)/(k/R + F_i)^{o_i}, g_j(i) = f(t_j − t_i) and g_j(out) = R̄(1 − ρ)/ρ·Z_j
// (outW = R̄(1 − ρ)/ρ). It integrates over (R, k) on a grid of log R, log k under the
// normal(0, 3) priors when fixed is false, writing the ν integral as
// NB(o_i; R F_i, k)·o_i!/F_i^{o_i}.
func enumerate(x *Infectors, rec []int32, el []float64, rho, R, K, outW float64, fixed bool) map[[3]int]float64 {
	var cands [][]int
	for _, j := range missingCases {
		var c []int
		for i := 0; i < x.n; i++ {
			if x.Weight(i, j) > 0 {
				c = append(c, i)
			}
		}
		if rho < 1 {
			c = append(c, -1)
		}
		cands = append(cands, c)
	}
	// The grid of (log R, log k), step 0.1 over [−12, 12]², with each point's log prior, and
	// each case's log NB(o; R F, k) + log o! − o log F per grid point, computed once per (case, o).
	type point struct{ r, k, prior float64 }
	var grid []point
	if !fixed {
		for lr := -12.0; lr <= 12; lr += 0.1 {
			for lk := -12.0; lk <= 12; lk += 0.1 {
				grid = append(grid, point{math.Exp(lr), math.Exp(lk), -(lr*lr + lk*lk) / 18})
			}
		}
	}
	cache := map[[2]int][]float64{}
	gridTerms := func(i, o int, f float64) []float64 {
		if v, ok := cache[[2]int{i, o}]; ok {
			return v
		}
		lf, _ := math.Lgamma(float64(o) + 1)
		v := make([]float64, len(grid))
		for q, pt := range grid {
			v[q] = offspring.NegBin{R: pt.r * f, K: pt.k}.LogPMF(o) + lf - float64(o)*math.Log(f)
		}
		cache[[2]int{i, o}] = v
		return v
	}
	out := map[[3]int]float64{}
	total := 0.0
	var walk func(m int, a [3]int)
	walk = func(m int, a [3]int) {
		if m < len(missingCases) {
			for _, i := range cands[m] {
				a[m] = i
				walk(m+1, a)
			}
			return
		}
		o := append([]int32(nil), rec...)
		g := 1.0
		for m, i := range a {
			j := missingCases[m]
			if i >= 0 {
				o[i]++
				g *= x.DailyMassFor(i, j)
			} else {
				g *= outW * x.z[j]
			}
		}
		p := 0.0
		if fixed {
			p = g
			for i := range o {
				lg, _ := math.Lgamma(K + float64(o[i]))
				p *= math.Exp(lg) / math.Pow(K/R+el[i], float64(o[i]))
			}
		} else {
			terms := make([][]float64, len(o))
			for i := range o {
				terms[i] = gridTerms(i, int(o[i]), el[i])
			}
			for q := range grid {
				s := grid[q].prior
				for i := range o {
					s += terms[i][q]
				}
				p += math.Exp(s)
			}
			p *= g
		}
		out[a] = p
		total += p
	}
	walk(0, [3]int{})
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
	got := map[[3]int]float64{}
	var a []int
	for s := 0; s < sweeps; s++ {
		a = c.Next(a)
		if a[0] != -1 || a[1] != -1 {
			t.Fatalf("a case with a recorded infector or imported was assigned one: %v", a)
		}
		got[[3]int{a[2], a[3], a[4]}] += 1 / float64(sweeps)
	}
	for k, p := range want {
		// Monte Carlo error: sd sqrt(p(1−p)/n) inflated ×3 for the chain's autocorrelation.
		tol := 4*3*math.Sqrt(p*(1-p)/float64(sweeps)) + 1e-3
		if math.Abs(got[k]-p) > tol {
			t.Errorf("assignment C←%d D←%d E←%d: sampled %.4f, exact %.4f (tolerance %.4f)", k[0], k[1], k[2], got[k], p, tol)
		}
	}
	for k := range got {
		if _, ok := want[k]; !ok {
			t.Errorf("sampled an impossible assignment C←%d D←%d E←%d", k[0], k[1], k[2])
		}
	}
}

// The sampler's stationary law over the three missing links equals the exact enumeration, with
// R and k held (k small, so infectees cluster on one infector more than timing alone
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
