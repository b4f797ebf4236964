package branching

import (
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"
	"math/cmplx"
	"runtime"
	"sync"

	"github.com/caseweave/caseweave/pipeline/offspring"
	"gonum.org/v1/gonum/dsp/fourier"
)

// MaxChainSize caps the length of a chain-size PMF list.
const MaxChainSize = 1 << 18

// chainDampingDigits: chain sizes are decoded with r^M = 1e−8 and read on j < M/4, so
// aliasing is damped 1e8-fold while round-off grows at most 10^(8/4) = 100-fold. Chain-size
// tails can be heavy (∝ y^{−3/2} at R = 1), so aliasing needs the stronger damping.
const chainDampingDigits = 8

// Methods by which a chain-size distribution was computed.
const (
	ChainMethodClosedForm = "closed_form"
	ChainMethodLagrange   = "lagrange_fft"
)

// ChainSizeDistribution is the distribution of the total size Y (root included) of a
// transmission chain started by one case.
type ChainSizeDistribution struct {
	// PMF[i] = P(Y = i + 1).
	PMF []float64
	// Mean is 1/(1 − R) for R < 1, nil otherwise (Y is infinite with probability 1 − q > 0
	// for R > 1, and has infinite mean at R = 1).
	Mean *float64
	// TruncatedMass = q − Σ PMF: the probability of a finite chain longer than the list.
	// The remaining 1 − q is the probability of a chain that never ends.
	TruncatedMass float64
	// Extinction is q = Σ_{y<∞} P(Y = y).
	Extinction float64
	Method     string
}

// ChainSizes returns the chain-size distribution from one root, listing at most maxSize
// sizes (0 means MaxChainSize). A model with a closed form (offspring.ChainSizer: the
// negative binomial, geometric and Poisson of Blumberg & Lloyd-Smith 2013) is listed from
// it; any other model goes through ChainSizesLagrange. The list stops once the finite-size
// mass left, q − Σ PMF, falls below TrimMass.
func ChainSizes(d offspring.Distribution, maxSize int) (*ChainSizeDistribution, error) {
	if err := checkDistribution(d); err != nil {
		return nil, err
	}
	if maxSize < 0 || maxSize > MaxChainSize {
		return nil, fmt.Errorf("branching: chain-size list length %d outside 0..%d", maxSize, MaxChainSize)
	}
	if maxSize == 0 {
		maxSize = MaxChainSize
	}
	cs, ok := d.(offspring.ChainSizer)
	if !ok {
		return ChainSizesLagrange(d, maxSize)
	}
	q, err := ExtinctionProbability(d)
	if err != nil {
		return nil, err
	}
	out := &ChainSizeDistribution{Extinction: q, Method: ChainMethodClosedForm, Mean: chainMean(d.Mean())}
	var cum numeric.Sum
	for y := 1; y <= maxSize; y++ {
		p := math.Exp(cs.ChainSizeLogPMF(y))
		out.PMF = append(out.PMF, p)
		cum.Add(p)
		if q-cum.Value() < TrimMass {
			break
		}
	}
	out.TruncatedMass = math.Max(0, q-cum.Value())
	return out, nil
}

func chainMean(R float64) *float64 {
	if R < 1 {
		return numeric.FinitePtr(1 / (1 - R))
	}
	return nil
}

// ChainSizesLagrange computes the chain-size distribution of any offspring model by
// Lagrange inversion. The total-progeny PGF H(s) = Σ_y P(Y = y) s^y solves H(s) = s·G(H(s))
// [Harris 1963, ch. 1, §13], whose Lagrange inversion is P(Y = y) = (1/y)[s^{y−1}]G(s)^y
// [Blumberg & Lloyd-Smith 2013; Dwass 1969, J Appl Probab 6:682]. Rather than one transform
// per y, H is found at M points s_m = r·e^{2πim/M} (for |s| < 1 the equation has exactly
// one root in the unit disc) by Newton's method safeguarded with the contracting fixed-point
// step h ← s·G(h), and all coefficients are read off with one FFT [Abate & Whitt 1992].
// M doubles until the finite-size mass beyond M/4 is below TailTolerance, or the list
// reaches maxSize (0 means MaxChainSize).
func ChainSizesLagrange(d offspring.Distribution, maxSize int) (*ChainSizeDistribution, error) {
	if err := checkDistribution(d); err != nil {
		return nil, err
	}
	if maxSize < 0 || maxSize > MaxChainSize {
		return nil, fmt.Errorf("branching: chain-size list length %d outside 0..%d", maxSize, MaxChainSize)
	}
	if maxSize == 0 {
		maxSize = MaxChainSize
	}
	q, err := ExtinctionProbability(d)
	if err != nil {
		return nil, err
	}
	maxM := minFFTPoints
	for maxM < MaxFFTPoints && maxM/4 < maxSize+1 {
		maxM *= 2
	}
	// Starting M from the mean and variance of Y for R < 1: E Y = 1/(1 − R) and
	// Var Y = σ²/(1 − R)³ (both from differentiating H = sG(H) at s = 1); only a guess.
	M := minFFTPoints
	if R := d.Mean(); R < 1 {
		need := 1/(1-R) + 12*math.Sqrt(variance(d)/math.Pow(1-R, 3)) + 32
		for M < maxM && float64(M/4) < need {
			M *= 2
		}
	} else {
		M = min(maxM, 1024)
	}
	for {
		vals, err := progenyPGF(d, M)
		if err != nil {
			return nil, err
		}
		p, tail := decodeCircle(fourier.NewCmplxFFT(M), vals, M, chainDampingDigits, M/4)
		// decodeCircle's tail is 1 − Σ; the finite-size mass beyond is q − Σ.
		finiteTail := tail - (1 - q)
		if finiteTail <= TailTolerance || M >= maxM {
			if len(p) > maxSize+1 {
				p = p[:maxSize+1]
			}
			pmf, trunc := trimPMF(p[1:], q)
			return &ChainSizeDistribution{
				PMF: pmf, Mean: chainMean(d.Mean()), TruncatedMass: trunc,
				Extinction: q, Method: ChainMethodLagrange,
			}, nil
		}
		M *= 2
	}
}

