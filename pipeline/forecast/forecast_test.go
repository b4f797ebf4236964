package forecast

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/caseweave/caseweave/pipeline/internal/numerictest"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/offspring"
	"github.com/caseweave/caseweave/pipeline/simulate"
	"github.com/caseweave/caseweave/pipeline/timing"
)

func gammaSerial(mean, sd float64) timing.GammaInterval {
	shape := (mean / sd) * (mean / sd)
	return timing.GammaInterval{Shape: shape, Rate: shape / mean}
}

// known cuts a simulated outbreak at the analysis date: the cases with onset up to it, each
// with the people among them it has infected; and the truth, the cases by week after it.
func known(recs []simulate.Record, asOf linelist.Day, weeks, delay int) ([]Case, []int) {
	return knownBy(recs, asOf, weeks, func(int) int { return delay })
}

// knownBy is known with record i reported delayOf(i) days after its onset.
func knownBy(recs []simulate.Record, asOf linelist.Day, weeks int, delayOf func(i int) int) ([]Case, []int) {
	idx := map[string]int{}
	var cases []Case
	for i, r := range recs {
		if r.Onset+linelist.Day(delayOf(i)) <= asOf {
			idx[r.ID] = len(cases)
			cases = append(cases, Case{Onset: r.Onset})
		}
	}
	first := asOf.ISOWeekStart() + 7
	truth := make([]int, weeks)
	for _, r := range recs {
		if r.Onset <= asOf {
			if _, listed := idx[r.ID]; listed {
				if i, ok := idx[r.TrueInfector]; ok {
					cases[i].Offspring++
				}
			}
			continue
		}
		if w := int(r.Onset-first) / 7; r.Onset >= first && w < weeks {
			truth[w]++
		}
	}
	return cases, truth
}

// coverage runs the forecast on simulated outbreaks, each cut at its analysis date, with the
// true offspring distribution, and counts how often the 50% and 90% intervals of weeks 1 and
// 2 hold the truth. Outbreaks with fewer than 20 cases in the fortnight before the analysis
// date are skipped: a forecast of zero for an outbreak already over is right trivially.
func coverage(t *testing.T, runs int, r, k float64, delay int) (in50, in90 [2]int, n int) {
	t.Helper()
	start := linelist.Day(20000)
	asOf := start + 45
	until := asOf + 30
	si := gammaSerial(5, 2.5)
	for seed := uint64(1); n < runs && seed < uint64(20*runs); seed++ {
		recs, err := simulate.Run(simulate.Scenario{R: r, K: k, SerialMean: 5, SerialSD: 2.5, IndexCases: 25,
			Start: start, IndexSpreadDays: 20, Until: &until, Jurisdictions: []string{"A"}, Settings: []string{"s"},
			AgeGroups: []string{"a"}, StayProbability: 1, AssortativeAge: 1, Seed: seed, MaxCases: 200_000})
		if err != nil {
			continue // grew past the cap
		}
		cases, truth := known(recs, asOf, 2, delay)
		recent := 0
		for _, c := range cases {
			if c.Onset > asOf-14 {
				recent++
			}
		}
		if recent < 20 {
			continue
		}
		var pmf []float64
		if delay > 0 {
			pmf = make([]float64, delay+1)
			pmf[delay] = 1
		}
		res, err := Forecast(cases, Options{AsOf: asOf, Weeks: 2, Serial: si, Delay: pmf,
			Models: []offspring.Distribution{offspring.NegBin{R: r, K: k}}, PerModel: 300, Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		n++
		for w := range 2 {
			wk := res.Weeks[w]
			inside := func(b [2]*int) bool {
				return b[0] != nil && b[1] != nil && *b[0] <= truth[w] && truth[w] <= *b[1]
			}
			if inside(wk.P50) {
				in50[w]++
			}
			if inside(wk.P90) {
				in90[w]++
			}
		}
	}
	return in50, in90, n
}

// Forecasts from the true model must be calibrated: over simulated outbreaks cut at the
// analysis date, the 90% intervals hold the truth about 90% of the time and the 50% ones
// about half. Counts are discrete and an interval includes both its ends, so coverage lies
// a little above nominal. Pass bands: nominal −3 binomial standard errors (at n runs) to
// nominal + 3 standard errors + 0.05 for the discreteness (common practice for coverage
// checks). CASEWEAVE_LONG=1 runs more outbreaks over a grid of R and k.
func TestForecastCoverage(t *testing.T) {
	numerictest.SkipUnderRace(t)
	type cell struct {
		r, k  float64
		delay int // days from onset to report, the same for every case
	}
	grid := []cell{{1.3, 0.5, 0}, {1.3, 0.5, 3}}
	runs := 100
	if os.Getenv("CASEWEAVE_LONG") == "1" {
		grid = nil
		for _, r := range []float64{0.9, 1.2, 1.6} {
			for _, k := range []float64{0.1, 0.5, 2} {
				grid = append(grid, cell{r, k, 0}, cell{r, k, 3})
			}
		}
		runs = 300
	}
	for _, g := range grid {
		in50, in90, n := coverage(t, runs, g.r, g.k, g.delay)
		if n < runs/2 {
			t.Fatalf("R %v k %v: only %d usable outbreaks", g.r, g.k, n)
		}
		for w := range 2 {
			c50, c90 := float64(in50[w])/float64(n), float64(in90[w])/float64(n)
			t.Logf("R %v k %v delay %d week %d: %d outbreaks, 50%% interval covers %.3f, 90%% covers %.3f", g.r, g.k, g.delay, w+1, n, c50, c90)
			for _, c := range []struct {
				nominal, got float64
			}{{0.5, c50}, {0.9, c90}} {
				se := math.Sqrt(c.nominal * (1 - c.nominal) / float64(n))
				if c.got < c.nominal-3*se || c.got > c.nominal+3*se+0.05 {
					t.Errorf("R %v k %v week %d: %v interval covers %.3f, outside %.3f–%.3f", g.r, g.k, w+1, c.nominal, c.got, c.nominal-3*se, c.nominal+3*se+0.05)
				}
			}
		}
	}
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
