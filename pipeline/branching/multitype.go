package branching

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

// Multitype is a multitype Bienaymé–Galton–Watson process [Harris 1963, ch. II]: a case of
// type i has Total[i] offspring in all, and each of them is of type j with probability
// Split[i][j], independently of the others (a multinomial split). Its offspring PGF is
//
//	G_i(s) = F_i(Σ_j Split[i][j]·s_j),  F_i the PGF of Total[i],
//
// and its mean matrix M_ij = R_i·Split[i][j], R_i the mean of Total[i]: the mean number of
// type-j cases one type-i case infects (the next-generation matrix of Diekmann, Heesterbeek
// & Metz 1990, J. Math. Biol. 28:365). With negative-binomial totals, as in the offspring
// fit, G_i(s) = (1 + Σ_j M_ij(1 − s_j)/k_i)^{−k_i}; with one type it is the single-type
// process.
type Multitype struct {
	Total []offspring.Distribution
	Split [][]float64
}

// NewMultitype builds the process with mean matrix m whose row i has the total offspring
// family member total(R_i), R_i = Σ_j m[i][j]; a row of zeros gets no split (its cases
// have no offspring).
func NewMultitype(m [][]float64, total func(R float64, i int) offspring.Distribution) (Multitype, error) {
	n := len(m)
	mt := Multitype{Total: make([]offspring.Distribution, n), Split: make([][]float64, n)}
	for i, row := range m {
		if len(row) != n {
			return Multitype{}, fmt.Errorf("branching: next-generation matrix row %d has %d entries, not %d", i, len(row), n)
		}
		R := 0.0
		for j, v := range row {
			if !(v >= 0) || math.IsInf(v, 0) {
				return Multitype{}, fmt.Errorf("branching: next-generation matrix entry (%d, %d) = %v", i, j, v)
			}
			R += v
		}
		mt.Split[i] = make([]float64, n)
		if R > 0 {
			for j, v := range row {
				mt.Split[i][j] = v / R
			}
		}
		mt.Total[i] = total(R, i)
	}
	return mt, mt.Validate()
}

// Types is the number of types.
func (m Multitype) Types() int { return len(m.Total) }

// Validate checks that there is at least one type, that every total is a proper offspring
// distribution and that every split row sums to 1 (or is all zero where the total's mean
// is 0).
func (m Multitype) Validate() error {
	n := len(m.Total)
	if n == 0 {
		return errors.New("branching: a multitype process needs at least one type")
	}
	if len(m.Split) != n {
		return fmt.Errorf("branching: %d split rows for %d types", len(m.Split), n)
	}
	for i, d := range m.Total {
		if err := checkDistribution(d); err != nil {
			return fmt.Errorf("type %d: %w", i, err)
		}
		if len(m.Split[i]) != n {
			return fmt.Errorf("branching: split row %d has %d entries, not %d", i, len(m.Split[i]), n)
		}
		sum := 0.0
		for _, p := range m.Split[i] {
			if !(p >= 0 && p <= 1) {
				return fmt.Errorf("branching: split row %d holds %v", i, p)
			}
			sum += p
		}
		if math.Abs(sum-1) > 1e-9 && !(sum == 0 && d.Mean() == 0) {
			return fmt.Errorf("branching: split row %d sums to %v, not 1", i, sum)
		}
	}
	return nil
}

// Mean is the mean matrix M_ij = R_i·Split[i][j].
func (m Multitype) Mean() [][]float64 {
	out := make([][]float64, len(m.Total))
	for i, d := range m.Total {
		out[i] = make([]float64, len(m.Total))
		for j, p := range m.Split[i] {
			out[i][j] = d.Mean() * p
		}
	}
	return out
}

// PGF is G(s) = (G_1(s), …, G_n(s)) for s in [0, 1]ⁿ.
func (m Multitype) PGF(s []float64) []float64 {
	out := make([]float64, len(m.Total))
	for i, d := range m.Total {
		out[i] = d.PGF(m.mix(i, s))
	}
	return out
}

// mix is Σ_j Split[i][j]·s_j, 1 for a row without offspring.
func (m Multitype) mix(i int, s []float64) float64 {
	x, w := 0.0, 0.0
	for j, p := range m.Split[i] {
		x += p * s[j]
		w += p
	}
	if w == 0 {
		return 1
	}
	return math.Min(1, x)
}

