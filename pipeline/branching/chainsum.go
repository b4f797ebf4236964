package branching

import (
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"

	"gonum.org/v1/gonum/integrate/quad"
)

// chainSumFrom is the chain size from which chainLogLik sums chain-size probabilities
// P(Y = j) by quadrature (smoothSum) instead of term by term. Below it the terms are added
// one by one, exactly as listed.
const chainSumFrom = 256

// glNodes and glWeights are the 20-point Gauss–Legendre rule on [−1, 1], from gonum's
// quad.Legendre [Bogaert 2014, SIAM J Sci Comput 36:A1008].
var glNodes, glWeights = func() ([]float64, []float64) {
	x, w := make([]float64, 20), make([]float64, 20)
	quad.Legendre{}.FixedLocations(x, w, -1, 1)
	return x, w
}()

// smoothSum returns Σ_{j=a}^{b−1} e^{g(j)} for chainSumFrom ≤ a < b, where g, the log of a
// chain-size probability continued to real arguments (through log Γ), is smooth on the scale
// of j itself there. It uses the Euler–Maclaurin formula in its midpoint form
// [Abramowitz & Stegun 1964, 23.1.32, with B₂(½) = −1/12 and B₄(½) = 7/240]:
//
//	Σ_{j=a}^{b−1} f(j) = ∫_{a−½}^{b−½} f(x) dx − (1/24)[f′]_{a−½}^{b−½} + (7/5760)[f‴]_{a−½}^{b−½} − …
//
// The integral runs over panels [x, 2x] (narrower where f changes by more than e^{±12}
// across one), each by 20-point Gauss–Legendre quadrature; f′ = f·g′ and
// f‴ = f·(g′³ + 3g′g″ + g‴) come from central differences of g with step 1. At a ≥ 256 the
// next term, (31/967680)·f⁽⁵⁾, is below 1e−16 of f(a) for chain sizes, whose
// log-probability bends like −(3/2)·log j (common practice; the tests compare with the
// term-by-term sum). Once f is decaying and its tangent bound on the rest, f/|g′| (exact for
// log-concave f, as chain sizes are far out), falls below 1e−17 of the sum so far, the rest
// is dropped.
func smoothSum(g func(float64) float64, a, b int) float64 {
	return eulerMaclaurin(g, float64(a)-0.5, float64(b)-0.5)
}

// smoothTail returns Σ_{j≥a} e^{g(j)} for a ≥ chainSumFrom as smoothSum does.
func smoothTail(g func(float64) float64, a int) float64 {
	return eulerMaclaurin(g, float64(a)-0.5, math.Inf(1))
}

// maxSmoothArg stops a tail sum where log Γ(x) ≈ x·log x exceeds 2^52·1e−3, so that a
// difference of log Γ values would keep fewer than three significant digits.
const maxSmoothArg = 1e11

// maxPanels bounds the panels of one sum, so that no input can keep it running: a panel
// either doubles x or spans a drop of e^12 in f, so a chain-size sum needs a few dozen.
const maxPanels = 100_000

// eulerMaclaurin is the sum over the integers in (lo, hi) described at smoothSum; hi may be
// +Inf.
func eulerMaclaurin(g func(float64) float64, lo, hi float64) float64 {
	slope := func(x float64) (gx, g1 float64) {
		gm, g0, gp := g(x-1), g(x), g(x+1)
		return g0, (gp - gm) / 2
	}
	// edge is f′ and f‴'s share of the Euler–Maclaurin correction at x, with
	// f′ = f·g′ and f‴ = f·(g′³ + 3g′g″ + g‴) from central differences of g (step 1; g′ to
	// fourth order, as its error enters f′/24 directly).
	edge := func(x float64) float64 {
		g2m, gm, g0, gp, g2p := g(x-2), g(x-1), g(x), g(x+1), g(x+2)
		g1 := (8*(gp-gm) - (g2p - g2m)) / 12 // fourth order: g′'s error is g⁽⁵⁾/30
		g2 := gp - 2*g0 + gm
		g3 := (g2p - 2*gp + 2*gm - g2m) / 2
		f := math.Exp(g0)
		return -f*g1/24 + 7*f*(g1*g1*g1+3*g1*g2+g3)/5760
	}
	var s numeric.Sum
	s.Add(-edge(lo))
	x := lo
	for panels := 0; x < hi; panels++ {
		if panels == maxPanels {
			return math.NaN() // cannot happen for a chain-size distribution; the caller's guard rejects NaN
		}
		gx, slope := slope(x)
		if slope < 0 {
			if rest := math.Exp(gx) / -slope; rest == 0 || rest < 1e-17*math.Abs(s.Value()) {
				return s.Value() // negligible rest; the upper correction is negligible with it
			}
		}
		if !(x < maxSmoothArg) || math.IsNaN(slope) || math.IsInf(slope, 0) {
			return s.Value() // beyond it log Γ has no significant digits left for a difference
		}
		w := math.Min(x, hi-x)
		if d := math.Abs(slope) * w; d > 12 {
			w *= 12 / d
		}
		half, mid := w/2, x+w/2
		for i, t := range glNodes {
			s.Add(half * glWeights[i] * math.Exp(g(mid+half*t)))
		}
		x += w
		if hi-x < 1e-9*hi {
			x = hi
		}
	}
	if !math.IsInf(hi, 1) {
		s.Add(edge(hi))
	}
	return s.Value()
}
