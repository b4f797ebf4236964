package branching

import (
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"
	"math/cmplx"
	"runtime"
	"slices"
	"sort"
	"sync"
	"sync/atomic"

	"github.com/caseweave/caseweave/pipeline/offspring"
	"gonum.org/v1/gonum/dsp/fourier"
)

// Limits and tolerances of the FFT decoding. They bound memory and time; every result
// reports how much probability fell beyond them.
const (
	// MaxGenerations is the largest number of generations GenerationSizes and Project accept.
	MaxGenerations = 100
	// MaxActive is the largest number of active cases accepted.
	MaxActive = 1_000_000_000
	// MaxFFTPoints caps the number of points M on the circle; the decoded support is M/2.
	MaxFFTPoints = 1 << 20
	minFFTPoints = 64
	// fftBudget caps generations × M (complex values held at once, 16 bytes each: 128 MiB).
	fftBudget = 1 << 23
	// TailTolerance is the probability mass beyond the decoded support below which the
	// adaptive choice of M stops doubling.
	TailTolerance = 1e-10
	// TrimMass: trailing PMF entries whose total is below this are dropped into the
	// truncated mass, so that outputs stay small.
	TrimMass = 1e-12
	// dampingDigits sets the circle radius r by r^M = 10^−dampingDigits. Aliasing from beyond
	// M is damped by that factor while round-off at index j < M/2 is amplified by at most
	// r^−j ≤ 10^(dampingDigits/2) [Abate & Whitt 1992 balance the same two errors].
	dampingDigits = 4
)

// GenerationDistribution is the distribution of the number of cases X_n in generation n.
type GenerationDistribution struct {
	N int
	// PZero = P(X_n = 0), computed directly as G_n(0)^a (not decoded).
	PZero float64
	// Mean and Variance are the closed forms (nil when they overflow a float64).
	Mean     *float64
	Variance *float64
	// PMF[j] = P(X_n = j) for j < len(PMF); PMF[0] = PZero.
	PMF []float64
	// Support is the truncation point of the FFT decoding: values j ≥ Support were never
	// decoded. len(PMF) ≤ Support (trailing mass below TrimMass is dropped).
	Support int
	// FFTPoints is the number M of points on the circle (Support = M/2).
	FFTPoints int
	// TruncatedMass = 1 − Σ PMF: probability of a count beyond the list.
	TruncatedMass float64
}

// GenerationMoments returns the mean and variance of X_n from a cases for an offspring
// distribution with mean R and variance σ² [Harris 1963, ch. 1, §5]:
//
//	E X_n = a·R^n,   Var X_n = a·σ²·R^{n−1}(R^n − 1)/(R − 1)  (R ≠ 1),   a·n·σ²  (R = 1).
//
// (R^n − 1)/(R − 1) is computed as expm1(n·log1p(R − 1))/(R − 1), which stays accurate as
// R → 1. The values are +Inf when they overflow.
func GenerationMoments(R, sigma2 float64, a, n int) (mean, variance float64) {
	fa, fn := float64(a), float64(n)
	if n == 0 {
		return fa, 0
	}
	mean = fa * math.Pow(R, fn)
	switch {
	case R == 1:
		variance = fa * fn * sigma2
	case R == 0:
		variance = 0
		if n == 1 {
			variance = fa * sigma2
		}
	default:
		l := math.Log1p(R - 1)
		variance = fa * sigma2 * math.Exp((fn-1)*l) * (math.Expm1(fn*l) / (R - 1))
	}
	if sigma2 == 0 {
		variance = 0
	}
	return mean, variance
}

// GenerationSizes returns the distributions of X_1, ..., X_N, the numbers of cases in the
// next N generations from `active` cases now. The PGF of X_n is G_n(s)^a, G_n the n-fold
// composition of G [Harris 1963, ch. 1]; it is evaluated at M points s_m = r·e^{2πim/M} and
// decoded by a discrete Fourier transform, p_j = r^{−j}·(1/M)·Σ_m G_n(s_m)^a·e^{−2πijm/M}
// [Abate & Whitt 1992, "Numerical inversion of probability generating functions",
// Oper Res Lett 12:245]. M is a power of two, doubled until the mass beyond j = M/2 is
// below TailTolerance or M reaches its cap; the truncation and the mass beyond it are
// reported, so an R > 1 process run for many generations returns an honest, mostly
// truncated distribution instead of garbage. Round-off below zero is clamped to 0.
func GenerationSizes(d offspring.Distribution, active, generations int) ([]GenerationDistribution, error) {
	if err := checkDistribution(d); err != nil {
		return nil, err
	}
	dec, err := decodeMixture([]offspring.Distribution{d}, active, generations, MaxFFTPoints)
	if err != nil {
		return nil, err
	}
	R, s2 := d.Mean(), variance(d)
	out := make([]GenerationDistribution, generations)
	for i := range out {
		n := i + 1
		m, v := GenerationMoments(R, s2, active, n)
		out[i] = GenerationDistribution{
			N: n, PZero: dec.pzero[i], Mean: numeric.FinitePtr(m), Variance: numeric.FinitePtr(v),
			PMF: dec.pmf[i], Support: dec.support, FFTPoints: dec.points,
			TruncatedMass: dec.truncated[i],
		}
	}
	return out, nil
}

