package timing

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mathext"
)

// Model names as they appear in the JSON summary.
const (
	NameGamma     = "gamma"
	NameLogNormal = "lognormal"
	NameWeibull   = "weibull"
)

// SerialInterval is a continuous distribution on (0, ∞) for the time in days from a
// infector's symptom onset to its infectee's. Onsets are whole days, so what the data
// see of it is DailyMass: the probability that a continuous interval rounds to d days,
// F(d + 0.5) − F(max(d − 0.5, 0)). Every method returns NaN, never
// panics, when the parameters are invalid (see Validate).
type SerialInterval interface {
	// Name is NameGamma, NameLogNormal or NameWeibull.
	Name() string
	// Params are the parameters by name, as in the JSON summary.
	Params() map[string]float64
	Mean() float64
	SD() float64
	// CDF is F(t) = P(T ≤ t); 0 for t ≤ 0.
	CDF(t float64) float64
	// Survival is 1 − F(t), computed directly so far tails keep their precision.
	Survival(t float64) float64
	// Quantile is F⁻¹(p); 0 for p ≤ 0, +Inf for p ≥ 1, NaN for NaN.
	Quantile(p float64) float64
	// DailyMass is F(d + 0.5) − F(max(d − 0.5, 0)) for d ≥ 0 and 0 for d < 0.
	DailyMass(d int) float64
	// Validate reports invalid parameters.
	Validate() error
}

// GammaInterval is the gamma serial interval with shape a and rate b:
// f(t) = b^a t^{a−1} e^{−bt}/Γ(a), F(t) = P(a, bt) with P the regularized lower incomplete
// gamma function; mean a/b, sd √a/b [Johnson, Kotz & Balakrishnan 1994, ch. 17].
type GammaInterval struct{ Shape, Rate float64 }

// FixedGamma returns the gamma serial interval with the given mean and standard deviation
// (shape = (mean/sd)², rate = mean/sd²; moments as in GammaInterval), for analysts who
// must use an agreed distribution instead of a fitted one.
func FixedGamma(mean, sd float64) (GammaInterval, error) {
	if !(mean > 0) || !(sd > 0) || math.IsInf(mean, 0) || math.IsInf(sd, 0) {
		return GammaInterval{}, fmt.Errorf("fixed serial interval: mean %v and sd %v must be positive and finite", mean, sd)
	}
	g := GammaInterval{Shape: (mean / sd) * (mean / sd), Rate: mean / (sd * sd)}
	if err := g.Validate(); err != nil {
		return GammaInterval{}, fmt.Errorf("fixed serial interval: mean %v, sd %v: %w", mean, sd, err)
	}
	return g, nil
}

func (g GammaInterval) Name() string { return NameGamma }
func (g GammaInterval) Params() map[string]float64 {
	return map[string]float64{"shape": g.Shape, "rate": g.Rate}
}
func (g GammaInterval) Validate() error {
	return positiveFinite("gamma", "shape", g.Shape, "rate", g.Rate)
}
func (g GammaInterval) Mean() float64 {
	if g.Validate() != nil {
		return math.NaN()
	}
	return g.Shape / g.Rate
}
func (g GammaInterval) SD() float64 {
	if g.Validate() != nil {
		return math.NaN()
	}
	return math.Sqrt(g.Shape) / g.Rate
}
func (g GammaInterval) CDF(t float64) float64 {
	switch {
	case g.Validate() != nil || math.IsNaN(t):
		return math.NaN()
	case t <= 0:
		return 0
	case math.IsInf(t, 1):
		return 1
	}
	return mathext.GammaIncReg(g.Shape, g.Rate*t)
}
func (g GammaInterval) Survival(t float64) float64 {
	switch {
	case g.Validate() != nil || math.IsNaN(t):
		return math.NaN()
	case t <= 0:
		return 1
	case math.IsInf(t, 1):
		return 0
	}
	return mathext.GammaIncRegComp(g.Shape, g.Rate*t)
}
func (g GammaInterval) Quantile(p float64) float64 {
	if g.Validate() != nil {
		return math.NaN()
	}
	if q, ok := quantileEdge(p); ok {
		return q
	}
	q := mathext.GammaIncRegInv(g.Shape, p) / g.Rate
	if math.IsNaN(q) || math.IsInf(q, 0) || q < 0 {
		return bisectQuantile(g, p)
	}
	return q
}
func (g GammaInterval) DailyMass(d int) float64 { return dailyMass(g, d) }

