package numeric

import (
	"math"
	"testing"
)

// Type-7 quantiles from the definition h = (n − 1)p of Hyndman & Fan (1996): for
// 1, 3, 4, 10 at p = 0.3, h = 0.9 and Q = 1 + 0.9·(3 − 1) = 2.8; at p = 0.5, h = 1.5 and
// Q = 3.5; the ends are the extremes. (R's quantile(c(1, 3, 4, 10), c(0, .3, .5, 1)) gives
// 1, 2.8, 3.5, 10: recalled from memory, and it follows from the definition above.)
func TestQuantile7(t *testing.T) {
	x := []float64{1, 3, 4, 10}
	for _, c := range []struct{ p, want float64 }{{0, 1}, {0.3, 2.8}, {0.5, 3.5}, {1, 10}, {2.0 / 3, 4}} {
		if got := Quantile7(x, c.p); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("Quantile7(%v) = %v, want %v", c.p, got, c.want)
		}
	}
	if got := Quantile7([]float64{1, 2, math.Inf(1)}, 0.75); !math.IsInf(got, 1) {
		t.Errorf("an infinite neighbour gives %v, want +Inf", got)
	}
	if got := Quantile7([]float64{1, 2, math.Inf(1)}, 0.5); got != 2 {
		t.Errorf("an exact order statistic next to +Inf gives %v, want 2", got)
	}
	if !math.IsNaN(Quantile7(nil, 0.5)) {
		t.Error("no values: want NaN")
	}
}

// Compensated summation keeps what plain summation loses: 1 followed by a million terms of
// 1e-16 sums to 1 + 1e-10 exactly in real arithmetic, while plain float64 addition returns 1.
func TestSum(t *testing.T) {
	var s Sum
	plain := 1.0
	s.Add(1)
	for range 1_000_000 {
		s.Add(1e-16)
		plain += 1e-16
	}
	if plain != 1 {
		t.Fatalf("plain summation kept the small terms (%v); the test needs a case it loses", plain)
	}
	if got := s.Value(); math.Abs(got-(1+1e-10)) > 1e-15 {
		t.Errorf("compensated sum %.17g, want 1 + 1e-10", got)
	}
	var z Sum
	if z.Value() != 0 {
		t.Error("the zero Sum is not 0")
	}
}

func TestFinitePtr(t *testing.T) {
	for _, x := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		if FinitePtr(x) != nil || IsFinite(x) {
			t.Errorf("%v is not finite", x)
		}
	}
	if p := FinitePtr(2.5); p == nil || *p != 2.5 || !IsFinite(2.5) {
		t.Error("2.5 is finite")
	}
}

// NelderMead finds the minimum of the Rosenbrock function, (1, 1), from the classic start
// (−1.2, 1) (Rosenbrock 1960, Comput J 3:175), and of a quadratic in one dimension; a NaN
// region is avoided rather than taken as a minimum.
func TestNelderMead(t *testing.T) {
	rosen := func(x []float64) float64 {
		a, b := 1-x[0], x[1]-x[0]*x[0]
		return a*a + 100*b*b
	}
	x, v := NelderMead(rosen, []float64{-1.2, 1}, 0.5, 1e-14, 1e-9, 5000)
	if math.Abs(x[0]-1) > 1e-5 || math.Abs(x[1]-1) > 1e-5 || v > 1e-9 {
		t.Errorf("Rosenbrock minimum at %v (%v), want (1, 1)", x, v)
	}
	nanLeft := func(x []float64) float64 {
		if x[0] < 0 {
			return math.NaN()
		}
		return (x[0] - 2) * (x[0] - 2)
	}
	x, _ = NelderMead(nanLeft, []float64{0.1}, 0.5, 1e-14, 1e-9, 1000)
	if math.Abs(x[0]-2) > 1e-6 {
		t.Errorf("minimum beside a NaN region at %v, want 2", x)
	}
}