// mixtureDecoding holds, for generations 1..N, the decoded PMF of the mixture
// (1/B)·Σ_b G_{b,n}(s)^a.
type mixtureDecoding struct {
	pmf       [][]float64
	pzero     []float64
	truncated []float64
	support   int
	points    int
}

func checkCounts(active, generations int) error {
	if active < 0 || active > MaxActive {
		return fmt.Errorf("branching: %d active cases: the number must be in 0..%d", active, MaxActive)
	}
	if generations < 1 || generations > MaxGenerations {
		return fmt.Errorf("branching: %d generations: the number must be in 1..%d", generations, MaxGenerations)
	}
	return nil
}

// decodeMixture decodes Σ_b G_{b,n}(s)^a / B for n = 1..N. Averaging PGF values is exact
// for a mixture (the PGF is linear in the PMF), so one transform per generation suffices.
func decodeMixture(ds []offspring.Distribution, a, N, capM int) (*mixtureDecoding, error) {
	if err := checkCounts(a, N); err != nil {
		return nil, err
	}
	if len(ds) == 0 {
		return nil, fmt.Errorf("branching: no offspring distribution given")
	}
	B := float64(len(ds))
	dec := &mixtureDecoding{
		pmf: make([][]float64, N), pzero: make([]float64, N), truncated: make([]float64, N),
	}
	// P(X_n = 0) directly: G_n(0)^a, averaged over the mixture.
	for _, d := range ds {
		s := 0.0
		for n := 0; n < N; n++ {
			s = d.PGF(s)
			dec.pzero[n] += intPow(s, a) / B
		}
	}
	if a == 0 {
		for n := range dec.pmf {
			dec.pmf[n] = []float64{1}
			dec.pzero[n] = 1
		}
		dec.support, dec.points = 1, 1
		return dec, nil
	}
	maxM := capM
	for maxM > minFFTPoints && maxM*N > fftBudget {
		maxM /= 2
	}
	M := initialPoints(ds, a, N, maxM)
	for {
		vals := evalMixture(ds, a, N, M)
		worst := 0.0
		pmfs := make([][]float64, N)
		fft := fourier.NewCmplxFFT(M)
		for n := 0; n < N; n++ {
			p, tail := decodeCircle(fft, vals[n], M, dampingDigits, M/2)
			pmfs[n] = p
			worst = math.Max(worst, tail)
		}
		if worst <= TailTolerance || M >= maxM {
			for n := 0; n < N; n++ {
				p := pmfs[n]
				p[0] = dec.pzero[n]
				dec.pmf[n], dec.truncated[n] = trimPMF(p, 1)
			}
			dec.support, dec.points = M/2, M
			return dec, nil
		}
		M *= 2
		if worst > 1e-3 && M < maxM {
			M *= 2
		}
	}
}

// initialPoints guesses M from the closed-form moments: support up to mean + 12 sd.
func initialPoints(ds []offspring.Distribution, a, N, maxM int) int {
	need := 32.0
	for _, d := range ds {
		for n := 1; n <= N; n++ {
			m, v := GenerationMoments(d.Mean(), variance(d), a, n)
			need = math.Max(need, m+12*math.Sqrt(v)+32)
		}
	}
	M := minFFTPoints
	for M < maxM && float64(M/2) < need {
		M *= 2
	}
	return M
}

// radius returns r with r^M = 10^−digits.
func radius(M int, digits float64) float64 {
	return math.Pow(10, -digits/float64(M))
}

// evalMixture returns vals[n][m] = (1/B)·Σ_b G_{b,n+1}(s_m)^a. The points are split among
// goroutines; every sum over b runs in the same order whatever the number of workers, so
// the result does not depend on their number.
func evalMixture(ds []offspring.Distribution, a, N, M int) [][]complex128 {
	return evalMixtureSkip(ds, a, N, M, true)
}