// LogNormalInterval is the lognormal serial interval: log T ~ Normal(MeanLog, SDLog²),
// F(t) = Φ((log t − μ)/σ); mean e^{μ+σ²/2}, variance (e^{σ²} − 1)e^{2μ+σ²}
// [Johnson, Kotz & Balakrishnan 1994, ch. 14].
type LogNormalInterval struct{ MeanLog, SDLog float64 }

func (l LogNormalInterval) Name() string { return NameLogNormal }
func (l LogNormalInterval) Params() map[string]float64 {
	return map[string]float64{"meanlog": l.MeanLog, "sdlog": l.SDLog}
}
func (l LogNormalInterval) Validate() error {
	if math.IsNaN(l.MeanLog) || math.IsInf(l.MeanLog, 0) {
		return fmt.Errorf("lognormal: meanlog %v must be finite", l.MeanLog)
	}
	return positiveFinite("lognormal", "sdlog", l.SDLog, "sdlog", l.SDLog)
}
func (l LogNormalInterval) Mean() float64 {
	if l.Validate() != nil {
		return math.NaN()
	}
	return math.Exp(l.MeanLog + l.SDLog*l.SDLog/2)
}
func (l LogNormalInterval) SD() float64 {
	if l.Validate() != nil {
		return math.NaN()
	}
	s2 := l.SDLog * l.SDLog
	return math.Sqrt(math.Expm1(s2)) * math.Exp(l.MeanLog+s2/2)
}
func (l LogNormalInterval) z(t float64) float64 {
	return (math.Log(t) - l.MeanLog) / (l.SDLog * math.Sqrt2)
}
func (l LogNormalInterval) CDF(t float64) float64 {
	switch {
	case l.Validate() != nil || math.IsNaN(t):
		return math.NaN()
	case t <= 0:
		return 0
	case math.IsInf(t, 1):
		return 1
	}
	return 0.5 * math.Erfc(-l.z(t))
}
func (l LogNormalInterval) Survival(t float64) float64 {
	switch {
	case l.Validate() != nil || math.IsNaN(t):
		return math.NaN()
	case t <= 0:
		return 1
	case math.IsInf(t, 1):
		return 0
	}
	return 0.5 * math.Erfc(l.z(t))
}
func (l LogNormalInterval) Quantile(p float64) float64 {
	if l.Validate() != nil {
		return math.NaN()
	}
	if q, ok := quantileEdge(p); ok {
		return q
	}
	// Φ⁻¹(p) = −√2·erfc⁻¹(2p), accurate in both tails.
	return math.Exp(l.MeanLog - l.SDLog*math.Sqrt2*math.Erfcinv(2*p))
}
func (l LogNormalInterval) DailyMass(d int) float64 { return dailyMass(l, d) }

// WeibullInterval is the Weibull serial interval with shape k and scale λ:
// F(t) = 1 − exp(−(t/λ)^k); mean λΓ(1 + 1/k), variance λ²[Γ(1 + 2/k) − Γ(1 + 1/k)²]
// [Johnson, Kotz & Balakrishnan 1994, ch. 21].
type WeibullInterval struct{ Shape, Scale float64 }

