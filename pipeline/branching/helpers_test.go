package branching

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
	"gonum.org/v1/gonum/stat/distuv"
)

// reference mirrors testdata/branching/reference.json, written by make_reference.py beside
// it (SciPy 1.10.1, NumPy 1.24.2; the versions are recorded in the file's "tool" field).
type reference struct {
	Tool              map[string]string                    `json:"tool"`
	PoissonExtinction []struct{ R, Q float64 }             `json:"poisson_extinction"`
	NegbinExtinction  []struct{ R, K, Q float64 }          `json:"negbin_extinction"`
	ShareByNu         []struct{ K, Target, Share float64 } `json:"share_by_nu"`
	Generation2       []struct {
		Model string    `json:"model"`
		R     float64   `json:"R"`
		K     *float64  `json:"k"`
		A     int       `json:"a"`
		PMF   []float64 `json:"pmf"`
	} `json:"generation2"`
	ChainList []struct {
		P   []float64 `json:"p"`
		PMF []float64 `json:"pmf"`
	} `json:"chain_list"`
	ChainNegbin []struct {
		R, K float64
		Y    int
		P    float64
	} `json:"chain_negbin"`
	ChainBorel []struct {
		R float64
		Y int
		P float64
	} `json:"chain_borel"`
	Lambertw []struct{ Z, W float64 } `json:"lambertw"`
}

func loadReference(t testing.TB) reference {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "branching", "reference.json"))
	if err != nil {
		t.Fatal(err)
	}
	var r reference
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	if r.Tool["scipy"] == "" {
		t.Fatal("reference.json does not record the SciPy version")
	}
	return r
}

// lambertW0 is the principal branch of the Lambert W function for z ≥ −1/e, by Halley's
// iteration w ← w − f/(e^w(w+1) − (w+2)f/(2w+2)), f = w·e^w − z [Corless et al. 1996,
// Adv Comput Math 5:329, eq. 5.9], started near the branch point from the series
// w ≈ −1 + p − p²/3, p = √(2(ez + 1)) [Corless et al. 1996, eq. 4.22]. It is independent
// of the package's Brent code.
func lambertW0(z float64) float64 {
	var w float64
	if z < -0.25 {
		p := math.Sqrt(math.Max(0, 2*(math.E*z+1)))
		w = -1 + p - p*p/3 + 11.0/72*p*p*p
	} else {
		w = math.Log1p(z)
	}
	for i := 0; i < 100; i++ {
		ew := math.Exp(w)
		f := w*ew - z
		if f == 0 || w == -1 {
			break
		}
		next := w - f/(ew*(w+1)-(w+2)*f/(2*w+2))
		if math.Abs(next-w) <= 1e-16*math.Max(1, math.Abs(w)) {
			w = next
			break
		}
		w = next
	}
	return w
}

// offspringSampler draws offspring counts from the model with a seeded source: NB as the
// gamma–Poisson mixture that defines it [Lloyd-Smith et al. 2005], via gonum distuv.
func offspringSampler(d offspring.Distribution, rng *rand.Rand) func() int {
	switch m := d.(type) {
	case offspring.Poisson:
		p := distuv.Poisson{Lambda: m.R, Src: rng}
		return func() int { return int(p.Rand()) }
	case offspring.NegBin:
		g := distuv.Gamma{Alpha: m.K, Beta: m.K / m.R, Src: rng}
		return func() int {
			nu := g.Rand()
			if nu == 0 {
				return 0
			}
			return int(distuv.Poisson{Lambda: nu, Src: rng}.Rand())
		}
	case offspring.Empirical:
		return func() int {
			u := rng.Float64()
			for x, p := range m.P {
				if u < p {
					return x
				}
				u -= p
			}
			return len(m.P) - 1
		}
	}
	panic("test sampler: unsupported model")
}

// simulateGeneration runs a Bienaymé–Galton–Watson process from a cases for n generations
// and returns X_n, stopping early (returning cap) if the generation exceeds cap.
func simulateGeneration(draw func() int, a, n, cap int) int {
	x := a
	for g := 0; g < n && x > 0; g++ {
		next := 0
		for i := 0; i < x; i++ {
			next += draw()
		}
		x = min(next, cap)
	}
	return x
}

// simulateChain returns the total size of a chain from one root, capped at cap (the
// returned flag reports that the cap was hit, i.e. the cluster is censored).
func simulateChain(draw func() int, cap int) (int, bool) {
	total, active := 1, 1
	for active > 0 {
		next := 0
		for i := 0; i < active; i++ {
			next += draw()
		}
		total += next
		active = next
		if total >= cap {
			return cap, true
		}
	}
	return total, false
}

func near(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol
}

// readTestCSV reads testdata/branching/NAME, skipping lines that start with '#'.
func readTestCSV(tb testing.TB, name string) [][]string {
	tb.Helper()
	f, err := os.Open(filepath.Join("..", "..", "testdata", "branching", name))
	if err != nil {
		tb.Fatal(err)
	}
	defer f.Close()
	cr := csv.NewReader(f)
	cr.Comment = '#'
	rows, err := cr.ReadAll()
	if err != nil {
		tb.Fatal(err)
	}
	return rows
}

// nationalChains reads testdata/branching/national_chains.csv: the cluster sizes of issue
// 8's simulated 1M-case file (19,000 clusters, 73 censored, the largest censored 21,729),
// exported from that report's size histogram.
func nationalChains(tb testing.TB) []ChainObservation {
	tb.Helper()
	rows := readTestCSV(tb, "national_chains.csv")
	var obs []ChainObservation
	for _, row := range rows[1:] {
		var v [3]int
		var err error
		for i := range v {
			if v[i], err = strconv.Atoi(row[i]); err != nil {
				tb.Fatal(err)
			}
		}
		for range v[1] {
			obs = append(obs, ChainObservation{Size: v[0]})
		}
		for range v[2] {
			obs = append(obs, ChainObservation{Size: v[0], Censored: true})
		}
	}
	return obs
}
