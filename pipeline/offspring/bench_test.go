package offspring

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
)

// benchTable is 1,000,000 offspring counts from NB(R = 2, k = 0.3): about 40–60 distinct values.
func benchTable(b *testing.B) FreqTable {
	b.Helper()
	t, err := SimulateNegBin(rand.New(rand.NewPCG(1, 1)), 2, 0.3, 1_000_000)
	if err != nil {
		b.Fatal(err)
	}
	return t
}

func BenchmarkFitNegBin(b *testing.B) {
	t := benchTable(b)
	b.ReportMetric(float64(len(t.Values)), "distinct")
	for b.Loop() {
		if _, err := FitNegBin(t); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFitBootstrap1M is the performance target: NB fit + 10,000 case-bootstrap
// replicates + BCa intervals for R and k on 1,000,000 cases.
func BenchmarkFitBootstrap1M(b *testing.B) {
	t := benchTable(b)
	for b.Loop() {
		if _, err := FitNegBin(t); err != nil {
			b.Fatal(err)
		}
		res, err := Bootstrap(Sample{Cases: t}, BootstrapOptions{Replicates: 10_000, Seed: 1})
		if err != nil {
			b.Fatal(err)
		}
		for _, s := range []func(Params) float64{StatR, StatK} {
			if _, err := res.Interval(s, s(res.Estimate), 0.95); err != nil {
				b.Fatal(err)
			}
		}
	}
}

// benchExposed is 1,000,000 cases from NB(R = 2, k = 0.3) with onsets spread over 60 days
// before the analysis date and the share of a gamma (mean 5, sd 2.5 days) serial interval
// behind each: about 40–60 distinct counts by up to 60 shares.
func benchExposed(b *testing.B) Exposed {
	b.Helper()
	rng := rand.New(rand.NewPCG(1, 1))
	xs, fs := make([]int, 1_000_000), make([]float64, 1_000_000)
	for i := range xs {
		lag := rng.IntN(60)
		// The shape-4 gamma CDF at lag + 0.5 with rate 0.8: 1 − e^{−y}(1 + y + y²/2 + y³/6).
		y := 0.8 * (float64(lag) + 0.5)
		fs[i] = 1 - math.Exp(-y)*(1+y+y*y/2+y*y*y/6)
		xs[i] = numeric.Poisson(rng, fs[i]*numeric.Gamma(rng, 0.3)*2/0.3)
	}
	e, _, err := NewExposed(xs, fs, DefaultShareFloor)
	if err != nil {
		b.Fatal(err)
	}
	return e
}

// BenchmarkExposedFitProfile is the truncation-aware fit and the profile intervals of R and
// k on 1,000,000 partly observed cases.
func BenchmarkExposedFitProfile(b *testing.B) {
	e := benchExposed(b)
	b.ReportMetric(float64(len(e.Values)), "groups")
	for b.Loop() {
		if _, _, err := ProfileIntervals(e, 0.95); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkExposedBootstrap is 200 case-bootstrap replicates of the truncation-aware fit on
// the same cases.
func BenchmarkExposedBootstrap(b *testing.B) {
	e := benchExposed(b)
	for b.Loop() {
		if _, err := Bootstrap(Sample{Exposed: &e}, BootstrapOptions{Replicates: 200, Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
}
