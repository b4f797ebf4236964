package timing

import (
	"fmt"
	"math"
	"sort"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"gonum.org/v1/gonum/mathext"
)

// WeekR is one ISO week's reproduction number from the tree: the mean offspring count of
// the cases whose onset falls in the week.
type WeekR struct {
	WeekStart linelist.Day // the Monday, YYYY-MM-DD in JSON
	Cases     int
	R         float64
	Lower     float64
	Upper     float64
	// Censored is true when the week has days within Window days before the analysis
	// date: those cases may still infect others, so R is biased low.
	Censored bool
}

// WeeklyOptions configure WeeklyR.
type WeeklyOptions struct {
	// AnalysisDate is the date the data describe (the last day follow-up could see).
	AnalysisDate linelist.Day
	// Window is w, in days: a case with onset t is incomplete when AnalysisDate − t < w.
	// A usual choice is the serial interval's 95th percentile (common practice).
	Window int
	// Level of the intervals; 0 means 0.95.
	Level float64
	// Dispersion is the negative-binomial k behind the intervals. 0 estimates it by
	// maximum likelihood from the cases outside the censoring window, pooled over weeks
	// (DispersionMLE; with fewer than two such cases, or no overdispersion, that is the
	// Poisson limit, whose intervals are narrower: pass k explicitly in that case);
	// +Inf uses the Poisson limit.
	Dispersion float64
}

// WeeklyResult is the weekly R series and how its intervals were made.
type WeeklyResult struct {
	Weeks []WeekR
	// K is the dispersion used; 0 with PoissonLimit true means k = ∞.
	K            float64
	PoissonLimit bool
	Level        float64
	Method       string
}

// WeeklyIntervalMethod describes WeeklyR's intervals in the summary.
const WeeklyIntervalMethod = "exact negative-binomial interval for the weekly mean with pooled dispersion k (Poisson/Garwood when k = ∞)"

// WeeklyR groups cases by the ISO week (Monday start) of their onset and gives, per week
// with cases, R = mean offspring and an exact interval.
//
// Interval. Offspring counts are overdispersed: Z ~ NB(R, k) [Lloyd-Smith et al. 2005,
// Nature 438:355]. The week's total S = ΣZ over its n cases is then NB with size nk and
// mean nR (the PGF (1 + (R/k)(1 − s))^{−k} raised to the n-th power), so
// P(S ≤ s) = I_{k/(k+R)}(nk, s + 1), I the regularized incomplete beta function
// [Johnson, Kemp & Kotz 2005, Univariate Discrete Distributions, §5.6; recalled from
// memory]. The interval inverts this CDF, which falls as R grows (Casella & Berger 2002,
// Statistical Inference, Thm 9.2.12, "pivoting a discrete cdf"):
// upper U with P(S ≤ s | U) = α/2, lower L with P(S ≥ s | L) = α/2 (L = 0 when s = 0),
// both in closed form through the inverse incomplete beta. With k = ∞ this is Garwood's
// exact Poisson interval [Garwood 1936, Biometrika 28:437]. Unlike a within-week
// bootstrap, which collapses to [0, 0] for three cases with no offspring, the width
// follows n and k: one case with Z = 0 and k = 0.5 gives [0, 799.5]. k is pooled because
// a week has too few cases to estimate it; pooling over weeks with different R inflates
// the variance, so the intervals err wide. Offspring may be fractional (recorded counts
// plus Wallinga–Teunis expected counts): I_p(nk, s + 1) extends the CDF continuously to
// non-integer s.
func WeeklyR(onset []linelist.Day, offspring []float64, opt WeeklyOptions) (WeeklyResult, error) {
	out := WeeklyResult{Method: WeeklyIntervalMethod}
	if len(onset) != len(offspring) {
		return out, fmt.Errorf("weekly R: %d onsets but %d offspring counts", len(onset), len(offspring))
	}
	if opt.Window < 0 {
		return out, fmt.Errorf("weekly R: censoring window %d days is negative", opt.Window)
	}
	level := opt.Level
	if level == 0 {
		level = 0.95
	}
	if !(level > 0 && level < 1) {
		return out, fmt.Errorf("weekly R: confidence level %v is not in (0, 1)", opt.Level)
	}
	out.Level = level
	for i, z := range offspring {
		if !(z >= 0) || math.IsInf(z, 1) {
			return out, fmt.Errorf("weekly R: case %d has offspring count %v; want a finite number ≥ 0", i, z)
		}
	}
	// A day t is incomplete when AnalysisDate − t < Window, i.e. t > lastComplete.
	lastComplete := int64(opt.AnalysisDate) - int64(opt.Window)

	k := opt.Dispersion
	switch {
	case math.IsNaN(k) || k < 0:
		return out, fmt.Errorf("weekly R: dispersion k = %v; want > 0, +Inf, or 0 to estimate", k)
	case k == 0:
		var complete []float64
		for i, t := range onset {
			if int64(t) <= lastComplete {
				complete = append(complete, offspring[i])
			}
		}
		k = DispersionMLE(complete)
	}
	out.PoissonLimit = math.IsInf(k, 1)
	if !out.PoissonLimit {
		out.K = k
	}

	type acc struct {
		n   int
		sum float64
	}
	weeks := map[linelist.Day]*acc{}
	for i, t := range onset {
		w := t.ISOWeekStart()
		a := weeks[w]
		if a == nil {
			a = &acc{}
			weeks[w] = a
		}
		a.n++
		a.sum += offspring[i]
	}
	starts := make([]linelist.Day, 0, len(weeks))
	for w := range weeks {
		starts = append(starts, w)
	}
	sort.Slice(starts, func(i, j int) bool { return starts[i] < starts[j] })
	alpha := 1 - level
	for _, w := range starts {
		a := weeks[w]
		lo, hi := MeanInterval(a.n, a.sum, k, alpha)
		out.Weeks = append(out.Weeks, WeekR{
			WeekStart: w, Cases: a.n, R: a.sum / float64(a.n), Lower: lo, Upper: hi,
			Censored: int64(w)+6 > lastComplete,
		})
	}
	return out, nil
}

