package offspring

import (
	"errors"
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"
	"math/big"
	"math/bits"

	"gonum.org/v1/gonum/mathext"
)

// kMax is the largest k̂ reported as finite. Beyond it the negative binomial differs from the
// Poisson by a relative variance excess R/k < 1e-10·R, far below anything an offspring
// table can resolve, and the score is dominated by rounding; such fits are reported as the
// Poisson limit (common practice: report "no evidence of overdispersion", not 10^12).
const kMax = 1e10

// kMin is the smallest k̂ searched for.
const kMin = 1e-12

// checkTable validates a frequency table for fitting and returns n, Σx·c and Σx²·c.
func checkTable(t FreqTable) (n, sum, sumSq float64, err error) {
	if len(t.Values) != len(t.Counts) {
		return 0, 0, 0, fmt.Errorf("offspring table: %d values but %d counts", len(t.Values), len(t.Counts))
	}
	ni := 0
	for i, v := range t.Values {
		c := t.Counts[i]
		if v < 0 {
			return 0, 0, 0, fmt.Errorf("offspring table: value %d (entry %d) is negative; offspring counts are ≥ 0", v, i+1)
		}
		if c < 0 {
			return 0, 0, 0, fmt.Errorf("offspring table: count %d for value %d is negative", c, v)
		}
		if i > 0 && v <= t.Values[i-1] {
			return 0, 0, 0, fmt.Errorf("offspring table: values must be distinct and ascending (%d after %d)", v, t.Values[i-1])
		}
		if ni > math.MaxInt-c {
			return 0, 0, 0, fmt.Errorf("offspring table: the number of cases overflows")
		}
		ni += c
		fx, fc := float64(v), float64(c)
		sum += fc * fx
		sumSq += fc * fx * fx
	}
	if ni == 0 {
		return 0, 0, 0, errors.New("offspring table is empty: no cases to fit")
	}
	if ni < 2 {
		return 0, 0, 0, fmt.Errorf("offspring table has %d case; at least 2 are needed to fit a model", ni)
	}
	return float64(ni), sum, sumSq, nil
}

// tableLogLik is Σ_x c_x log p_x, the log-likelihood of a frequency table under d.
func tableLogLik(t FreqTable, d Distribution) float64 {
	ll := 0.0
	for i, v := range t.Values {
		ll += float64(t.Counts[i]) * d.LogPMF(v)
	}
	return ll
}

// FitPoisson fits Poisson(R) by maximum likelihood: R̂ = x̄, log L = Σ c_x (x log R̂ − R̂ − log x!),
// SE(R̂) = √(R̂/n) (observed information n/R̂). With R̂ = 0 (every count 0) log L = 0 and SE = 0.
func FitPoisson(t FreqTable) (ModelFit, error) {
	n, sum, _, err := checkTable(t)
	if err != nil {
		return ModelFit{}, err
	}
	R := sum / n
	d := Poisson{R: R}
	ll := tableLogLik(t, d)
	return newFit(PoissonFamily{}, d, ll, Params{R}, []float64{math.Sqrt(R / n)}), nil
}

// FitGeometric fits the geometric distribution with mean R (p_x = (1/(1+R))(R/(1+R))^x) by
// maximum likelihood: R̂ = x̄, SE(R̂) = √(R̂(1+R̂)/n) (observed information n/(R̂(1+R̂))).
func FitGeometric(t FreqTable) (ModelFit, error) {
	n, sum, _, err := checkTable(t)
	if err != nil {
		return ModelFit{}, err
	}
	R := sum / n
	d := Geometric{R: R}
	ll := tableLogLik(t, d)
	return newFit(GeometricFamily{}, d, ll, Params{R}, []float64{math.Sqrt(R * (1 + R) / n)}), nil
}

