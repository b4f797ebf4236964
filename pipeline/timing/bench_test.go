package timing

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"gonum.org/v1/gonum/stat/distuv"
)

// TestSerialFitJSON: the summary carries the documented keys and every float is finite
// (encoding/json refuses NaN and ±Inf, so a successful Marshal proves it for floats).
func TestSerialFitJSON(t *testing.T) {
	ref := loadReference(t)
	fit, err := FitSerialInterval(ref.SerialInterval["small_with_zeros"].Intervals,
		FitOptions{Bootstrap: 50, Rand: rand.New(rand.NewPCG(4, 4))})
	if err != nil {
		t.Fatal(err)
	}
	b, err := json.Marshal(fit)
	if err != nil {
		t.Fatalf("marshal: %v", err)
	}
	for _, key := range []string{`"n":12`, `"negative":1`, `"best_model":`, `"models":[`, `"params":{`, `"loglik":`, `"aic":`,
		`"quantiles":{"p50":`, `"p95":`, `"p99":`, `"mean_ci":[`, `"p95_ci":[`, `"negative_treatment":"excluded from the parametric fit"`} {
		if !strings.Contains(string(b), key) {
			t.Errorf("JSON lacks %s: %s", key, b)
		}
	}
	var back map[string]any
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	if ci := back["mean_ci"].([]any); len(ci) != 2 || !(ci[0].(float64) <= ci[1].(float64)) {
		t.Errorf("mean_ci %v", ci)
	}
}

func gammaIntervals(n int, seed uint64) []int {
	rng := rand.New(rand.NewPCG(seed, seed))
	g := distuv.Gamma{Alpha: 4, Beta: 0.8, Src: rng}
	x := make([]int, n)
	for i := range x {
		x[i] = int(math.Floor(g.Rand() + 0.5))
	}
	return x
}

func BenchmarkFitSerialInterval10k(b *testing.B) {
	x := gammaIntervals(10000, 1)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := FitSerialInterval(x, FitOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkFitSerialInterval10kBootstrap200(b *testing.B) {
	x := gammaIntervals(10000, 1)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := FitSerialInterval(x, FitOptions{Bootstrap: 200, Rand: rand.New(rand.NewPCG(1, 2))}); err != nil {
			b.Fatal(err)
		}
	}
}

// nationalList is 10^6 cases over 200 days in 5 groups, 30% without a recorded infector.
func nationalList() (onset []linelist.Day, group []string, imported, linked []bool) {
	const n = 1_000_000
	rng := rand.New(rand.NewPCG(5, 5))
	names := []string{"north", "south", "east", "west", "capital"}
	onset = make([]linelist.Day, n)
	group = make([]string, n)
	imported = make([]bool, n)
	linked = make([]bool, n)
	for i := range onset {
		onset[i] = linelist.Day(19000 + rng.IntN(200))
		group[i] = names[rng.IntN(len(names))]
		imported[i] = rng.Float64() < 0.01
		linked[i] = !imported[i] && rng.Float64() < 0.7
	}
	return
}

func BenchmarkInferInfectors1M(b *testing.B) {
	onset, group, imported, linked := nationalList()
	si, _ := FixedGamma(5, 2)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		x, err := InferInfectors(onset, group, imported, linked, si)
		if err != nil {
			b.Fatal(err)
		}
		_ = x.ExpectedOffspring()
	}
}

func BenchmarkSampleInfectors1M(b *testing.B) {
	onset, group, imported, linked := nationalList()
	si, _ := FixedGamma(5, 2)
	x, err := InferInfectors(onset, group, imported, linked, si)
	if err != nil {
		b.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 1))
	var dst []int
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		dst = x.Sample(rng, dst)
	}
}

func BenchmarkWeeklyR1M(b *testing.B) {
	onset, _, _, _ := nationalList()
	z := make([]float64, len(onset))
	rng := rand.New(rand.NewPCG(2, 2))
	for i := range z {
		z[i] = float64(rng.IntN(4))
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := WeeklyR(onset, z, WeeklyOptions{AnalysisDate: 19200, Window: 9}); err != nil {
			b.Fatal(err)
		}
	}
}