// progenyPGF returns H(s_m) at the M points of radius(M, chainDampingDigits). Each point
// is solved from the same start, so the values do not depend on how the points are split
// among goroutines.
func progenyPGF(d offspring.Distribution, M int) ([]complex128, error) {
	vals := make([]complex128, M)
	r := radius(M, chainDampingDigits)
	workers := runtime.GOMAXPROCS(0)
	chunk := (M + workers - 1) / workers
	errs := make([]error, workers)
	var wg sync.WaitGroup
	for w, lo := 0, 0; lo < M; w, lo = w+1, lo+chunk {
		hi := min(lo+chunk, M)
		wg.Add(1)
		go func(w, lo, hi int) {
			defer wg.Done()
			for m := lo; m < hi; m++ {
				s := cmplx.Rect(r, 2*math.Pi*float64(m)/float64(M))
				h, ok := solveProgeny(d, s)
				if !ok {
					errs[w] = fmt.Errorf("branching: total-progeny equation H = sG(H) did not converge at s = %v", s)
					return
				}
				vals[m] = h
			}
		}(w, lo, hi)
	}
	wg.Wait()
	for _, e := range errs {
		if e != nil {
			return nil, e
		}
	}
	return vals, nil
}

// solveProgeny solves h = s·G(h) in the unit disc for |s| < 1. Newton's step uses a central
// difference for G' (step 2^−20, so the derivative error is ~1e−12 and convergence stays
// practically quadratic); when a Newton step leaves the disc or does not reduce the
// residual, the fixed-point step h ← s·G(h), a contraction of the disc into itself, is
// taken instead.
func solveProgeny(d offspring.Distribution, s complex128) (complex128, bool) {
	const delta = 0x1p-20
	h := s * d.PGFComplex(0)
	res := cmplx.Abs(h - s*d.PGFComplex(h))
	for iter := 0; iter < 500 && res > 0; iter++ {
		g := d.PGFComplex(h)
		dg := (d.PGFComplex(h+delta) - d.PGFComplex(h-delta)) / (2 * delta)
		next, nres := h, math.Inf(1)
		if fp := 1 - s*dg; fp != 0 {
			next = h - (h-s*g)/fp
			if cmplx.Abs(next) <= 1 && !cmplx.IsNaN(next) {
				nres = cmplx.Abs(next - s*d.PGFComplex(next))
			}
		}
		if !(nres < res) {
			if res <= 1e-13 {
				break // no further progress: the residual is at round-off level
			}
			next = s * g
			nres = cmplx.Abs(next - s*d.PGFComplex(next))
		}
		step := cmplx.Abs(next - h)
		h, res = next, nres
		if step <= 1e-15*cmplx.Abs(h) {
			break
		}
	}
	return h, res <= 1e-12
}

// ChainSizeLagrangeAt is P(Y = y) = (1/y)·[s^{y−1}] G(s)^y, the Lagrange-inversion formula
// itself [Blumberg & Lloyd-Smith 2013; Dwass 1969], for one y: G^y is evaluated at M points
// on a circle and the coefficient of s^{y−1} is read off with one FFT [Abate & Whitt 1992].
// M is the smallest power of two covering y·R + 12·sd(Σ of y offspring) + 2y + 64 (up to
// MaxFFTPoints). It is meant as an independent check of ChainSizes for small y.
func ChainSizeLagrangeAt(d offspring.Distribution, y int) (float64, error) {
	if err := checkDistribution(d); err != nil {
		return math.NaN(), err
	}
	if y < 1 || y > MaxChainSize {
		return math.NaN(), fmt.Errorf("branching: chain size %d outside 1..%d", y, MaxChainSize)
	}
	fy := float64(y)
	need := fy*d.Mean() + 12*math.Sqrt(fy*variance(d)) + 2*fy + 64
	M := minFFTPoints
	for M < MaxFFTPoints && float64(M/2) < need {
		M *= 2
	}
	r := radius(M, dampingDigits)
	vals := make([]complex128, M)
	for m := range vals {
		vals[m] = cmplxIntPow(d.PGFComplex(cmplx.Rect(r, 2*math.Pi*float64(m)/float64(M))), y)
	}
	coef := fourier.NewCmplxFFT(M).Coefficients(nil, vals)
	c := real(coef[y-1]) / float64(M) * math.Pow(r, -float64(y-1))
	return math.Max(0, c/fy), nil
}