// FitNegBin fits the negative binomial (R, k) by maximum likelihood [Lloyd-Smith et al. 2005].
// R̂ = x̄, and k̂ is the root of the profile score
//
//	S(k) = Σ_i [ψ(x_i + k) − ψ(k)] + n·log(k/(k + R̂)) = 0,
//
// found by a bracketed Brent search on log k. For integer x, ψ(x+k) − ψ(k) = Σ_{j<x} 1/(k+j)
// (Abramowitz & Stegun 6.3.6), accumulated over the ascending table; the score is evaluated
// in the cancellation-free form k²S(k) = −k Σ_i Σ_{j<x_i} j/(k+j) + n k² (y − log(1+y)),
// y = R̂/k, which stays finite as k → ∞ with limit (n/2)(R̂ − s²_n), s²_n the variance with
// divisor n. A finite root therefore exists exactly when s²_n > R̂ (Levin & Reeds 1977,
// Biometrics 33:1, as recalled from memory; note the divisor n, not n − 1). Otherwise the
// fit is the Poisson limit: k = +Inf, the distribution is Poisson(R̂) and LogLik its
// log-likelihood; AIC still counts two parameters, so it is the Poisson AIC + 2 and never wins
// the comparison against the Poisson model.
//
// The parameter vector is (R, k), with k = +Inf in the Poisson limit. Standard errors come
// from the 2×2 observed information in (R, k), inverted:
//
//	I_RR = T/R² − (T + nk)/(k+R)²,  I_Rk = −(T − nR)/(k+R)²  (0 at the MLE),
//	I_kk = Σ_i [ψ'(k) − ψ'(x_i+k)] − n/k + n/(k+R)
//
// with T = Σ x_i and ψ'(k) − ψ'(x+k) = Σ_{j<x} 1/(k+j)². In the Poisson limit SE(R̂) = √(R̂/n)
// and SE(k̂) is NaN, as it is when the information in k is not positive.
func FitNegBin(t FreqTable) (ModelFit, error) {
	n, sum, _, err := checkTable(t)
	if err != nil {
		return ModelFit{}, err
	}
	R := sum / n
	k, finite, err := nbDispersion(t.Values, t.Counts, n, sum)
	if err != nil {
		return ModelFit{}, err
	}
	if !finite {
		p, _ := FitPoisson(t)
		return newFit(NegBinFamily{}, p.Distribution(), p.LogLik, Params{R, math.Inf(1)},
			[]float64{p.SE[0], math.NaN()}), nil
	}
	ll := nbLogLik(t.Values, t.Counts, n, sum, R, k)
	se := []float64{math.NaN(), math.NaN()}
	iRR := sum/(R*R) - (sum+n*k)/((k+R)*(k+R))
	iRk := -(sum - n*R) / ((k + R) * (k + R))
	iKK := nbInfoK(t.Values, t.Counts, n, sum, R, k)
	det := iRR*iKK - iRk*iRk
	if iRR > 0 && iKK > 0 && det > 0 && !math.IsInf(det, 0) {
		se[0], se[1] = math.Sqrt(iKK/det), math.Sqrt(iRR/det)
	} else {
		// No usable curvature in k: report the R part alone (the cross term is 0 at the MLE).
		se[0] = math.Sqrt(R * (1 + R/k) / n)
	}
	return newFit(NegBinFamily{}, NegBin{R: R, K: k}, ll, Params{R, k}, se), nil
}

// useRunningSums reports whether sums over j < x are cheaper than special functions: the
// running sums cost O(max value) per evaluation, the closed forms O(distinct values) calls.
func useRunningSums(values []int) bool {
	if len(values) == 0 {
		return true
	}
	return values[len(values)-1] <= 32*len(values)+256
}

// varianceExceedsMean reports s²_n > x̄, i.e. n·Σc x² > T·(T + n), in exact integer
// arithmetic (128-bit products, big.Int on overflow), so ties such as {0, 2} are decided
// exactly. Entries with zero count are ignored.
func varianceExceedsMean(values, counts []int) bool {
	var n, T, S2 uint64
	ok := true
	for i, x := range values {
		c := uint64(counts[i])
		if c == 0 {
			continue
		}
		ux := uint64(x)
		var h, cx, cx2, carry uint64
		n, carry = bits.Add64(n, c, 0)
		ok = ok && carry == 0
		h, cx = bits.Mul64(c, ux)
		ok = ok && h == 0
		h, cx2 = bits.Mul64(cx, ux)
		ok = ok && h == 0
		T, carry = bits.Add64(T, cx, 0)
		ok = ok && carry == 0
		S2, carry = bits.Add64(S2, cx2, 0)
		ok = ok && carry == 0
		if !ok {
			break
		}
	}
	if ok {
		tn, carry := bits.Add64(T, n, 0)
		if carry == 0 {
			h1, l1 := bits.Mul64(n, S2)
			h2, l2 := bits.Mul64(T, tn)
			return h1 > h2 || (h1 == h2 && l1 > l2)
		}
	}
	bn, bT, bS := new(big.Int), new(big.Int), new(big.Int)
	for i, x := range values {
		c := big.NewInt(int64(counts[i]))
		cx := new(big.Int).Mul(c, big.NewInt(int64(x)))
		bn.Add(bn, c)
		bT.Add(bT, cx)
		bS.Add(bS, cx.Mul(cx, big.NewInt(int64(x))))
	}
	lhs := new(big.Int).Mul(bn, bS)
	rhs := new(big.Int).Mul(bT, new(big.Int).Add(bT, bn))
	return lhs.Cmp(rhs) > 0
}

// xMinusLog1p is y − log(1+y), by its Taylor series for small y (no cancellation).
func xMinusLog1p(y float64) float64 {
	if y < 0.01 {
		// y²/2 − y³/3 + y⁴/4 − …; 9 terms reach 1e-18 relative at y = 0.01.
		s, p := 0.0, y
		for j := 2; j <= 10; j++ {
			p *= -y
			s -= p / float64(j)
		}
		return s
	}
	return y - math.Log1p(y)
}