// evalMixtureSkip is evalMixture; with skip, it stops iterating a replicate at a point once
// every remaining term G_{b,n}(s_m)^a is certain to underflow to 0 (see underflowRadii), which
// changes no value and, for many active cases, spares most of the circle.
func evalMixtureSkip(ds []offspring.Distribution, a, N, M int, skip bool) [][]complex128 {
	vals := make([][]complex128, N)
	for n := range vals {
		vals[n] = make([]complex128, M)
	}
	r := radius(M, dampingDigits)
	invB := complex(1/float64(len(ds)), 0)
	logRho := make([][]float64, len(ds))
	for b, d := range ds {
		if skip {
			logRho[b] = underflowRadii(d, a, N)
		} else {
			logRho[b] = slices.Repeat([]float64{math.Inf(-1)}, N) // never skip
		}
	}
	// A PGF has real coefficients, so G(s̄) is the conjugate of G(s): the points of the upper
	// half circle determine those of the lower half, which halves the work.
	half := M/2 + 1
	last := make([]int, len(ds))
	logs := make([]offspring.ComplexLogPGFer, len(ds)) // nil where a model has no logarithm first
	for b, d := range ds {
		last[b] = lastLivePoint(d, logRho[b][0], r, M, half)
		logs[b], _ = d.(offspring.ComplexLogPGFer)
	}
	// The points near s = r carry most of the work, so they are handed out in small blocks
	// to whichever worker is free; each value is still summed by one goroutine in a fixed
	// order over b.
	const block = 32
	var next atomic.Int64
	var wg sync.WaitGroup
	for range runtime.GOMAXPROCS(0) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				lo := int(next.Add(block)) - block
				if lo >= half {
					return
				}
				for m := lo; m < min(lo+block, half); m++ {
					s := cmplx.Rect(r, 2*math.Pi*float64(m)/float64(M))
					for b, d := range ds {
						if m > last[b] {
							continue
						}
						w := s
						for n := 0; n < N; n++ {
							// l is a logarithm of w' = G(w): its real part, log|w'|, decides
							// the skip before any exponential is taken, and w'^a = e^{a·l}
							// for any branch, a being an integer.
							var l complex128
							if logs[b] != nil {
								l = logs[b].LogPGFComplex(w)
							} else {
								w = d.PGFComplex(w)
								l = cmplx.Log(w)
							}
							if real(l) < logRho[b][n] {
								break
							}
							if logs[b] != nil {
								w = cmplx.Exp(l) // G(w) exactly as PGFComplex computes it
							}
							if a <= binaryPowerMax {
								vals[n][m] += cmplxIntPow(w, a) * invB
							} else {
								vals[n][m] += cmplx.Exp(complex(float64(a), 0)*l) * invB
							}
						}
					}
				}
			}
		}()
	}
	wg.Wait()
	for n := range vals {
		for m := 1; m < M-m; m++ {
			vals[n][M-m] = cmplx.Conj(vals[n][m])
		}
	}
	return vals
}

// lastLivePoint returns the largest m < half at which log|G(s_m)|, s_m = r·e^{2πim/M}, may
// reach logRho (the first-step bound of underflowRadii); from there on every term of the
// replicate is 0. For a model whose |G(r·e^{iθ})| decreases in θ on [0, π]
// (offspring.ModulusDecreasing) the first point past the bound is found by bisection. Any
// other model gets half − 1: every point is evaluated.
func lastLivePoint(d offspring.Distribution, logRho, r float64, M, half int) int {
	md, ok := d.(offspring.ModulusDecreasing)
	if !ok || math.IsInf(logRho, -1) {
		return half - 1
	}
	cut := 2 * logRho
	dead := func(m int) bool { return md.LogAbs2PGF(cmplx.Rect(r, 2*math.Pi*float64(m)/float64(M))) < cut }
	if !dead(half - 1) {
		return half - 1
	}
	// The first dead point: dead(m) is false below it and true from it on.
	first := sort.Search(half, dead)
	return first - 1
}

// underflowLog is a log-modulus below which e^x is 0 in float64 with a wide margin (the
// smallest subnormal is e^−744.4).
const underflowLog = -760