// SpectralRadius is ρ(M), the largest modulus of an eigenvalue of the next-generation matrix
// M: the basic reproduction number of a structured population [Diekmann, Heesterbeek & Metz
// 1990, J. Math. Biol. 28:365]. For a non-negative M it is itself an eigenvalue (Perron–
// Frobenius). The eigenvalues come from gonum's mat.Eigen (LAPACK's dgeev).
func SpectralRadius(M [][]float64) (float64, error) {
	vals, _, err := eigen(M, false)
	if err != nil {
		return math.NaN(), err
	}
	rho := 0.0
	for _, v := range vals {
		rho = math.Max(rho, cmplx.Abs(v))
	}
	return rho, nil
}

func eigen(M [][]float64, left bool) ([]complex128, *mat.CDense, error) {
	n := len(M)
	if n == 0 {
		return nil, nil, errors.New("branching: empty next-generation matrix")
	}
	a := mat.NewDense(n, n, nil)
	for i, row := range M {
		if len(row) != n {
			return nil, nil, fmt.Errorf("branching: next-generation matrix row %d has %d entries, not %d", i, len(row), n)
		}
		for j, v := range row {
			if !(v >= 0) || math.IsInf(v, 0) {
				return nil, nil, fmt.Errorf("branching: next-generation matrix entry (%d, %d) = %v", i, j, v)
			}
			a.Set(i, j, v)
		}
	}
	var e mat.Eigen
	kind := mat.EigenNone
	if left {
		kind = mat.EigenLeft
	}
	if !e.Factorize(a, kind) {
		return nil, nil, errors.New("branching: the eigen-decomposition of the next-generation matrix did not converge")
	}
	var vecs *mat.CDense
	if left {
		vecs = &mat.CDense{}
		e.LeftVectorsTo(vecs)
	}
	return e.Values(nil), vecs, nil
}

// StableShares is the share of each type among the cases of a late generation of a growing
// process: the left Perron eigenvector v of M (vM = ρv), scaled to sum to 1, since the
// generation vector x_{g+1} = x_g·M turns toward it [Harris 1963, ch. II, Thm 9.2, for a
// positively regular M]. Nil when ρ(M) = 0.
func StableShares(M [][]float64) ([]float64, error) {
	vals, vecs, err := eigen(M, true)
	if err != nil {
		return nil, err
	}
	best := -1
	for i, v := range vals {
		if best < 0 || real(v) > real(vals[best]) || (real(v) == real(vals[best]) && math.Abs(imag(v)) < math.Abs(imag(vals[best]))) {
			best = i
		}
	}
	if real(vals[best]) <= 0 {
		return nil, nil
	}
	out := make([]float64, len(M))
	sum := 0.0
	for i := range out {
		out[i] = math.Abs(real(vecs.At(i, best)))
		sum += out[i]
	}
	if !(sum > 0) {
		return nil, errors.New("branching: the Perron eigenvector of the next-generation matrix is zero")
	}
	for i := range out {
		out[i] /= sum
	}
	return out, nil
}

// GenerationShares is the expected share of each type among the cases of generations
// 1..n from a first generation of start (start[i] cases of type i): x_g = x_{g−1}·M, since
// E[X_g | X_{g−1}] = X_{g−1}·M [Harris 1963, ch. II]. Row g−1 is generation g; it is nil
// when the expected count is 0.
func GenerationShares(M [][]float64, start []float64, n int) ([][]float64, error) {
	if len(start) != len(M) {
		return nil, fmt.Errorf("branching: %d starting counts for %d types", len(start), len(M))
	}
	x := append([]float64(nil), start...)
	out := make([][]float64, 0, n)
	for g := 0; g < n; g++ {
		next := make([]float64, len(M))
		for i, xi := range x {
			for j, v := range M[i] {
				next[j] += xi * v
			}
		}
		x = next
		sum := 0.0
		for _, v := range x {
			sum += v
		}
		if !(sum > 0) || math.IsInf(sum, 0) {
			out = append(out, nil)
			continue
		}
		sh := make([]float64, len(x))
		for j, v := range x {
			sh[j] = v / sum
		}
		out = append(out, sh)
	}
	return out, nil
}

