package numeric

import (
	"fmt"
	"math"
)

// Brent finds a root of f in [a, b], where f(a) and f(b) have opposite signs (or one is
// zero), by Brent's method: inverse quadratic interpolation and secant steps, falling back
// to bisection whenever they do not shrink the bracket fast enough, so it never leaves the
// bracket and converges at least as fast as bisection [Brent 1973, "Algorithms for
// Minimization without Derivatives", ch. 4; the "zeroin" algorithm]. The root is located to
// within 2·eps·|x| + tol/2.
func Brent(f func(float64) float64, a, b, tol float64, maxIter int) (float64, error) {
	fa, fb := f(a), f(b)
	if math.IsNaN(fa) || math.IsNaN(fb) {
		return math.NaN(), fmt.Errorf("root finder: function is NaN at the bracket ends")
	}
	if fa == 0 {
		return a, nil
	}
	if fb == 0 {
		return b, nil
	}
	if (fa > 0) == (fb > 0) {
		return math.NaN(), fmt.Errorf("root finder: f(%g) = %g and f(%g) = %g do not bracket a root", a, fa, b, fb)
	}
	const eps = 0x1p-52
	c, fc := a, fa
	d := b - a
	e := d
	for iter := 0; iter < maxIter; iter++ {
		if (fb > 0) == (fc > 0) {
			c, fc = a, fa
			d = b - a
			e = d
		}
		if math.Abs(fc) < math.Abs(fb) {
			a, b, c = b, c, b
			fa, fb, fc = fb, fc, fb
		}
		tol1 := 2*eps*math.Abs(b) + 0.5*tol
		xm := 0.5 * (c - b)
		if math.Abs(xm) <= tol1 || fb == 0 {
			return b, nil
		}
		if math.Abs(e) >= tol1 && math.Abs(fa) > math.Abs(fb) {
			var p, q float64
			s := fb / fa
			if a == c {
				// Secant step.
				p = 2 * xm * s
				q = 1 - s
			} else {
				// Inverse quadratic interpolation.
				qq := fa / fc
				r := fb / fc
				p = s * (2*xm*qq*(qq-r) - (b-a)*(r-1))
				q = (qq - 1) * (r - 1) * (s - 1)
			}
			if p > 0 {
				q = -q
			}
			p = math.Abs(p)
			if 2*p < math.Min(3*xm*q-math.Abs(tol1*q), math.Abs(e*q)) {
				e = d
				d = p / q
			} else {
				d = xm
				e = d
			}
		} else {
			d = xm
			e = d
		}
		a, fa = b, fb
		if math.Abs(d) > tol1 {
			b += d
		} else {
			b += math.Copysign(tol1, xm)
		}
		fb = f(b)
		if math.IsNaN(fb) {
			return math.NaN(), fmt.Errorf("root finder: function is NaN at %g", b)
		}
	}
	return b, fmt.Errorf("root finder did not converge in %d iterations", maxIter)
}