// nbScaledScore is k²·S(k), the profile score of FitNegBin times k², at k.
func nbScaledScore(values, counts []int, n, sum, k float64, running bool) float64 {
	R := sum / n
	acc := 0.0 // Σ_c c·Σ_{j<x} j/(k+j)
	if running {
		run, j := 0.0, 0
		for i, x := range values {
			if counts[i] == 0 {
				continue
			}
			for ; j < x; j++ {
				fj := float64(j)
				run += fj / (k + fj)
			}
			acc += float64(counts[i]) * run
		}
	} else {
		pk := mathext.Digamma(k)
		for i, x := range values {
			if counts[i] == 0 || x == 0 {
				continue
			}
			fx := float64(x)
			// Σ_{j<x} j/(k+j) = x − k(ψ(x+k) − ψ(k)).
			acc += float64(counts[i]) * (fx - k*(mathext.Digamma(fx+k)-pk))
		}
	}
	return -k*acc + n*k*k*xMinusLog1p(R/k)
}

// nbDispersion returns k̂ (finite = false in the Poisson limit).
func nbDispersion(values, counts []int, n, sum float64) (k float64, finite bool, err error) {
	if sum == 0 || !varianceExceedsMean(values, counts) {
		return 0, false, nil
	}
	// Trim trailing zero-count entries so the running sums stop at the largest value seen.
	last := len(values)
	for last > 0 && counts[last-1] == 0 {
		last--
	}
	values, counts = values[:last], counts[:last]
	running := useRunningSums(values)
	R := sum / n
	sumSq := 0.0
	for i, x := range values {
		sumSq += float64(counts[i]) * float64(x) * float64(x)
	}
	excess := sumSq/n - R*R - R
	// Method-of-moments start R²/(s²_n − R), clamped to the search range.
	k0 := R * R / excess
	if !(k0 > kMin) {
		k0 = 1
	}
	k0 = math.Min(k0, kMax)
	g := func(u float64) float64 { return nbScaledScore(values, counts, n, sum, math.Exp(u), running) }
	u0 := math.Log(k0)
	g0 := g(u0)
	if g0 == 0 {
		return k0, true, nil
	}
	lo, hi, glo, ghi := u0, u0, g0, g0
	// S > 0 below the root and < 0 above it; step outwards by factors of e² until the sign changes.
	if g0 > 0 {
		for ghi > 0 {
			lo, glo = hi, ghi
			if hi >= math.Log(kMax) {
				return 0, false, nil
			}
			hi = math.Min(hi+2, math.Log(kMax))
			ghi = g(hi)
		}
	} else {
		for glo < 0 {
			hi, ghi = lo, glo
			if lo <= math.Log(kMin) {
				return 0, false, fmt.Errorf("negative binomial fit: no root of the score for k ≥ %g (R̂ = %g)", kMin, R)
			}
			lo = math.Max(lo-2, math.Log(kMin))
			glo = g(lo)
		}
	}
	u, err := numeric.Brent(g, lo, hi, 1e-13, 200)
	if err != nil {
		return 0, false, fmt.Errorf("negative binomial fit: %w", err)
	}
	return math.Exp(u), true, nil
}

// nbLogLik is the negative binomial log-likelihood of the table at (R, k):
// Σ c[log Γ(x+k) − log Γ(k) − log x!] − n k log(1 + R/k) + T log(R/(k+R)).
func nbLogLik(values, counts []int, n, sum, R, k float64) float64 {
	ll := 0.0
	running := useRunningSums(values)
	run, j := 0.0, 0
	for i, x := range values {
		if counts[i] == 0 {
			continue
		}
		fx := float64(x)
		var lr float64 // log Γ(x+k) − log Γ(k)
		if running {
			for ; j < x; j++ {
				run += math.Log(k + float64(j))
			}
			lr = run
		} else {
			lr = numeric.LogPochhammer(k, fx)
		}
		lf, _ := math.Lgamma(fx + 1)
		ll += float64(counts[i]) * (lr - lf)
	}
	ll += -n * k * math.Log1p(R/k)
	if sum > 0 {
		ll += sum * (math.Log(R) - math.Log(k+R))
	}
	return ll
}

// nbInfoK is I_kk = Σ c[ψ'(k) − ψ'(x+k)] − n/k + n/(k+R) − (T − nR)/(k+R)², written for the
// running sums in the cancellation-free form
// nR²/(k²(k+R)) − Σ c Σ_{j<x} j(2k+j)/(k²(k+j)²) + (T − nR)(1/k² − 1/(k+R)²).
func nbInfoK(values, counts []int, n, sum, R, k float64) float64 {
	d := sum - n*R
	if useRunningSums(values) {
		acc, run, j := 0.0, 0.0, 0
		for i, x := range values {
			for ; j < x; j++ {
				fj := float64(j)
				run += fj * (2*k + fj) / ((k + fj) * (k + fj))
			}
			acc += float64(counts[i]) * run
		}
		return (n*R*R/(k+R)-acc)/(k*k) + d*(1/(k*k)-1/((k+R)*(k+R)))
	}
	zk := mathext.Zeta(2, k)
	acc := 0.0
	for i, x := range values {
		if counts[i] == 0 || x == 0 {
			continue
		}
		acc += float64(counts[i]) * (zk - mathext.Zeta(2, float64(x)+k))
	}
	return acc - n/k + n/(k+R) - d/((k+R)*(k+R))
}