// MultitypeExtinction is q = (q_1, …, q_n), q_i the probability that the line of descent of
// one type-i case dies out: the minimal fixed point of s = G(s) in [0, 1]ⁿ, the limit of
// G applied n times to 0 [Harris 1963, ch. II, Thm 7.1]. When ρ(M) ≤ 1 it is 1 for every
// type (the same theorem, for a positively regular, non-singular process; a type that
// reaches no supercritical type dies out as well).
//
// It is computed as 1 − u, u the largest fixed point of H(u) = 1 − G(1 − u), whose entry i
// is 1 − F_i(1 − Σ_j Split[i][j]·u_j) taken without cancellation where the model can
// (offspring.Complementer), so q keeps its precision near criticality as the single-type
// MajorOutbreakProbability does. u is found by Newton's method on H(u) − u from u = 1 (s =
// 0), whose iterates move monotonically to the fixed point for a monotone convex G such as a
// PGF [Etessami & Yannakakis 2009, J. ACM 56(1):1, for polynomial systems; recalled from
// memory]; the Jacobian F_i′(1 − Σ_l Split[i][l]·u_l)·Split[i][j] takes F_i′ by a central
// difference (one-sided near 1). Each Newton iterate is followed by one step of H itself,
// and the iteration ends when H(u) = u to 1e−15 of the largest u_i.
func (m Multitype) MultitypeExtinction() ([]float64, error) {
	u, err := m.MultitypeMajorOutbreak()
	if err != nil {
		return nil, err
	}
	q := make([]float64, len(u))
	for i, v := range u {
		q[i] = 1 - v
	}
	return q, nil
}

// MultitypeMajorOutbreak is 1 − q per type of index case, computed directly (see
// MultitypeExtinction).
func (m Multitype) MultitypeMajorOutbreak() ([]float64, error) {
	if err := m.Validate(); err != nil {
		return nil, err
	}
	n := m.Types()
	rho, err := SpectralRadius(m.Mean())
	if err != nil {
		return nil, err
	}
	if rho <= 1 {
		return make([]float64, n), nil
	}
	u := make([]float64, n)
	for i := range u {
		u[i] = 1
	}
	J := mat.NewDense(n, n, nil)
	r := mat.NewVecDense(n, nil)
	var step mat.VecDense
	for it := 0; it < 500; it++ {
		h := m.complement(u)
		worst, top := 0.0, 0.0
		for i := range u {
			worst = math.Max(worst, math.Abs(h[i]-u[i]))
			top = math.Max(top, h[i])
		}
		if worst <= 1e-15*top {
			return h, nil
		}
		for i, d := range m.Total {
			x := 1 - m.weighted(i, u)
			const dx = 1e-6
			var deriv float64
			if x+dx <= 1 {
				deriv = (d.PGF(x+dx) - d.PGF(x-dx)) / (2 * dx)
			} else {
				deriv = (d.PGF(x) - d.PGF(x-dx)) / dx
			}
			for j := range u {
				v := -deriv * m.Split[i][j]
				if i == j {
					v++
				}
				J.Set(i, j, v)
			}
			r.SetVec(i, h[i]-u[i])
		}
		next := h
		if err := step.SolveVec(J, r); err == nil {
			cand := make([]float64, n)
			ok := true
			for i := range cand {
				cand[i] = u[i] + step.AtVec(i)
				if math.IsNaN(cand[i]) || cand[i] > u[i]+1e-12 || cand[i] < 0 {
					ok = false // not the monotone descent Newton promises: keep the plain step
				}
			}
			if ok {
				next = m.complement(cand)
			}
		}
		u = next
	}
	return nil, errors.New("branching: the multitype extinction probabilities did not converge in 500 Newton steps")
}

// weighted is Σ_j Split[i][j]·u_j.
func (m Multitype) weighted(i int, u []float64) float64 {
	x := 0.0
	for j, p := range m.Split[i] {
		x += p * u[j]
	}
	return math.Min(1, x)
}

// complement is H(u) = 1 − G(1 − u).
func (m Multitype) complement(u []float64) []float64 {
	out := make([]float64, len(u))
	for i, d := range m.Total {
		out[i] = oneMinusPGFComplement(d, m.weighted(i, u))
	}
	return out
}
