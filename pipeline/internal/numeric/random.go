package numeric

import (
	"math"
	"math/rand/v2"
)

// This file holds the exact random variate generators the bootstraps and the simulation
// studies need, and the derivation of independent per-replicate streams. Every generator
// draws from a *rand.Rand passed in; none keeps state.

// StreamRand returns the generator of replicate b of a run seeded with seed. Each replicate
// gets its own PCG state, so a replicate's draws do not depend on which worker runs it or in
// what order. The two PCG seed words are SplitMix64 outputs of (seed, b) so that adjacent
// replicates do not start at adjacent LCG states (SplitMix64: Steele, Lea & Flood 2014,
// "Fast splittable pseudorandom number generators", OOPSLA 2014; its constants are recalled
// from memory. Seeding independent streams this way is common practice.)
func StreamRand(seed uint64, b int) *rand.Rand {
	return rand.New(rand.NewPCG(StreamSeeds(seed, b)))
}

// StreamSeeds derives the PCG seed words of replicate b (see StreamRand).
func StreamSeeds(seed uint64, b int) (uint64, uint64) {
	s := seed ^ (uint64(b)+1)*0x9e3779b97f4a7c15
	return splitMix64(&s), splitMix64(&s)
}

func splitMix64(s *uint64) uint64 {
	*s += 0x9e3779b97f4a7c15
	z := *s
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// Binomial draws one Binomial(n, p) variate exactly.
//
// For n·min(p, 1−p) < 30 it inverts the CDF by sequential search from 0, using the
// recurrence f(x+1) = f(x)·((n+1)/x' − 1)·p/q (Kachitvichyanukul & Schmeiser 1988,
// "Binomial random variate generation", CACM 31:216, algorithm BINV). Otherwise it uses
// their BTPE acceptance–rejection algorithm (same paper): a triangular centre, two
// parallelogram regions and exponential tails majorise the PMF; a candidate y is accepted by
// the exact test log V ≤ log(f(y)/f(M)). Where BTPE evaluates that ratio with a Stirling
// series, this implementation evaluates it exactly: by the PMF recurrence for |y−M| ≤ 20 and
// with math.Lgamma otherwise, so the sampler is exact up to floating-point rounding.
// The constants of the majorising function are those of the paper as recalled from memory;
// TestBinomialChiSquare checks the output against the binomial PMF.
func Binomial(rng *rand.Rand, n int, p float64) int {
	if n <= 0 || p <= 0 {
		return 0
	}
	if p >= 1 {
		return n
	}
	r := p
	if p > 0.5 {
		r = 1 - p
	}
	var y int
	if float64(n)*r < 30 {
		y = binomialInversion(rng, n, r)
	} else {
		y = binomialBTPE(rng, n, r)
	}
	if p > 0.5 {
		return n - y
	}
	return y
}

// binomialInversion is BINV for r ≤ 0.5 and n·r < 30, where q^n ≥ e^{−42} cannot underflow.
func binomialInversion(rng *rand.Rand, n int, r float64) int {
	q := 1 - r
	s := r / q
	a := float64(n+1) * s
	f0 := math.Exp(float64(n) * math.Log1p(-r))
	for {
		u := rng.Float64()
		f := f0
		x := 0
		for u > f {
			u -= f
			x++
			if x > n {
				break // rounding left mass unassigned: draw again
			}
			f *= a/float64(x) - s
		}
		if x <= n {
			return x
		}
	}
}

// binomialBTPE is BTPE for r ≤ 0.5 and n·r ≥ 30.
func binomialBTPE(rng *rand.Rand, n int, r float64) int {
	q := 1 - r
	fn := float64(n)
	nrq := fn * r * q
	fm := fn*r + r
	m := math.Floor(fm)
	p1 := math.Floor(2.195*math.Sqrt(nrq)-4.6*q) + 0.5
	xm := m + 0.5
	xl := xm - p1
	xr := xm + p1
	c := 0.134 + 20.5/(15.3+m)
	a := (fm - xl) / (fm - xl*r)
	laml := a * (1 + a/2)
	a = (xr - fm) / (xr * q)
	lamr := a * (1 + a/2)
	p2 := p1 * (1 + 2*c)
	p3 := p2 + c/laml
	p4 := p3 + c/lamr
	s := r / q
	aa := s * (fn + 1)
	logRatioMode := func(y float64) float64 {
		// log f(y) − log f(m) for the Binomial(n, r) PMF.
		l1, _ := math.Lgamma(m + 1)
		l2, _ := math.Lgamma(fn - m + 1)
		l3, _ := math.Lgamma(y + 1)
		l4, _ := math.Lgamma(fn - y + 1)
		return l1 + l2 - l3 - l4 + (y-m)*math.Log(s)
	}
	for {
		u := rng.Float64() * p4
		v := rng.Float64()
		var y float64
		switch {
		case u <= p1:
			// Triangular region: accept at once.
			return int(math.Floor(xm - p1*v + u))
		case u <= p2:
			x := xl + (u-p1)/c
			v = v*c + 1 - math.Abs(m-x+0.5)/p1
			if v > 1 {
				continue
			}
			y = math.Floor(x)
		case u <= p3:
			y = math.Floor(xl + math.Log(v)/laml)
			if y < 0 {
				continue
			}
			v *= (u - p2) * laml
		default:
			y = math.Floor(xr - math.Log(v)/lamr)
			if y > fn {
				continue
			}
			v *= (u - p3) * lamr
		}
		if v <= 0 {
			continue
		}
		k := math.Abs(y - m)
		if k <= 20 {
			// f(y)/f(m) by the PMF recurrence, exact up to rounding.
			f := 1.0
			if m < y {
				for i := m + 1; i <= y; i++ {
					f *= aa/i - s
				}
			} else if m > y {
				for i := y + 1; i <= m; i++ {
					f /= aa/i - s
				}
			}
			if v <= f {
				return int(y)
			}
			continue
		}
		if math.Log(v) <= logRatioMode(y) {
			return int(y)
		}
	}
}

// Multinomial draws counts ~ Multinomial(n, probabilities ∝ weights) as sequential
// conditional binomials: out[i] ~ Binomial(n − Σ_{j<i} out[j], w_i / Σ_{j≥i} w_j), which is
// exact (the chain rule of the multinomial law; e.g. Devroye 1986, Non-Uniform Random Variate
// Generation, XI.1.5). cond[i] must hold w_i / Σ_{j≥i} w_j (see ConditionalShares).
func Multinomial(rng *rand.Rand, n int, cond []float64, out []int) {
	left := n
	last := len(cond) - 1
	for i := range cond {
		if i == last || left == 0 {
			out[i] = left
			for j := i + 1; j < len(out); j++ {
				out[j] = 0
			}
			return
		}
		x := Binomial(rng, left, cond[i])
		out[i] = x
		left -= x
	}
}

// ConditionalShares returns cond[i] = w_i / Σ_{j≥i} w_j for integer weights, computed with
// exact integer tail sums.
func ConditionalShares(w []int) []float64 {
	cond := make([]float64, len(w))
	tail := 0
	for i := len(w) - 1; i >= 0; i-- {
		tail += w[i]
		if tail > 0 {
			cond[i] = float64(w[i]) / float64(tail)
		}
	}
	return cond
}

// Gamma draws Gamma(shape a, scale 1) by Marsaglia & Tsang (2000), "A simple method
// for generating gamma variables", ACM TOMS 26:363, with their boost
// Gamma(a) = Gamma(a+1)·U^{1/a} for a < 1 (same paper, §6), done in log space.
func Gamma(rng *rand.Rand, a float64) float64 {
	if a < 1 {
		g := Gamma(rng, a+1)
		return math.Exp(math.Log(g) + math.Log(rng.Float64())/a)
	}
	d := a - 1.0/3
	c := 1 / math.Sqrt(9*d)
	for {
		x := rng.NormFloat64()
		v := 1 + c*x
		if v <= 0 {
			continue
		}
		v = v * v * v
		u := rng.Float64()
		if u < 1-0.0331*x*x*x*x {
			return d * v
		}
		if math.Log(u) < 0.5*x*x+d*(1-v+math.Log(v)) {
			return d * v
		}
	}
}

// Poisson draws Poisson(mu) exactly. For mu < 16 it inverts the CDF by sequential
// search; above, it uses the exact reduction of Knuth, TAOCP vol. 2 (3rd ed.), §3.4.1 F(b):
// with m = ⌊7μ/8⌋ and G ~ Gamma(m), X = Binomial(m−1, μ/G) if G > μ, else m + Poisson(μ − G).
func Poisson(rng *rand.Rand, mu float64) int {
	add := 0
	for mu >= 16 {
		m := int(7 * mu / 8)
		g := Gamma(rng, float64(m))
		if g > mu {
			return add + Binomial(rng, m-1, mu/g)
		}
		add += m
		mu -= g
	}
	if mu <= 0 {
		return add
	}
	for {
		u := rng.Float64()
		f := math.Exp(-mu)
		x := 0
		for u > f && x < 1000 {
			u -= f
			x++
			f *= mu / float64(x)
		}
		if x < 1000 {
			return add + x
		}
	}
}
