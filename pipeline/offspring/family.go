package offspring

import (
	"math"
	"slices"
)

// Params is a parameter vector of an offspring family, in the order of the family's Params
// names: the point estimate, a bootstrap replicate or a jackknife value. The first entry of
// every family is R, the mean offspring count. An entry is +Inf where the estimate is
// unbounded (the negative binomial's k̂ in the Poisson limit) and NaN where the fit failed.
type Params []float64

// R is the mean offspring count, the first parameter of every family.
func (p Params) R() float64 { return p[0] }

// Positions in the negative binomial's parameter vector (R, k).
const (
	ParamR = 0
	ParamK = 1
)

// Stat returns the statistic "parameter i" of a parameter vector, for Interval.
func Stat(i int) func(Params) float64 { return func(p Params) float64 { return p[i] } }

// StatR and StatK extract R and the negative binomial's k (+Inf in the Poisson limit).
var (
	StatR = Stat(ParamR)
	StatK = Stat(ParamK)
)

// Family is an offspring model family whose parameters are fitted by maximum likelihood.
type Family interface {
	// Name is the model's name in the summary and on the command line.
	Name() string
	// Params names the parameters, R first.
	Params() []string
	// Fit is the maximum-likelihood fit to a frequency table, with standard errors.
	Fit(t FreqTable) (ModelFit, error)
	// FitCounts fits counts[i] cases with values[i] offspring (values ascending, zero counts
	// allowed) and returns the parameter vector alone, as a bootstrap replicate needs it.
	FitCounts(values, counts []int) Params
	// Distribution is the member of the family with parameters p: its limit where an entry
	// is +Inf (the Poisson for the negative binomial with k = ∞).
	Distribution(p Params) Distribution
}

// ModelFit is one maximum-likelihood fit of an offspring family to a frequency table.
type ModelFit struct {
	// Name is the family's name.
	Name string
	// ParamNames and Params are the family's parameters and their estimates.
	ParamNames []string
	Params     Params
	// SE holds asymptotic standard errors from the observed information (the negated
	// Hessian of the log-likelihood at the estimate, inverted), NaN where there is none.
	SE []float64
	// Free is the number of parameters counted in AIC.
	Free int
	// LogLik is the maximised log-likelihood; AIC = 2·Free − 2·LogLik [Akaike 1974, IEEE
	// Trans Autom Control 19:716].
	LogLik, AIC float64
	dist        Distribution
}

// newFit assembles the fit of family f; every parameter is counted in AIC.
func newFit(f Family, d Distribution, ll float64, p Params, se []float64) ModelFit {
	free := len(f.Params())
	return ModelFit{Name: f.Name(), ParamNames: f.Params(), Params: p, SE: se, Free: free,
		LogLik: ll, AIC: 2*float64(free) - 2*ll, dist: d}
}

// Distribution is the fitted offspring distribution (the Poisson for a negative binomial
// fit in the Poisson limit).
func (f ModelFit) Distribution() Distribution { return f.dist }

// R is the fitted mean offspring count.
func (f ModelFit) R() float64 { return f.Params[0] }

// Param returns the estimate and standard error of the named parameter; ok is false when
// the family has no such parameter.
func (f ModelFit) Param(name string) (estimate, se float64, ok bool) {
	i := slices.Index(f.ParamNames, name)
	if i < 0 || i >= len(f.Params) {
		return math.NaN(), math.NaN(), false
	}
	se = math.NaN()
	if i < len(f.SE) {
		se = f.SE[i]
	}
	return f.Params[i], se, true
}

// AtLimit reports whether an estimate is unbounded (for the negative binomial: no finite k̂,
// the Poisson limit).
func (f ModelFit) AtLimit() bool {
	return slices.ContainsFunc(f.Params, func(v float64) bool { return math.IsInf(v, 1) })
}

// PoissonFamily is Poisson(R).
type PoissonFamily struct{}

