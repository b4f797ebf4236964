package timing

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"gonum.org/v1/gonum/stat/distuv"
)

// TestSerialFitValues: the fit counts what it used and excluded, and every number it
// reports is finite, its mean interval ordered.
func TestSerialFitValues(t *testing.T) {
	ref := loadReference(t)
	fit, err := FitSerialInterval(ref.SerialInterval["small_with_zeros"].Intervals,
		FitOptions{Bootstrap: 50, Rand: rand.New(rand.NewPCG(4, 4))})
	if err != nil {
		t.Fatal(err)
	}
	if fit.N != 12 || fit.Negative != 1 || fit.NegativeTreatment != NegativeTreatment || fit.BestModel == "" || len(fit.Models) != 3 {
		t.Errorf("fit %+v", fit)
	}
	for _, m := range fit.Models {
		for _, v := range []float64{m.Mean, m.SD, m.LogLik, m.AIC} {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Errorf("%s: non-finite number in %+v", m.Name, m)
			}
		}
	}
	if len(fit.MeanCI) != 2 || !(fit.MeanCI[0] <= fit.MeanCI[1]) || len(fit.P95CI) != 2 {
		t.Errorf("intervals %v %v", fit.MeanCI, fit.P95CI)
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

// truncatedIntervals gives each of 10⁴ gamma intervals a bound: its infector fell ill
// uniformly in the 60 days before the analysis date, and intervals beyond the bound are
// redrawn, so the table has many (interval, bound) pairs.
func truncatedIntervals() (x, bounds []int) {
	x = gammaIntervals(10000, 1)
	rng := rand.New(rand.NewPCG(9, 9))
	bounds = make([]int, len(x))
	for i := range x {
		bounds[i] = rng.IntN(60)
		for x[i] > bounds[i] {
			x[i] = rng.IntN(bounds[i] + 1)
		}
	}
	return x, bounds
}

func BenchmarkFitSerialInterval10kTruncated(b *testing.B) {
	x, bounds := truncatedIntervals()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := FitSerialInterval(x, FitOptions{Truncation: bounds}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkFitSerialInterval10kTruncatedBootstrap200(b *testing.B) {
	x, bounds := truncatedIntervals()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := FitSerialInterval(x, FitOptions{Truncation: bounds, Bootstrap: 200, Rand: rand.New(rand.NewPCG(1, 2))}); err != nil {
			b.Fatal(err)
		}
	}
}
