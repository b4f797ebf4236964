package branching

import (
	"math"
	"sort"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

func TestShareByNu(t *testing.T) {
	// Endo et al. 2020 (Wellcome Open Res 5:67): R = 2.5, k = 0.1 ⇒ about 10% of cases
	// cause 80% of transmission.
	s, err := ShareByNu(offspring.NegBin{R: 2.5, K: 0.1}, 0.8)
	if err != nil || s == nil || !near(*s, 0.10, 0.01) {
		t.Errorf("Endo 2020: share %v (%v), want ≈ 0.10", s, err)
	}
	// SciPy 1.10.1: gammaincc(k, gammaincinv(k+1, 1 − target)).
	for _, r := range loadReference(t).ShareByNu {
		for _, R := range []float64{0.5, 3} { // the share does not depend on R
			s, err := ShareByNu(offspring.NegBin{R: R, K: r.K}, r.Target)
			if err != nil || s == nil || !near(*s, r.Share, 1e-9) {
				t.Errorf("k=%v target=%v R=%v: %v (%v), SciPy %v", r.K, r.Target, R, s, err, r.Share)
			}
		}
		if r.K == 1 {
			s, _ := ShareByNu(offspring.Geometric{R: 2}, r.Target)
			if s == nil || !near(*s, r.Share, 1e-9) {
				t.Errorf("geometric target=%v: %v, SciPy k=1 %v", r.Target, s, r.Share)
			}
		}
	}
	// Poisson: ν = R for everyone, so the share is the target [Lloyd-Smith et al. 2005].
	if s, _ := ShareByNu(offspring.Poisson{R: 2}, 0.8); s == nil || *s != 0.8 {
		t.Errorf("Poisson share %v", s)
	}
	// A list carries no ν.
	if s, err := ShareByNu(mustEmpirical(t, []float64{0.5, 0.5}, false), 0.8); s != nil || err != nil {
		t.Errorf("list share %v %v", s, err)
	}
	for _, bad := range []float64{0, 1, -0.2, math.NaN()} {
		if _, err := ShareByNu(offspring.Poisson{R: 2}, bad); err == nil {
			t.Errorf("target %v accepted", bad)
		}
	}
}

// bruteShare ranks a large population of "cases" with PMF weights by hand: the smallest
// share of cases whose offspring reach target of all offspring, interpolating within the
// boundary count (the "20/80" reading of Lloyd-Smith et al. 2005, applied to counts); written independently of offspring.ConcentrationShare.
func bruteShare(p []float64, target float64) float64 {
	type cell struct {
		x int
		w float64
	}
	var cells []cell
	var total float64
	for x, w := range p {
		cells = append(cells, cell{x, w})
		total += float64(x) * w
	}
	sort.Slice(cells, func(i, j int) bool { return cells[i].x > cells[j].x })
	need, got, share := target*total, 0.0, 0.0
	for _, c := range cells {
		if c.x == 0 {
			break
		}
		if got+float64(c.x)*c.w >= need {
			return share + (need-got)/float64(c.x)
		}
		got += float64(c.x) * c.w
		share += c.w
	}
	return share
}

func TestShareByOffspring(t *testing.T) {
	// Hand-computed: p_0 = p_3 = 1/2. All transmission comes from the Z = 3 half, so 80%
	// of it needs 0.8 · 0.5 = 0.4 of cases.
	s, err := ShareByOffspring(mustEmpirical(t, []float64{0.5, 0, 0, 0.5}, false), 0.8)
	if err != nil || s == nil || !near(*s, 0.4, 1e-15) {
		t.Errorf("hand case: %v %v", s, err)
	}
	for _, d := range []offspring.Distribution{offspring.NegBin{R: 2.5, K: 0.1}, offspring.Poisson{R: 1.3}, offspring.Geometric{R: 0.9}} {
		var p []float64
		for x := 0; x < 5000; x++ {
			p = append(p, d.PMF(x))
		}
		want := bruteShare(p, 0.8)
		s, err := ShareByOffspring(d, 0.8)
		if err != nil || s == nil || !near(*s, want, 1e-10) {
			t.Errorf("%v: %v, brute force %v", d, s, want)
		}
	}
	if s, _ := ShareByOffspring(offspring.Poisson{R: 0}, 0.8); s != nil {
		t.Errorf("R = 0: %v", *s)
	}
	// The superspreading threshold is the 99th percentile of Poisson(R): for R = 2.5,
	// P(Z ≤ 6) = 0.9858 and P(Z ≤ 7) = 0.9958 (Poisson CDF, recalled from memory), so 7.
	if th, _ := SuperspreadingThreshold(offspring.NegBin{R: 2.5, K: 0.1}); th != 7 {
		t.Errorf("threshold %d", th)
	}
}
