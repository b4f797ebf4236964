package offspring_test

import (
	"fmt"
	"math"
	"os"
	"sort"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/pipeline/forecast"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/offspring"
	"github.com/caseweave/caseweave/pipeline/simulate"
	"github.com/caseweave/caseweave/pipeline/timing"
)

// truncScenario is one scenario of the offspring truncation study.
type truncScenario struct {
	R, K      float64
	Until     int // analysis date, days after the first index onset
	Outbreaks int
}

// truncEstimates are one method's R̂ over the outbreaks, with the cases it used.
type truncEstimates struct {
	r    []float64
	k    []float64
	used int
}

func (e truncEstimates) meanSD() (m, sd float64) {
	for _, v := range e.r {
		m += v
	}
	m /= float64(len(e.r))
	for _, v := range e.r {
		sd += (v - m) * (v - m)
	}
	return m, math.Sqrt(sd / float64(len(e.r)-1))
}

func (e truncEstimates) medianK() float64 {
	k := append([]float64(nil), e.k...)
	sort.Float64s(k)
	return k[len(k)/2]
}

// runTruncation simulates outbreaks (negative binomial offspring, gamma serial interval with
// mean 5 and sd 2.5 days, 20 index cases over the first 10 days) observed up to the
// analysis date, so an infectee with onset after it is not in the list, and fits the
// negative binomial three ways: truncation-aware (every case, observed share F(d) from
// forecast.Elapsed with the true serial interval and no reporting delay, F < the floor left
// out), censored (only cases with onset at least ⌈p95⌉ of the serial interval before the
// analysis date, as fully observed) and naive (every case as fully observed).
func runTruncation(t *testing.T, sc truncScenario, seed uint64) (aware, censored, naive, full truncEstimates) {
	t.Helper()
	si, err := timing.FixedGamma(5, 2.5)
	if err != nil {
		t.Fatal(err)
	}
	elapsed, err := forecast.Elapsed(si, nil)
	if err != nil {
		t.Fatal(err)
	}
	w := int(math.Ceil(si.Quantile(0.95)))
	until := linelist.Day(sc.Until)
	horizon := until + 25 // P(serial interval > 25 days) ≈ 3e-6 for this gamma
	for o := 0; o < sc.Outbreaks; o++ {
		recs, err := simulate.Run(simulate.Scenario{R: sc.R, K: sc.K, SerialMean: 5, SerialSD: 2.5,
			IndexCases: 20, IndexSpreadDays: 10, Until: &horizon, Seed: seed + uint64(o)})
		if err != nil {
			t.Fatal(err)
		}
		kids, all := map[string]int{}, map[string]int{}
		for _, r := range recs {
			if r.TrueInfector != "" {
				all[r.TrueInfector]++
				if r.Onset <= until {
					kids[r.TrueInfector]++
				}
			}
		}
		var xs, oracle []int
		var fs []float64
		var old []int
		for _, r := range recs {
			if r.Onset > until {
				continue
			}
			lag := int(until - r.Onset)
			oracle = append(oracle, all[r.ID])
			xs = append(xs, kids[r.ID])
			fs = append(fs, math.Max(elapsed(lag), 1e-300))
			if lag >= w {
				old = append(old, kids[r.ID])
			}
		}
		e, _, err := offspring.NewExposed(xs, fs, offspring.DefaultShareFloor)
		if err != nil {
			t.Fatal(err)
		}
		add := func(dst *truncEstimates, fit offspring.ModelFit, err error, n int) {
			if err != nil {
				t.Fatalf("outbreak %d: %v", o, err)
			}
			dst.r = append(dst.r, fit.Params[offspring.ParamR])
			dst.k = append(dst.k, fit.Params[offspring.ParamK])
			dst.used += n
		}
		fa, err := offspring.FitExposed(e, offspring.NegBinFamily{})
		add(&aware, fa, err, e.N())
		fc, err := offspring.FitNegBin(offspring.Tabulate(old))
		add(&censored, fc, err, len(old))
		fn, err := offspring.FitNegBin(offspring.Tabulate(xs))
		add(&naive, fn, err, len(xs))
		ff, err := offspring.FitNegBin(offspring.Tabulate(oracle))
		add(&full, ff, err, len(oracle))
	}
	return aware, censored, naive, full
}

