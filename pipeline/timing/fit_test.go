package timing

import (
	"errors"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"
	"math/rand/v2"
	"sort"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// TestFitMatchesSciPy compares each family's interval-censored MLE with the one SciPy 1.10.1
// finds (scipy.optimize on the log-likelihood built from scipy.stats CDFs; see
// testdata/timing/make_reference.py): log-likelihoods to 1e-6 absolute, parameters to
// 1e-4 relative, and the best model by AIC.
func TestFitMatchesSciPy(t *testing.T) {
	ref := loadReference(t)
	keys := make([]string, 0, len(ref.SerialInterval))
	for k := range ref.SerialInterval {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, key := range keys {
		fx := ref.SerialInterval[key]
		t.Run(key, func(t *testing.T) {
			fit, err := FitSerialInterval(fx.Intervals, FitOptions{})
			if err != nil {
				t.Fatal(err)
			}
			neg := 0
			for _, d := range fx.Intervals {
				if d < 0 {
					neg++
				}
			}
			if fit.Negative != neg || fit.N != len(fx.Intervals)-neg {
				t.Errorf("n = %d, negative = %d; want %d, %d", fit.N, fit.Negative, len(fx.Intervals)-neg, neg)
			}
			bestAIC, bestName := math.Inf(1), ""
			for _, want := range fx.Models {
				var got *ModelFit
				for i := range fit.Models {
					if fit.Models[i].Name == want.Name {
						got = &fit.Models[i]
					}
				}
				if got == nil {
					t.Fatalf("model %s missing", want.Name)
				}
				if d := math.Abs(got.LogLik - want.LogLik); d > 1e-6 {
					t.Errorf("%s loglik = %.10f, SciPy %.10f (diff %.2g)", want.Name, got.LogLik, want.LogLik, d)
				}
				if d := math.Abs(got.AIC - want.AIC); d > 2e-6 {
					t.Errorf("%s AIC = %.10f, SciPy %.10f", want.Name, got.AIC, want.AIC)
				}
				for p, wv := range want.Params {
					if e := relErr(got.Params[p], wv); e > 1e-4 {
						t.Errorf("%s %s = %.8g, SciPy %.8g (rel %.2g)", want.Name, p, got.Params[p], wv, e)
					}
				}
				if e := relErr(got.Mean, want.Mean); e > 1e-4 {
					t.Errorf("%s mean = %.8g, SciPy %.8g", want.Name, got.Mean, want.Mean)
				}
				if e := relErr(got.SD, want.SD); e > 1e-4 {
					t.Errorf("%s sd = %.8g, SciPy %.8g", want.Name, got.SD, want.SD)
				}
				if want.AIC < bestAIC {
					bestAIC, bestName = want.AIC, want.Name
				}
			}
			if fit.BestModel != bestName {
				t.Errorf("best model %s, SciPy's AIC picks %s", fit.BestModel, bestName)
			}
		})
	}
}

// TestDistributionsMatchSciPy checks CDF, DailyMass, Quantile, mean and sd at SciPy's
// fitted parameters against scipy.stats gamma / lognorm / weibull_min (SciPy 1.10.1).
func TestDistributionsMatchSciPy(t *testing.T) {
	ref := loadReference(t)
	for key, fx := range ref.SerialInterval {
		for _, m := range fx.Models {
			si := distFromParams(m.Name, m.Params)
			if si == nil {
				t.Fatalf("%s: unknown model %s", key, m.Name)
			}
			for ts, want := range m.CDFAt {
				x, _ := strconv.ParseFloat(ts, 64)
				if got := si.CDF(x); math.Abs(got-want) > 1e-12 {
					t.Errorf("%s %s CDF(%v) = %.15g, SciPy %.15g", key, m.Name, x, got, want)
				}
			}
			for d, want := range m.DailyMass {
				if got := si.DailyMass(d); math.Abs(got-want) > 1e-12+1e-9*want {
					t.Errorf("%s %s DailyMass(%d) = %.15g, SciPy %.15g", key, m.Name, d, got, want)
				}
			}
			for _, q := range []struct {
				key string
				p   float64
			}{{"p50", 0.5}, {"p95", 0.95}, {"p99", 0.99}} {
				if got := si.Quantile(q.p); relErr(got, m.Quantiles[q.key]) > 1e-9 {
					t.Errorf("%s %s Quantile(%v) = %.12g, SciPy %.12g", key, m.Name, q.p, got, m.Quantiles[q.key])
				}
			}
			if relErr(si.Mean(), m.Mean) > 1e-12 || relErr(si.SD(), m.SD) > 1e-10 {
				t.Errorf("%s %s mean, sd = %v, %v; SciPy %v, %v", key, m.Name, si.Mean(), si.SD(), m.Mean, m.SD)
			}
		}
	}
}

// TestFixedGamma: shape = (mean/sd)², rate = mean/sd² (gamma moments, closed form), and
// quantiles / daily masses against scipy.stats.gamma(6.25, scale=0.8) (SciPy 1.10.1).
func TestFixedGamma(t *testing.T) {
	ref := loadReference(t).FixedGamma
	g, err := FixedGamma(ref.Mean, ref.SD)
	if err != nil {
		t.Fatal(err)
	}
	if relErr(g.Shape, ref.Shape) > 1e-15 || relErr(g.Rate, ref.Rate) > 1e-15 {
		t.Errorf("FixedGamma(5, 2) = %+v, want shape %v rate %v", g, ref.Shape, ref.Rate)
	}
	if relErr(g.Mean(), ref.Mean) > 1e-15 || relErr(g.SD(), ref.SD) > 1e-15 {
		t.Errorf("mean, sd = %v, %v", g.Mean(), g.SD())
	}
	for k, p := range map[string]float64{"p50": 0.5, "p95": 0.95, "p99": 0.99} {
		if got := g.Quantile(p); relErr(got, ref.Quantiles[k]) > 1e-10 {
			t.Errorf("Quantile(%v) = %.12g, SciPy %.12g", p, got, ref.Quantiles[k])
		}
	}
	sum := 0.0
	for d, want := range ref.DailyMass {
		got := g.DailyMass(d)
		sum += got
		if math.Abs(got-want) > 1e-13 {
			t.Errorf("DailyMass(%d) = %.15g, SciPy %.15g", d, got, want)
		}
	}
	// The daily masses telescope: Σ_{d=0}^{20} = F(20.5) (definition of DailyMass).
	if math.Abs(sum-g.CDF(20.5)) > 1e-14 {
		t.Errorf("Σ DailyMass(0..20) = %v, F(20.5) = %v", sum, g.CDF(20.5))
	}
	if g.DailyMass(-1) != 0 {
		t.Errorf("DailyMass(-1) = %v, want 0", g.DailyMass(-1))
	}
	for _, bad := range [][2]float64{{0, 1}, {5, 0}, {-1, 2}, {math.NaN(), 1}, {math.Inf(1), 1}, {5, math.Inf(1)}} {
		if _, err := FixedGamma(bad[0], bad[1]); err == nil {
			t.Errorf("FixedGamma(%v, %v): no error", bad[0], bad[1])
		}
	}
}

// TestInvalidInputs: no panics, errors the caller can show, NaN from invalid distributions.
func TestInvalidInputs(t *testing.T) {
	for _, tc := range []struct {
		name      string
		intervals []int
	}{
		{"nil", nil},
		{"one", []int{4}},
		{"negatives only", []int{-1, -3, -2}},
		{"one usable", []int{-1, 5}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			fit, err := FitSerialInterval(tc.intervals, FitOptions{})
			var tf *TooFewIntervalsError
			if !errors.As(err, &tf) {
				t.Fatalf("err = %v, want *TooFewIntervalsError", err)
			}
			if tf.Usable+tf.Negative != len(tc.intervals) || fit.N != tf.Usable {
				t.Errorf("error counts %+v, fit %+v for %v", tf, fit, tc.intervals)
			}
			if err.Error() == "" {
				t.Error("empty error message")
			}
		})
	}
	if _, err := FitSerialInterval([]int{1, 2, 3}, FitOptions{Bootstrap: 10}); err == nil {
		t.Error("bootstrap without *rand.Rand: no error")
	}
	if _, err := FitSerialInterval([]int{1, 2, 3}, FitOptions{Level: 1.5}); err == nil {
		t.Error("level 1.5: no error")
	}
	if _, err := FitFamily("pareto", []int{1, 2, 3}); err == nil {
		t.Error("unknown family: no error")
	}
	for _, si := range []SerialInterval{GammaInterval{-1, 1}, LogNormalInterval{math.NaN(), 1}, WeibullInterval{1, 0}} {
		if si.Validate() == nil {
			t.Errorf("%#v validates", si)
		}
		for _, v := range []float64{si.CDF(1), si.Survival(1), si.Quantile(0.5), si.DailyMass(2), si.Mean(), si.SD()} {
			if !math.IsNaN(v) {
				t.Errorf("%#v returned %v, want NaN", si, v)
			}
		}
	}
	g := GammaInterval{2, 1}
	if g.Quantile(0) != 0 || !math.IsInf(g.Quantile(1), 1) || !math.IsNaN(g.Quantile(math.NaN())) || g.Quantile(-3) != 0 {
		t.Error("quantile edges wrong")
	}
}

// TestDegenerateIntervals: intervals all in one daily bin (or two adjacent ones) have no
// finite MLE, since a distribution shrinking to a point reaches the saturated likelihood
// (closed form: one bin gives log L → 0); the fit must stay finite and say Degenerate.
// Two non-adjacent bins cannot be saturated and must not be flagged.
func TestDegenerateIntervals(t *testing.T) {
	for _, tc := range []struct {
		x    []int
		want bool
	}{{[]int{4, 4, 4}, true}, {[]int{3, 4, 3, 4}, true}, {[]int{2, 2, 5, 5}, false}, {[]int{1, 2, 3}, false}} {
		fit, err := FitSerialInterval(tc.x, FitOptions{})
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range fit.Models {
			if m.Degenerate != tc.want {
				t.Errorf("%v %s: Degenerate = %v, want %v", tc.x, m.Name, m.Degenerate, tc.want)
			}
		}
	}
	fit, err := FitSerialInterval([]int{4, 4, 4, 4, 4, 4}, FitOptions{Bootstrap: 20, Rand: rand.New(rand.NewPCG(1, 2))})
	if err != nil {
		t.Fatal(err)
	}
	if fit.MeanCI == nil || !numeric.IsFinite(fit.MeanCI[0]) || !numeric.IsFinite(fit.MeanCI[1]) {
		t.Errorf("degenerate bootstrap CI %v", fit.MeanCI)
	}
	for _, m := range fit.Models {
		if !numeric.IsFinite(m.Mean) || !numeric.IsFinite(m.SD) || !numeric.IsFinite(m.LogLik) || !numeric.IsFinite(m.AIC) {
			t.Errorf("%s not finite: %+v", m.Name, m)
		}
		// Saturated bound: the log-likelihood cannot exceed 0 (all mass in one bin).
		if m.LogLik > 1e-12 || m.LogLik < -1e-3 {
			t.Errorf("%s loglik %v, want just below 0", m.Name, m.LogLik)
		}
		if math.Abs(m.Mean-4) > 0.5 {
			t.Errorf("%s mean %v, want within the bin [3.5, 4.5]", m.Name, m.Mean)
		}
	}
}

// TestBootstrapWorkersIndependent: the same seed gives the same intervals for 1 and 3
// workers (replicate seeds are drawn before any work starts), and the intervals bracket
// the point estimate.
func TestBootstrapWorkersIndependent(t *testing.T) {
	ref := loadReference(t)
	x := ref.SerialInterval["weibull_80"].Intervals
	run := func(workers int) SerialFit {
		fit, err := FitSerialInterval(x, FitOptions{Bootstrap: 60, Workers: workers, Rand: rand.New(rand.NewPCG(7, 11))})
		if err != nil {
			t.Fatal(err)
		}
		return fit
	}
	a, b := run(1), run(3)
	if a.MeanCI[0] != b.MeanCI[0] || a.MeanCI[1] != b.MeanCI[1] || a.P95CI[0] != b.P95CI[0] || a.P95CI[1] != b.P95CI[1] {
		t.Errorf("1 worker %v %v, 3 workers %v %v", a.MeanCI, a.P95CI, b.MeanCI, b.P95CI)
	}
	var best ModelFit
	for _, m := range a.Models {
		if m.Name == a.BestModel {
			best = m
		}
	}
	if !(a.MeanCI[0] < best.Mean && best.Mean < a.MeanCI[1]) {
		t.Errorf("mean CI %v does not bracket the estimate %v", a.MeanCI, best.Mean)
	}
	if !(a.P95CI[0] < a.Quantiles.P95 && a.Quantiles.P95 < a.P95CI[1]) {
		t.Errorf("p95 CI %v does not bracket the estimate %v", a.P95CI, a.Quantiles.P95)
	}
	if a.Bootstrap.Failed != 0 || a.Bootstrap.Replicates != 60 {
		t.Errorf("bootstrap info %+v", a.Bootstrap)
	}
}

// A million links fit as well as a thousand: the log-likelihood of a large sample lies far
// below any fixed penalty value, and only an interval the distribution cannot produce makes
// a fit impossible. 600,000 intervals from a gamma of mean 5 and SD 2.5 (simulated here with
// gonum's distuv, rounded to whole days) give a gamma fit of mean 5 to within sampling error.
func TestSerialFitOnHundredsOfThousandsOfLinks(t *testing.T) {
	g := distuv.Gamma{Alpha: 4, Beta: 0.8, Src: rand.New(rand.NewPCG(3, 4))}
	intervals := make([]int, 600_000)
	for i := range intervals {
		intervals[i] = int(math.Round(g.Rand()))
	}
	fit, err := FitSerialInterval(intervals, FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	var gamma *ModelFit
	for i := range fit.Models {
		if fit.Models[i].Name == NameGamma {
			gamma = &fit.Models[i]
		}
	}
	if gamma == nil {
		t.Fatalf("no gamma fit among %+v", fit.Models)
	}
	if math.Abs(gamma.Mean-5) > 0.02 || gamma.LogLik > -1e6 {
		t.Errorf("gamma mean %v (want 5 ± 0.02), log-likelihood %v (a sample this size lies below −10^6)", gamma.Mean, gamma.LogLik)
	}
}
