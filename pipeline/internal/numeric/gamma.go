package numeric

import "math"

// LogPochhammer is log Γ(a + x) − log Γ(a) for a > 0 and x ≥ 0, the log of the rising
// factorial (a)ₓ. The difference of two math.Lgamma values loses about ε·log Γ(a), which
// is 10⁻³ at a = 10¹² (a negative binomial near its Poisson limit); from a = 10³ on it is
// written instead through Stirling's series log Γ(z) = (z − ½) log z − z + ½ log 2π +
// 1/(12z) − 1/(360z³) + 1/(1260z⁵) + O(z⁻⁷) [Abramowitz & Stegun 1964, 6.1.41], whose
// difference at z = a + x and z = a is
//
//	(a − ½) log1p(x/a) + x log(a + x) − x + S(a + x) − S(a),   S(z) = 1/(12z) − 1/(360z³) + 1/(1260z⁵),
//
// with no cancellation of large terms; the omitted terms are below 10⁻²⁴ there.
func LogPochhammer(a, x float64) float64 {
	if x == 0 {
		return 0
	}
	if a < 1e3 {
		p, _ := math.Lgamma(a + x)
		q, _ := math.Lgamma(a)
		return p - q
	}
	s := func(z float64) float64 {
		z2 := z * z
		return (1/12.0 - (1/360.0-1/(1260.0*z2))/z2) / z
	}
	return (a-0.5)*math.Log1p(x/a) + x*math.Log(a+x) - x + (s(a+x) - s(a))
}