// diffMeanSE is the mean of a.r − b.r over the outbreaks and its standard error.
func diffMeanSE(a, b truncEstimates) (m, se float64) {
	d := truncEstimates{r: make([]float64, len(a.r))}
	for i := range a.r {
		d.r[i] = a.r[i] - b.r[i]
	}
	m, sd := d.meanSD()
	return m, sd / math.Sqrt(float64(len(d.r)))
}

// TestOffspringTruncationStudy: outbreaks are simulated past the analysis date, so each
// case in the list at the analysis date has a full offspring count (its infectees with
// onset up to 25 days later) beside the observed one. The full-count estimate is the
// benchmark: every estimate from a single growing or fading outbreak shares the downward
// small-sample bias of the ratio of offspring to cases [Harris 1948, as recalled from
// memory], which no treatment of truncation removes. The truncation-aware R̂ must agree with
// the full-count R̂ on average over outbreaks (paired difference within 3 standard errors,
// plus 2% of R), the naive R̂ fall below it (paired difference more than 3 standard errors
// below 0) and the censored R̂ be less precise than the truncation-aware one (larger spread
// of its difference from the full-count R̂). CI runs 40 outbreaks of one growing and one
// declining scenario; CASEWEAVE_LONG=1 runs 200 of four for VALIDATION.md.
func TestOffspringTruncationStudy(t *testing.T) {
	scenarios := []truncScenario{{R: 1.5, K: 0.5, Until: 35, Outbreaks: 40}, {R: 0.9, K: 0.3, Until: 30, Outbreaks: 40}}
	if os.Getenv("CASEWEAVE_LONG") == "1" {
		scenarios = []truncScenario{{R: 1.5, K: 0.5, Until: 35, Outbreaks: 200}, {R: 0.9, K: 0.3, Until: 30, Outbreaks: 200},
			{R: 2, K: 0.2, Until: 30, Outbreaks: 200}, {R: 1.2, K: 2, Until: 40, Outbreaks: 200}}
	}
	var tab strings.Builder
	tab.WriteString("| R | k | analysis day | outbreaks | method | cases used (mean) | mean R̂ | mean R̂ − full-count R̂ (SE) | SD of the difference | median k̂ |\n")
	tab.WriteString("|---|---|---|---|---|---|---|---|---|---|\n")
	for i, sc := range scenarios {
		aware, censored, naive, full := runTruncation(t, sc, uint64(7000+1000*i))
		sdDiff := func(e truncEstimates) float64 { _, se := diffMeanSE(e, full); return se * math.Sqrt(float64(len(e.r))) }
		for _, m := range []struct {
			name string
			e    truncEstimates
		}{{"full count (benchmark)", full}, {"truncation-aware", aware}, {"censored", censored}, {"naive", naive}} {
			mean, _ := m.e.meanSD()
			d, se := diffMeanSE(m.e, full)
			fmt.Fprintf(&tab, "| %g | %g | %d | %d | %s | %.0f | %.3f | %+.3f (%.3f) | %.3f | %.3g |\n", sc.R, sc.K, sc.Until, sc.Outbreaks,
				m.name, float64(m.e.used)/float64(sc.Outbreaks), mean, d, se, sdDiff(m.e), m.e.medianK())
		}
		if d, se := diffMeanSE(aware, full); math.Abs(d) > 3*se+0.02*sc.R {
			t.Errorf("R=%g k=%g: truncation-aware R̂ differs from the full-count R̂ by %.3f on average (SE %.3f)", sc.R, sc.K, d, se)
		}
		if d, se := diffMeanSE(naive, full); !(d < -3*se) {
			t.Errorf("R=%g k=%g: naive R̂ is not biased low against the full-count R̂ (difference %.3f, SE %.3f)", sc.R, sc.K, d, se)
		}
		if sdc, sda := sdDiff(censored), sdDiff(aware); !(sdc > sda) {
			t.Errorf("R=%g k=%g: censored spread %.3f not above truncation-aware %.3f", sc.R, sc.K, sdc, sda)
		}
	}
	t.Log("offspring truncation study:\n" + tab.String())
}
