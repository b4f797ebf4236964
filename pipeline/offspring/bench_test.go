package offspring

import (
	"math/rand/v2"
	"testing"
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