// underflowRadii returns log ρ_n (n = 0..N−1) such that log|G_{n+1}(s)| < log ρ_n implies
// that G_{n+1+j}(s)^a underflows to 0 for every j = 0..N−1−n. It rests on |G(z)| ≤ G(|z|)
// for a PGF (its coefficients are non-negative), so |G_{n+1+j}(s)| ≤ G_j(|G_{n+1}(s)|) with
// G_j the j-fold composition on [0, 1], which is increasing; ρ_n is the largest ρ with
// a·log G_j(ρ) < underflowLog for all those j, found by bisection. log ρ_n = −∞ (never skip)
// when no ρ > 0 qualifies (or a is 0).
func underflowRadii(d offspring.Distribution, a, N int) []float64 {
	out := slices.Repeat([]float64{math.Inf(-1)}, N)
	if a == 0 {
		return out
	}
	fa := float64(a)
	ok := func(rho float64, steps int) bool {
		x := rho
		for j := 0; j <= steps; j++ {
			if j > 0 {
				x = d.PGF(x)
			}
			if !(fa*math.Log(x) < underflowLog) {
				return false
			}
		}
		return true
	}
	for n := 0; n < N; n++ {
		steps := N - 1 - n
		lo, hi := 0.0, 1.0
		if !ok(0, steps) {
			continue
		}
		for i := 0; i < 64 && hi-lo > 1e-15; i++ {
			mid := (lo + hi) / 2
			if ok(mid, steps) {
				lo = mid
			} else {
				hi = mid
			}
		}
		out[n] = math.Log(lo) // −∞ when lo = 0
	}
	return out
}

// decodeCircle turns PGF values at s_m = r·e^{2πim/M} (r = radius(M, digits)) into p_j,
// j < J ≤ M, and returns them with 1 − Σ p_j computed before clamping (so round-off of
// either sign cancels in the sum). Values below the round-off floor (including every
// negative one) are set to 0 and values above 1 to 1.
func decodeCircle(fft *fourier.CmplxFFT, vals []complex128, M int, digits float64, J int) ([]float64, float64) {
	coef := fft.Coefficients(nil, vals)
	logR := math.Log(radius(M, digits))
	// The decoded sequence is real, so the imaginary parts of the coefficients are pure
	// round-off: their RMS sets the noise floor below which a value is indistinguishable
	// from 0 (common practice: an empirical noise estimate; the factor 8 is a margin).
	var ss float64
	for _, c := range coef {
		ss += imag(c) * imag(c)
	}
	noise := 8 * math.Sqrt(ss/float64(M)) / float64(M)
	p := make([]float64, J)
	var sum numeric.Sum
	for j := 0; j < J; j++ {
		amp := math.Exp(-float64(j) * logR)
		v := real(coef[j]) / float64(M) * amp
		sum.Add(v)
		if v < noise*amp {
			v = 0
		}
		p[j] = math.Min(1, v)
	}
	return p, 1 - sum.Value()
}

// trimPMF drops the trailing entries of p whose total is below TrimMass and returns the
// kept prefix with total − Σ kept (clamped at 0): the mass not listed.
func trimPMF(p []float64, total float64) ([]float64, float64) {
	tail := 0.0
	L := len(p)
	for L > 1 && tail+p[L-1] < TrimMass {
		tail += p[L-1]
		L--
	}
	var s numeric.Sum
	for _, v := range p[:L] {
		s.Add(v)
	}
	out := make([]float64, L)
	copy(out, p[:L])
	return out, math.Min(total, math.Max(0, total-s.Value()))
}

// intPow is s^a for 0 ≤ s ≤ 1 and a ≥ 0.
func intPow(s float64, a int) float64 {
	switch {
	case a == 0:
		return 1
	case a == 1:
		return s
	case s == 0:
		return 0
	}
	return math.Exp(float64(a) * math.Log(s))
}

// binaryPowerMax is the largest power cmplxIntPow takes by repeated squaring.
const binaryPowerMax = 1024

// cmplxIntPow is w^a for an integer a ≥ 0: binary powering for a ≤ binaryPowerMax (at most
// 20 multiplications), exp(a·Log w) beyond, which is exact in exact arithmetic for any
// branch of the logarithm because a is an integer.
func cmplxIntPow(w complex128, a int) complex128 {
	switch {
	case a == 0:
		return 1
	case a == 1:
		return w
	case w == 0:
		return 0
	case a <= binaryPowerMax:
		r := complex(1, 0)
		for ; a > 0; a >>= 1 {
			if a&1 == 1 {
				r *= w
			}
			w *= w
		}
		return r
	}
	return cmplx.Exp(complex(float64(a), 0) * cmplx.Log(w))
}