func (PoissonFamily) Name() string                      { return NamePoisson }
func (PoissonFamily) Params() []string                  { return []string{"R"} }
func (PoissonFamily) Fit(t FreqTable) (ModelFit, error) { return FitPoisson(t) }
func (PoissonFamily) FitCounts(values, counts []int) Params {
	return Params{meanOf(values, counts)}
}
func (PoissonFamily) Distribution(p Params) Distribution { return Poisson{R: p[0]} }

// GeometricFamily is the geometric distribution with mean R.
type GeometricFamily struct{}

func (GeometricFamily) Name() string                      { return NameGeometric }
func (GeometricFamily) Params() []string                  { return []string{"R"} }
func (GeometricFamily) Fit(t FreqTable) (ModelFit, error) { return FitGeometric(t) }
func (GeometricFamily) FitCounts(values, counts []int) Params {
	return Params{meanOf(values, counts)}
}
func (GeometricFamily) Distribution(p Params) Distribution { return Geometric{R: p[0]} }

// NegBinFamily is the negative binomial (R, k) of Lloyd-Smith et al. (2005); it nests the
// other two (k = 1 is the geometric, k → ∞ the Poisson), which is why the bootstrap refits it.
type NegBinFamily struct{}

func (NegBinFamily) Name() string                      { return NameNegativeBinomial }
func (NegBinFamily) Params() []string                  { return []string{"R", "k"} }
func (NegBinFamily) Fit(t FreqTable) (ModelFit, error) { return FitNegBin(t) }

// FitCounts is R̂ = x̄ and k̂ as in FitNegBin: +Inf in the Poisson limit, NaN if the root
// search failed or there are no cases.
func (NegBinFamily) FitCounts(values, counts []int) Params {
	n, sum := 0.0, 0.0
	for i, x := range values {
		n += float64(counts[i])
		sum += float64(counts[i]) * float64(x)
	}
	if n == 0 {
		return Params{math.NaN(), math.NaN()}
	}
	k, finite, err := nbDispersion(values, counts, n, sum)
	switch {
	case err != nil:
		k = math.NaN()
	case !finite:
		k = math.Inf(1)
	}
	return Params{sum / n, k}
}

// Distribution is NB(R, k), or Poisson(R) when k is +Inf (or NaN, a failed fit, whose R is
// still the sample mean).
func (NegBinFamily) Distribution(p Params) Distribution {
	if math.IsInf(p[1], 1) || math.IsNaN(p[1]) {
		return Poisson{R: p[0]}
	}
	return NegBin{R: p[0], K: p[1]}
}

// Families lists the families caseweave fits and compares, fewest parameters first.
func Families() []Family { return []Family{PoissonFamily{}, GeometricFamily{}, NegBinFamily{}} }

// FitAll fits each family (Families when none is given), in order, and names the one with
// the smallest AIC; on a tie the earlier family (fewer parameters) wins.
func FitAll(t FreqTable, families ...Family) (fits []ModelFit, best string, err error) {
	return fitAll(families, func(f Family) (ModelFit, error) { return f.Fit(t) })
}

// fitAll fits every family (Families() when none is given) with fit and names the one of
// least AIC.
func fitAll(families []Family, fit func(Family) (ModelFit, error)) (fits []ModelFit, best string, err error) {
	if len(families) == 0 {
		families = Families()
	}
	for _, f := range families {
		m, err := fit(f)
		if err != nil {
			return nil, "", err
		}
		fits = append(fits, m)
	}
	bi := 0
	for i, m := range fits {
		if m.AIC < fits[bi].AIC {
			bi = i
		}
	}
	return fits, fits[bi].Name, nil
}

// meanOf is Σ c·x / Σ c (NaN for no cases).
func meanOf(values, counts []int) float64 {
	n, sum := 0.0, 0.0
	for i, x := range values {
		n += float64(counts[i])
		sum += float64(counts[i]) * float64(x)
	}
	if n == 0 {
		return math.NaN()
	}
	return sum / n
}

// FamilyNamed returns the family of Families with the given name.
func FamilyNamed(name string) (Family, bool) {
	for _, f := range Families() {
		if f.Name() == name {
			return f, true
		}
	}
	return nil, false
}
