package numeric

import (
	"math/rand/v2"
	"testing"
)

// BenchmarkMultinomial1M resamples 1,000,000 cases over 50 distinct offspring counts, the
// shape of a national offspring table.
func BenchmarkMultinomial1M(b *testing.B) {
	w := make([]int, 50)
	n := 0
	for i := range w {
		w[i] = 1_000_000 >> (i / 3)
		n += w[i]
	}
	cond := ConditionalShares(w)
	out := make([]int, len(w))
	rng := rand.New(rand.NewPCG(2, 2))
	for b.Loop() {
		Multinomial(rng, n, cond, out)
	}
}

func BenchmarkBinomialBTPE(b *testing.B) {
	rng := rand.New(rand.NewPCG(3, 3))
	for b.Loop() {
		Binomial(rng, 1_000_000, 0.3)
	}
}
