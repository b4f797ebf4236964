package branching

import (
	"math/rand/v2"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
	"gonum.org/v1/gonum/dsp/fourier"
)

func BenchmarkDecodeCircle65536(b *testing.B) {
	const M = 1 << 16
	vals := evalMixture([]offspring.Distribution{offspring.NegBin{R: 1.5, K: 0.3}}, 5, 1, M)[0]
	fft := fourier.NewCmplxFFT(M)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		decodeCircle(fft, vals, M, dampingDigits, M/2)
	}
}

func BenchmarkGenerationSizesNegBin(b *testing.B) {
	d := offspring.NegBin{R: 1.5, K: 0.3}
	for i := 0; i < b.N; i++ {
		if _, err := GenerationSizes(d, 5, 5); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkExtinctionNegBin(b *testing.B) {
	d := offspring.NegBin{R: 2.5, K: 0.1}
	for i := 0; i < b.N; i++ {
		if _, err := ExtinctionProbability(d); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkExtinctionNearCritical(b *testing.B) {
	d := offspring.Poisson{R: 1 + 1e-6}
	for i := 0; i < b.N; i++ {
		if _, err := ExtinctionProbability(d); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkProject2000Replicates(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	reps := make([]offspring.Distribution, 2000)
	for i := range reps {
		reps[i] = offspring.NegBin{R: 0.9 + 0.4*rng.Float64(), K: 0.2 + 0.3*rng.Float64()}
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Project(reps, 10, 4); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkEndOfOutbreakMillionDays(b *testing.B) {
	// 10^6 cases spread over 1000 onset days, horizon 60.
	rng := rand.New(rand.NewPCG(3, 4))
	onsets := make([]int, 1_000_000)
	for i := range onsets {
		onsets[i] = rng.IntN(1000)
	}
	F := gammaCDF(2.5, 0.5)
	d := offspring.NegBin{R: 0.8, K: 0.3}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := EndOfOutbreak(onsets, d, F, 1000, 60); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkEndOfOutbreakMillionDistinctDays(b *testing.B) {
	// 10^6 distinct onset days (the worst case for the grouping), horizon 60.
	onsets := make([]int, 1_000_000)
	for i := range onsets {
		onsets[i] = i
	}
	F := gammaCDF(2.5, 0.5)
	d := offspring.Poisson{R: 0.8}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := EndOfOutbreak(onsets, d, F, 1_000_000, 60); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkChainSizesLagrangeList(b *testing.B) {
	d := offspring.Empirical{P: []float64{0.4, 0.3, 0.2, 0.05, 0.05}}
	for i := 0; i < b.N; i++ {
		if _, err := ChainSizesLagrange(d, 10000); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkFitChainSizes(b *testing.B) {
	obs := simulateClusters(offspring.NegBin{R: 0.6, K: 0.3}, 500, 500, 1)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := FitChainSizes(obs); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkProjectNational is the projection of a national report: 200 replicates around
// R = 0.99, k = 0.5 from 19,604 active cases, four generations (the benchmark's 1M-case file, BENCHMARKS.md).
func BenchmarkProjectNational(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	reps := make([]offspring.Distribution, 200)
	for i := range reps {
		reps[i] = offspring.NegBin{R: 0.98 + 0.02*rng.Float64(), K: 0.49 + 0.02*rng.Float64()}
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Project(reps, 19604, 4); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkFitChainSizesNational(b *testing.B) {
	obs := nationalChains(b)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := FitChainSizes(obs); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkControlCurveTargeted is one strategy's curve as the report computes it for each
// bootstrap replicate: 21 efforts of targeted control (incomplete gamma functions).
func BenchmarkControlCurveTargeted(b *testing.B) {
	d := offspring.NegBin{R: 1.6, K: 0.4}
	eff := make([]float64, 21)
	for i := range eff {
		eff[i] = float64(i) / 20
	}
	for b.Loop() {
		if _, err := ControlCurve(d, ControlTargeted, eff); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkMultitypeExtinction4 is the per-type extinction of a 4-type process with
// negative-binomial totals.
func BenchmarkMultitypeExtinction4(b *testing.B) {
	M := [][]float64{{0.9, 0.5, 0.3, 0.1}, {0.4, 1.2, 0.5, 0.2}, {0.2, 0.6, 0.8, 0.3}, {0.1, 0.3, 0.4, 0.5}}
	k := []float64{0.3, 0.8, 0.5, 2}
	mt, err := NewMultitype(M, func(R float64, i int) offspring.Distribution { return offspring.NegBin{R: R, K: k[i]} })
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := mt.MultitypeExtinction(); err != nil {
			b.Fatal(err)
		}
	}
}