// MeanInterval is the exact 1 − alpha interval for the mean R of n negative-binomial(R, k)
// counts that sum to total (see WeeklyR for the formula and its sources); k = +Inf gives
// Garwood's Poisson interval. It returns NaNs for n < 1, a negative or non-finite total,
// k ≤ 0, or alpha outside (0, 1).
func MeanInterval(n int, total, k, alpha float64) (lower, upper float64) {
	nan := math.NaN()
	if n < 1 || !(total >= 0) || math.IsInf(total, 1) || !(k > 0) || !(alpha > 0 && alpha < 1) {
		return nan, nan
	}
	nf := float64(n)
	if math.IsInf(k, 1) {
		// Poisson CDF P(S ≤ s | μ) = Q(s + 1, μ), Q the regularized upper incomplete gamma.
		upper = mathext.GammaIncRegInv(total+1, 1-alpha/2) / nf
		if total > 0 {
			lower = mathext.GammaIncRegInv(total, alpha/2) / nf
		}
		return lower, upper
	}
	size := nf * k
	// p = k/(k + R) ⇔ R = k(1 − p)/p.
	pU := mathext.InvRegIncBeta(size, total+1, alpha/2)
	upper = k * (1 - pU) / pU
	if total > 0 {
		pL := mathext.InvRegIncBeta(size, total, 1-alpha/2)
		lower = k * (1 - pL) / pL
	}
	if math.IsInf(upper, 1) || math.IsNaN(upper) {
		upper = math.MaxFloat64
	}
	return lower, upper
}

// DispersionMLE is the maximum-likelihood negative-binomial dispersion k of the counts:
// the root of Σ_i [ψ(x_i + k) − ψ(k)] + n·log(k/(k + x̄)) = 0 (Lloyd-Smith
// 2005), solved on the table of distinct values by bisection in log k. It returns +Inf
// (the Poisson limit) when the sample variance does not exceed the mean, the score has no
// root below k = 10^8, or there are fewer than two counts, and NaN for invalid counts.
func DispersionMLE(counts []float64) float64 {
	if len(counts) < 2 {
		return math.Inf(1)
	}
	tab := map[float64]int{}
	mean := 0.0
	for _, x := range counts {
		if !(x >= 0) || math.IsInf(x, 1) {
			return math.NaN()
		}
		tab[x]++
		mean += x
	}
	n := float64(len(counts))
	mean /= n
	v := 0.0
	for x, c := range tab {
		v += float64(c) * (x - mean) * (x - mean)
	}
	v /= n - 1
	if mean == 0 || v <= mean {
		return math.Inf(1)
	}
	score := func(k float64) float64 {
		s := n * math.Log(k/(k+mean))
		dk := mathext.Digamma(k)
		for x, c := range tab {
			s += float64(c) * (mathext.Digamma(x+k) - dk)
		}
		return s
	}
	lo, hi := math.Log(1e-8), math.Log(1e8)
	if score(math.Exp(hi)) >= 0 {
		return math.Inf(1)
	}
	if score(math.Exp(lo)) <= 0 {
		return math.Exp(lo)
	}
	for i := 0; i < 200 && hi-lo > 1e-14; i++ {
		mid := (lo + hi) / 2
		if score(math.Exp(mid)) > 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	return math.Exp((lo + hi) / 2)
}
