package branching

import (
	"math"
	"testing"

	"github.com/caseweave/caseweave/pipeline/offspring"
	"gonum.org/v1/gonum/stat/distuv"
)

func gammaCDF(shape, rate float64) func(float64) float64 {
	g := distuv.Gamma{Alpha: shape, Beta: rate}
	return func(x float64) float64 {
		if x <= 0 {
			return 0
		}
		return g.CDF(x)
	}
}

func TestEndOfOutbreakTwoCases(t *testing.T) {
	// Two cases, days 0 and 3; NB(0.8, 0.3); serial interval Gamma(shape 2, rate 0.4).
	// P(t) = G(F(t)) · G(F(t − 3)) [Nishiura, Miyamatsu & Mizumoto 2016], G the NB PGF
	// written out here: (1 + (R/k)(1 − s))^{−k}.
	R, k := 0.8, 0.3
	G := func(s float64) float64 { return math.Pow(1+R/k*(1-s), -k) }
	F := gammaCDF(2, 0.4)
	res, err := EndOfOutbreak([]int{3, 0}, offspring.NegBin{R: R, K: k}, F, 3, 60)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Days) != 61 || res.Cases != 2 || res.DistinctDays != 2 {
		t.Fatalf("shape: %d days, %d cases, %d distinct", len(res.Days), res.Cases, res.DistinctDays)
	}
	var d95, d99 *int
	for i, day := range res.Days {
		want := G(F(float64(day))) * G(F(float64(day-3)))
		if !near(res.Probability[i], want, 1e-14) {
			t.Errorf("day %d: %v, formula %v", day, res.Probability[i], want)
		}
		if d95 == nil && want >= 0.95 {
			d95 = &res.Days[i]
		}
		if d99 == nil && want >= 0.99 {
			d99 = &res.Days[i]
		}
	}
	if d95 == nil || res.Day95 == nil || *d95 != *res.Day95 {
		t.Errorf("day 95%%: %v, formula %v", res.Day95, d95)
	}
	if (d99 == nil) != (res.Day99 == nil) || (d99 != nil && *d99 != *res.Day99) {
		t.Errorf("day 99%%: %v, formula %v", res.Day99, d99)
	}
	// A horizon that ends before 95% gives nil.
	short, _ := EndOfOutbreak([]int{0, 3}, offspring.NegBin{R: R, K: k}, F, 3, 0)
	if short.Day95 != nil || short.Day99 != nil {
		t.Errorf("one-day horizon reached %v / %v", short.Day95, short.Day99)
	}
}

func TestEndOfOutbreakMillionCases(t *testing.T) {
	// 10^6 cases on one day: P(t) = G(F(t − t0))^n exactly, so log P = n·log G
	// [Nishiura et al. 2016]; Poisson: log G(s) = R(s − 1) (closed form). The product
	// would underflow if formed directly.
	n := 1_000_000
	onsets := make([]int, n)
	for i := range onsets {
		onsets[i] = 100
	}
	R := 1.1
	F := gammaCDF(3, 0.5)
	res, err := EndOfOutbreak(onsets, offspring.Poisson{R: R}, F, 100, 120)
	if err != nil {
		t.Fatal(err)
	}
	for i, day := range res.Days {
		want := math.Exp(float64(n) * R * (F(float64(day-100)) - 1))
		if !near(res.Probability[i], want, 1e-9*want+1e-300) {
			t.Errorf("day %d: %v, want %v", day, res.Probability[i], want)
		}
	}
	if res.Probability[0] != 0 || res.Day99 == nil {
		t.Errorf("first day %v, day99 %v", res.Probability[0], res.Day99)
	}
}

func TestEndOfOutbreakErrors(t *testing.T) {
	F := gammaCDF(2, 0.5)
	d := offspring.Poisson{R: 1}
	if _, err := EndOfOutbreak(nil, d, F, 0, 10); err == nil {
		t.Error("no onsets accepted")
	}
	if _, err := EndOfOutbreak([]int{1}, d, nil, 0, 10); err == nil {
		t.Error("nil CDF accepted")
	}
	if _, err := EndOfOutbreak([]int{1}, d, func(float64) float64 { return math.NaN() }, 0, 10); err == nil {
		t.Error("NaN CDF accepted")
	}
	if _, err := EndOfOutbreak([]int{1}, d, F, 0, -1); err == nil {
		t.Error("negative horizon accepted")
	}
}
