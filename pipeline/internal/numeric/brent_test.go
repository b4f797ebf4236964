package numeric

import (
	"math"
	"testing"
)

// Roots known in closed form (common practice): √2, ln 10, and the Dottie number, the fixed
// point of cos, 0.7390851332151607 (recalled from memory; it is checked below by cos(x) = x).
func TestBrent(t *testing.T) {
	cases := []struct {
		name string
		f    func(float64) float64
		a, b float64
		want float64
	}{
		{"sqrt 2", func(x float64) float64 { return x*x - 2 }, 0, 2, math.Sqrt2},
		{"ln 10", func(x float64) float64 { return math.Exp(x) - 10 }, 0, 5, math.Ln10},
		{"Dottie number", func(x float64) float64 { return math.Cos(x) - x }, 0, 1, 0.7390851332151607},
		{"root at an end", func(x float64) float64 { return x - 1 }, 1, 3, 1},
	}
	for _, c := range cases {
		got, err := Brent(c.f, c.a, c.b, 1e-15, 200)
		if err != nil || math.Abs(got-c.want) > 4e-15 {
			t.Errorf("%s: %v (%v), want %v", c.name, got, err, c.want)
		}
	}
	if x, _ := Brent(func(x float64) float64 { return math.Cos(x) - x }, 0, 1, 1e-15, 200); math.Abs(math.Cos(x)-x) > 1e-15 {
		t.Errorf("Dottie number %v does not satisfy cos(x) = x", x)
	}
	if _, err := Brent(func(x float64) float64 { return x*x + 1 }, -1, 1, 1e-12, 100); err == nil {
		t.Error("no bracket: want an error")
	}
	if _, err := Brent(func(x float64) float64 { return math.NaN() }, -1, 1, 1e-12, 100); err == nil {
		t.Error("NaN: want an error")
	}
}

// NewtonMin finds the minimum of quadratics exactly (closed form) and of a smooth
// non-quadratic function from a nearby start; it reports failure where the curvature is
// negative.
func TestNewtonMin(t *testing.T) {
	q := func(x []float64) float64 { return (x[0]-1)*(x[0]-1) + 2*(x[1]+3)*(x[1]+3) + (x[0]-1)*(x[1]+3) }
	x, _, ok := NewtonMin(q, []float64{0, 0}, 1e-4, 20)
	if !ok || math.Abs(x[0]-1) > 1e-6 || math.Abs(x[1]+3) > 1e-6 {
		t.Errorf("quadratic minimum at %v, want (1, −3)", x)
	}
	// f(x) = e^x − 2x has its minimum at ln 2 (closed form).
	x, _, _ = NewtonMin(func(x []float64) float64 { return math.Exp(x[0]) - 2*x[0] }, []float64{0.3}, 1e-4, 30)
	if math.Abs(x[0]-math.Ln2) > 1e-7 {
		t.Errorf("minimum at %v, want ln 2", x[0])
	}
	if _, _, ok := NewtonMin(func(x []float64) float64 { return -x[0] * x[0] }, []float64{0.5}, 1e-4, 10); ok {
		t.Error("ok on a concave function")
	}
	// Started at the minimum it stays there and says so.
	if x, _, ok := NewtonMin(q, []float64{1, -3}, 1e-4, 20); !ok || math.Abs(x[0]-1) > 1e-9 {
		t.Errorf("from the minimum: %v, %v", x, ok)
	}
}
