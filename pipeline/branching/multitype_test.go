package branching

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

// negBinTotals is the total-offspring family of a multitype process with dispersion k[i] per
// type (+Inf: Poisson).
func negBinTotals(k []float64) func(R float64, i int) offspring.Distribution {
	return func(R float64, i int) offspring.Distribution {
		if math.IsInf(k[i], 1) {
			return offspring.Poisson{R: R}
		}
		return offspring.NegBin{R: R, K: k[i]}
	}
}

// Written by testdata/branching/multitype_reference.py (SciPy 1.10.1, NumPy 1.24.2, Python
// 3.11.2; versions in the file): numpy.linalg.eigvals, numpy.linalg.eig of Mᵀ, and the
// extinction probabilities by plain iteration of G from 0 (Harris 1963, ch. II, Thm 7.1),
// confirmed by scipy.optimize.fsolve.
func TestMultitypeMatchesSciPy(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "branching", "multitype_reference.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Cases []struct {
			Name           string      `json:"name"`
			M              [][]float64 `json:"M"`
			K              []*float64  `json:"k"`
			SpectralRadius float64     `json:"spectral_radius"`
			StableShares   []float64   `json:"stable_shares"`
			Extinction     []float64   `json:"extinction"`
		} `json:"cases"`
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Cases) != 4 {
		t.Fatalf("%d reference cases", len(ref.Cases))
	}
	for _, c := range ref.Cases {
		k := make([]float64, len(c.K))
		for i, v := range c.K {
			k[i] = math.Inf(1)
			if v != nil {
				k[i] = *v
			}
		}
		rho, err := SpectralRadius(c.M)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(rho-c.SpectralRadius) > 1e-12 {
			t.Errorf("%s: ρ = %.15g, numpy %.15g", c.Name, rho, c.SpectralRadius)
		}
		sh, err := StableShares(c.M)
		if err != nil {
			t.Fatal(err)
		}
		for i := range sh {
			if math.Abs(sh[i]-c.StableShares[i]) > 1e-12 {
				t.Errorf("%s: stable share %d = %.15g, numpy %.15g", c.Name, i, sh[i], c.StableShares[i])
			}
		}
		mt, err := NewMultitype(c.M, negBinTotals(k))
		if err != nil {
			t.Fatal(err)
		}
		q, err := mt.MultitypeExtinction()
		if err != nil {
			t.Fatalf("%s: %v", c.Name, err)
		}
		for i := range q {
			// SciPy's plain iteration stops at a floating-point fixed point; 1e−12 covers
			// the last steps near criticality.
			if math.Abs(q[i]-c.Extinction[i]) > 1e-12 {
				t.Errorf("%s: q_%d = %.15g, SciPy %.15g", c.Name, i, q[i], c.Extinction[i])
			}
		}
	}
}

// Two types that infect only each other, with geometric totals of means a (type 1 → 2) and
// b (type 2 → 1): q₁ = F_a(q₂), q₂ = F_b(q₁), F_m(x) = 1/(1 + m(1 − x)). Composing the two
// Möbius maps and solving 1 − u = F_a(F_b(1 − u)) gives u(ab − 1 − b(1 + a)u) = 0, so
// q₁ = 1 − (ab − 1)/(b(1 + a)) and q₂ = 1 − (ab − 1)/(a(1 + b)) when ab > 1 (derived here;
// with a = b it is the geometric's q = 1/R). Its ρ is √(ab).
func TestMultitypeTwoTypeClosedForm(t *testing.T) {
	for _, ab := range [][2]float64{{2, 3}, {1.5, 0.9}, {4, 0.3}, {1.02, 1.01}, {0.8, 1.1}} {
		a, b := ab[0], ab[1]
		M := [][]float64{{0, a}, {b, 0}}
		mt, err := NewMultitype(M, func(R float64, _ int) offspring.Distribution { return offspring.Geometric{R: R} })
		if err != nil {
			t.Fatal(err)
		}
		q, err := mt.MultitypeExtinction()
		if err != nil {
			t.Fatal(err)
		}
		want := []float64{1, 1}
		if a*b > 1 {
			want = []float64{1 - (a*b-1)/(b*(1+a)), 1 - (a*b-1)/(a*(1+b))}
		}
		for i := range q {
			if math.Abs(q[i]-want[i]) > 1e-13 {
				t.Errorf("a=%g b=%g: q_%d = %.15g, closed form %.15g", a, b, i, q[i], want[i])
			}
		}
		rho, _ := SpectralRadius(M)
		if math.Abs(rho-math.Sqrt(a*b)) > 1e-13 {
			t.Errorf("a=%g b=%g: ρ = %.15g, want √(ab) = %.15g", a, b, rho, math.Sqrt(a*b))
		}
	}
}

// With one type the multitype process is the single-type one: ρ is R and q is
// ExtinctionProbability's root, to rounding.
func TestMultitypeOneTypeIsSingleType(t *testing.T) {
	for _, d := range []offspring.Distribution{offspring.NegBin{R: 2.5, K: 0.2}, offspring.NegBin{R: 1.1, K: 3},
		offspring.Poisson{R: 1.7}, offspring.NegBin{R: 0.8, K: 0.5}, offspring.NegBin{R: 1.001, K: 0.4}} {
		mt, err := NewMultitype([][]float64{{d.Mean()}}, func(float64, int) offspring.Distribution { return d })
		if err != nil {
			t.Fatal(err)
		}
		q, err := mt.MultitypeExtinction()
		if err != nil {
			t.Fatal(err)
		}
		want, _ := ExtinctionProbability(d)
		if math.Abs(q[0]-want) > 1e-13 {
			t.Errorf("%s R=%g: multitype q = %.16g, single-type %.16g", d.Name(), d.Mean(), q[0], want)
		}
		rho, _ := SpectralRadius(mt.Mean())
		if rho != d.Mean() {
			t.Errorf("%s: ρ = %.17g, R = %.17g", d.Name(), rho, d.Mean())
		}
		if g := mt.PGF([]float64{0.3}); g[0] != d.PGF(0.3) {
			t.Errorf("%s: multitype PGF %v, single %v", d.Name(), g[0], d.PGF(0.3))
		}
	}
}

func TestGenerationSharesTendToStable(t *testing.T) {
	M := [][]float64{{0.9, 0.5, 0.3}, {0.4, 1.2, 0.5}, {0.2, 0.6, 0.8}}
	st, err := StableShares(M)
	if err != nil {
		t.Fatal(err)
	}
	gs, err := GenerationShares(M, []float64{1, 0, 0}, 60)
	if err != nil {
		t.Fatal(err)
	}
	// Generation 1 from one type-1 case is row 1 of M, scaled.
	if math.Abs(gs[0][1]-0.5/1.7) > 1e-15 {
		t.Errorf("generation 1 share %v", gs[0])
	}
	for j := range st {
		if math.Abs(gs[59][j]-st[j]) > 1e-12 {
			t.Errorf("generation 60 share %d = %g, stable %g", j, gs[59][j], st[j])
		}
	}
	if _, err := NewMultitype([][]float64{{1, -1}, {0, 1}}, negBinTotals([]float64{1, 1})); err == nil {
		t.Error("negative entry accepted")
	}
	if _, err := SpectralRadius([][]float64{{1, 2}}); err == nil {
		t.Error("ragged matrix accepted")
	}
}