func (w WeibullInterval) Name() string { return NameWeibull }
func (w WeibullInterval) Params() map[string]float64 {
	return map[string]float64{"shape": w.Shape, "scale": w.Scale}
}
func (w WeibullInterval) Validate() error {
	return positiveFinite("weibull", "shape", w.Shape, "scale", w.Scale)
}
func (w WeibullInterval) Mean() float64 {
	if w.Validate() != nil {
		return math.NaN()
	}
	lg1, _ := math.Lgamma(1 + 1/w.Shape)
	return w.Scale * math.Exp(lg1)
}
func (w WeibullInterval) SD() float64 {
	if w.Validate() != nil {
		return math.NaN()
	}
	lg1, _ := math.Lgamma(1 + 1/w.Shape)
	lg2, _ := math.Lgamma(1 + 2/w.Shape)
	// Γ(1+2/k) − Γ(1+1/k)² = Γ(1+2/k)·(1 − e^{2lg1 − lg2}), kept positive by −expm1.
	v := math.Exp(lg2) * -math.Expm1(2*lg1-lg2)
	return w.Scale * math.Sqrt(math.Max(v, 0))
}
func (w WeibullInterval) CDF(t float64) float64 {
	switch {
	case w.Validate() != nil || math.IsNaN(t):
		return math.NaN()
	case t <= 0:
		return 0
	case math.IsInf(t, 1):
		return 1
	}
	return -math.Expm1(-math.Pow(t/w.Scale, w.Shape))
}
func (w WeibullInterval) Survival(t float64) float64 {
	switch {
	case w.Validate() != nil || math.IsNaN(t):
		return math.NaN()
	case t <= 0:
		return 1
	case math.IsInf(t, 1):
		return 0
	}
	return math.Exp(-math.Pow(t/w.Scale, w.Shape))
}
func (w WeibullInterval) Quantile(p float64) float64 {
	if w.Validate() != nil {
		return math.NaN()
	}
	if q, ok := quantileEdge(p); ok {
		return q
	}
	return w.Scale * math.Pow(-math.Log1p(-p), 1/w.Shape)
}
func (w WeibullInterval) DailyMass(d int) float64 { return dailyMass(w, d) }

// intervalMass is F(hi) − F(lo) for 0 ≤ lo < hi. Above the median it is computed as
// S(lo) − S(hi), so a far right tail is not lost to cancellation against 1.
func intervalMass(si SerialInterval, lo, hi float64) float64 {
	if lo > 0 && si.CDF(lo) > 0.5 {
		return si.Survival(lo) - si.Survival(hi)
	}
	return si.CDF(hi) - si.CDF(lo)
}

func dailyMass(si SerialInterval, d int) float64 {
	if d < 0 {
		return 0
	}
	if si.Validate() != nil {
		return math.NaN()
	}
	m := intervalMass(si, math.Max(float64(d)-0.5, 0), float64(d)+0.5)
	return math.Max(m, 0)
}

func quantileEdge(p float64) (float64, bool) {
	switch {
	case math.IsNaN(p):
		return math.NaN(), true
	case p <= 0:
		return 0, true
	case p >= 1:
		return math.Inf(1), true
	}
	return 0, false
}

// bisectQuantile is the fallback when a closed-form inverse fails to converge.
func bisectQuantile(si SerialInterval, p float64) float64 {
	lo, hi := 0.0, 1.0
	for si.CDF(hi) < p {
		lo, hi = hi, hi*2
		if math.IsInf(hi, 1) {
			return math.Inf(1)
		}
	}
	for i := 0; i < 200 && hi-lo > 1e-12*hi; i++ {
		mid := (lo + hi) / 2
		if si.CDF(mid) < p {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

func positiveFinite(model, n1 string, v1 float64, n2 string, v2 float64) error {
	if !(v1 > 0) || math.IsInf(v1, 1) {
		return fmt.Errorf("%s: %s %v must be positive and finite", model, n1, v1)
	}
	if !(v2 > 0) || math.IsInf(v2, 1) {
		return fmt.Errorf("%s: %s %v must be positive and finite", model, n2, v2)
	}
	return nil
}
