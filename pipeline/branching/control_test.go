package branching

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

// controlReference mirrors testdata/branching/control_reference.json, written by
// control_reference.py beside it (SciPy 1.10.1, NumPy 1.24.2, Python 3.11.2; versions in its
// "tool" field): truncated gamma expectations integrated numerically over SciPy's gamma
// quantile function and extinction roots found by brentq, independently of the incomplete
// gamma forms of offspring.GammaNu.
type controlReference struct {
	Tool      map[string]string `json:"tool"`
	Scenarios []struct {
		R           float64 `json:"R"`
		K           float64 `json:"k"`
		C           float64 `json:"c"`
		TargetedR   float64 `json:"targeted_R"`
		TargetedQ   float64 `json:"targeted_q"`
		PopulationR float64 `json:"population_R"`
		PopulationQ float64 `json:"population_q"`
		IndividualR float64 `json:"individual_R"`
		IndividualQ float64 `json:"individual_q"`
	} `json:"scenarios"`
	Thresholds []struct {
		R, K, Targeted, Random float64
	} `json:"thresholds"`
}

func loadControlReference(t *testing.T) controlReference {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "branching", "control_reference.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref controlReference
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Scenarios) == 0 || len(ref.Thresholds) == 0 {
		t.Fatal("control reference is empty")
	}
	return ref
}

func TestControlCurveMatchesSciPy(t *testing.T) {
	ref := loadControlReference(t)
	for _, sc := range ref.Scenarios {
		d := offspring.NegBin{R: sc.R, K: sc.K}
		for _, c := range []struct {
			strategy string
			R, q     float64
		}{
			{ControlTargeted, sc.TargetedR, sc.TargetedQ},
			{ControlPopulation, sc.PopulationR, sc.PopulationQ},
			{ControlIndividual, sc.IndividualR, sc.IndividualQ},
		} {
			pts, err := ControlCurve(d, c.strategy, []float64{sc.C})
			if err != nil {
				t.Fatalf("R=%g k=%g %s c=%g: %v", sc.R, sc.K, c.strategy, sc.C, err)
			}
			got := pts[0]
			// SciPy's quad is good to about 1e−12 relative here; brentq to 1e−15.
			if math.Abs(got.R-c.R) > 1e-9*c.R {
				t.Errorf("R=%g k=%g %s c=%g: R_c = %.15g, SciPy %.15g", sc.R, sc.K, c.strategy, sc.C, got.R, c.R)
			}
			if math.Abs(got.Extinction-c.q) > 1e-9 {
				t.Errorf("R=%g k=%g %s c=%g: q = %.15g, SciPy %.15g", sc.R, sc.K, c.strategy, sc.C, got.Extinction, c.q)
			}
		}
	}
}

func TestControlThresholdsMatchSciPy(t *testing.T) {
	ref := loadControlReference(t)
	for _, th := range ref.Thresholds {
		d := offspring.NegBin{R: th.R, K: th.K}
		got, err := ControlThreshold(d, ControlTargeted)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got-th.Targeted) > 1e-9 {
			t.Errorf("R=%g k=%g: targeted threshold %.12g, SciPy %.12g", th.R, th.K, got, th.Targeted)
		}
		for _, s := range []string{ControlPopulation, ControlIndividual} {
			got, err := ControlThreshold(d, s)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(got-th.Random) > 1e-15 {
				t.Errorf("R=%g k=%g: %s threshold %.15g, want 1 − 1/R = %.15g", th.R, th.K, s, got, th.Random)
			}
		}
		// At the threshold the controlled R is 1.
		dc, _ := Controlled(d, ControlTargeted, got)
		if math.Abs(dc.Mean()-1) > 1e-9 {
			t.Errorf("R=%g k=%g: R at the targeted threshold is %.12g", th.R, th.K, dc.Mean())
		}
	}
}

// Lloyd-Smith et al. (2005, Nature 438:355, the analysis of control measures; that it is
// their Fig. 3 is recalled from memory): control targeted at the most infectious cases beats
// the same effort spent at random, and the gain grows as k falls.
// Checked on the SciPy thresholds (R = 3: k = 0.1, 0.5, 1, 4) and on the curves.
func TestTargetedBeatsRandomMoreSoForSmallK(t *testing.T) {
	ref := loadControlReference(t)
	prev := 0.0
	for _, th := range ref.Thresholds {
		if th.R != 3 {
			continue
		}
		if !(th.Targeted < th.Random) {
			t.Errorf("k=%g: targeted threshold %g not below random %g", th.K, th.Targeted, th.Random)
		}
		if !(th.Targeted > prev) {
			t.Errorf("k=%g: targeted threshold %g does not grow with k (previous %g)", th.K, th.Targeted, prev)
		}
		prev = th.Targeted
	}
	efforts := []float64{0.05, 0.1, 0.2, 0.3, 0.4, 0.5}
	gain := func(k float64) float64 {
		d := offspring.NegBin{R: 3, K: k}
		tg, err := ControlCurve(d, ControlTargeted, efforts)
		if err != nil {
			t.Fatal(err)
		}
		in, err := ControlCurve(d, ControlIndividual, efforts)
		if err != nil {
			t.Fatal(err)
		}
		po, err := ControlCurve(d, ControlPopulation, efforts)
		if err != nil {
			t.Fatal(err)
		}
		sum := 0.0
		for i := range efforts {
			if !(tg[i].Extinction > in[i].Extinction && tg[i].Extinction > po[i].Extinction) {
				t.Errorf("k=%g c=%g: targeted q %g does not beat random (%g individual, %g population)",
					k, efforts[i], tg[i].Extinction, in[i].Extinction, po[i].Extinction)
			}
			if !(tg[i].R < in[i].R) {
				t.Errorf("k=%g c=%g: targeted R %g not below random %g", k, efforts[i], tg[i].R, in[i].R)
			}
			// The gain as the ratio of R under the two: the smaller, the more targeting
			// gains over the same effort at random.
			sum += tg[i].R / in[i].R
		}
		return sum
	}
	if g1, g2, g3 := gain(0.1), gain(0.5), gain(2); !(g1 < g2 && g2 < g3) {
		t.Errorf("Σ R_targeted/R_random over the efforts: k=0.1 %g, k=0.5 %g, k=2 %g; want smaller for smaller k", g1, g2, g3)
	}
}

// The controlled distributions are proper: their PMFs sum to 1 and give the mean, and their
// PGF on the complex disc agrees with the real PGF on [0, 1].
func TestControlledDistributionsAreProper(t *testing.T) {
	for _, d := range []offspring.Distribution{offspring.NegBin{R: 2.5, K: 0.3}, offspring.Poisson{R: 1.8},
		offspring.Geometric{R: 2}, mustEmpirical(t, []float64{0.3, 0.2, 0.1, 0.4}, false)} {
		for _, s := range ControlStrategies {
			for _, c := range []float64{0, 0.3, 0.9, 1} {
				dc, err := Controlled(d, s, c)
				if err != nil {
					if s == ControlTargeted && d.Name() == offspring.NameEmpirical {
						continue // a list has no ν distribution
					}
					t.Fatalf("%s %s c=%g: %v", d.Name(), s, c, err)
				}
				if err := checkDistribution(dc); err != nil {
					t.Errorf("%s %s c=%g: %v", d.Name(), s, c, err)
				}
				var mass, mean float64
				for x := 0; x < 4000; x++ {
					p := dc.PMF(x)
					mass += p
					mean += float64(x) * p
				}
				if math.Abs(mass-1) > 1e-9 || math.Abs(mean-dc.Mean()) > 1e-7 {
					t.Errorf("%s %s c=%g: PMF sums to %.12g, mean %.10g vs %.10g", d.Name(), s, c, mass, mean, dc.Mean())
				}
				for _, z := range []float64{0, 0.4, 0.95} {
					if g, gc := dc.PGF(z), dc.PGFComplex(complex(z, 0)); math.Abs(g-real(gc)) > 1e-12 {
						t.Errorf("%s %s c=%g: PGF(%g) = %g, complex %v", d.Name(), s, c, z, g, gc)
					}
				}
				if gc := seriesPGF(dc.PMF, complex(0, 0.7)); math.Abs(real(gc)-real(dc.PGFComplex(complex(0, 0.7)))) > 1e-10 {
					t.Errorf("%s %s c=%g: complex PGF disagrees with its series", d.Name(), s, c)
				}
			}
		}
	}
	if _, err := Controlled(offspring.Poisson{R: 2}, ControlTargeted, 1.5); err == nil {
		t.Error("effort 1.5 accepted")
	}
	if _, err := Controlled(offspring.Poisson{R: 2}, "both", 0.5); err == nil {
		t.Error("unknown strategy accepted")
	}
	if _, err := ControlThreshold(mustEmpirical(t, []float64{0.2, 0.8}, false), ControlTargeted); err == nil {
		t.Error("targeted threshold of a list given")
	}
}

// For a Poisson model every case has the same ν, so targeting is removing at random.
func TestTargetedPoissonIsIndividual(t *testing.T) {
	d := offspring.Poisson{R: 2.2}
	for _, c := range []float64{0.1, 0.4} {
		a, _ := ControlCurve(d, ControlTargeted, []float64{c})
		b, _ := ControlCurve(d, ControlIndividual, []float64{c})
		if math.Abs(a[0].Extinction-b[0].Extinction) > 1e-14 || math.Abs(a[0].R-b[0].R) > 1e-14 {
			t.Errorf("c=%g: targeted %+v, individual %+v", c, a[0], b[0])
		}
	}
}
