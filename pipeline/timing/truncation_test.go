package timing

import (
	"math"
	"math/rand/v2"
	"os"
	"testing"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/simulate"
)

// growingLinks simulates a growing outbreak (negative binomial offspring with mean R, gamma
// serial interval of mean 5 and sd 2.5 days) observed up to the analysis date start + days,
// and returns each link's interval and its truncation bound (the analysis date minus the
// infector's onset), as the analysis passes them.
func growingLinks(t *testing.T, R float64, index, days int, seed uint64) (intervals, bounds []int) {
	t.Helper()
	start, _ := linelist.ParseISODay("2026-01-05")
	until := start + linelist.Day(days)
	recs, err := simulate.Run(simulate.Scenario{
		R: R, K: 1, SerialMean: 5, SerialSD: 2.5, IndexCases: index, Start: start,
		IndexSpreadDays: 5, Until: &until, Seed: seed,
	})
	if err != nil {
		t.Fatal(err)
	}
	onset := make(map[string]linelist.Day, len(recs))
	for _, r := range recs {
		onset[r.ID] = r.Onset
	}
	for _, r := range recs {
		if r.InfectorID == "" {
			continue
		}
		j := onset[r.InfectorID]
		intervals = append(intervals, int(r.Onset-j))
		bounds = append(bounds, int(until-j))
	}
	return intervals, bounds
}

// gammaMean is the mean of the gamma model of a fit (the family the simulation draws from).
func gammaMean(t *testing.T, f SerialFit) float64 {
	t.Helper()
	for _, m := range f.Models {
		if m.Name == NameGamma {
			return m.Mean
		}
	}
	t.Fatal("no gamma fit")
	return math.NaN()
}

// TestTruncatedFitUnbiased: in a growing outbreak cut at the analysis date the plain fit's
// mean is short of the true 5 days, because the long intervals of recent infectors are not
// yet observed; conditioning each link on its bound (Kalbfleisch & Lawless 1989) recovers it.
// The CI version fits one outbreak of several thousand links; the bootstrap standard error of
// the corrected mean gives the band. CASEWEAVE_LONG=1 runs the study in VALIDATION.md.
func TestTruncatedFitUnbiased(t *testing.T) {
	iv, bd := growingLinks(t, 1.6, 20, 70, 1)
	naive, err := FitSerialInterval(iv, FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	fixed, err := FitSerialInterval(iv, FitOptions{Truncation: bd, Bootstrap: 200, Rand: rand.New(rand.NewPCG(2, 3))})
	if err != nil {
		t.Fatal(err)
	}
	mn, mt := gammaMean(t, naive), gammaMean(t, fixed)
	se := (fixed.MeanCI[1] - fixed.MeanCI[0]) / (2 * 1.96)
	t.Logf("%d links: naive gamma mean %.3f, truncation-aware %.3f (bootstrap SE %.3f, 95%% [%.3f, %.3f])",
		len(iv), mn, mt, se, fixed.MeanCI[0], fixed.MeanCI[1])
	if math.Abs(mt-5) > 3*se {
		t.Errorf("truncation-aware mean %.3f is more than 3 SE (%.3f) from the true 5", mt, se)
	}
	if !(5-mn > 5*se) {
		t.Errorf("the plain fit's mean %.3f should be biased short of 5 by more than 5 SE (%.3f)", mn, se)
	}
	if !(fixed.MeanCI[0] <= 5 && 5 <= fixed.MeanCI[1]) {
		t.Errorf("the bootstrap interval [%.3f, %.3f] misses the true mean 5", fixed.MeanCI[0], fixed.MeanCI[1])
	}
}

// TestTruncationOnlyAddsTheConditioning: with every bound far beyond every interval the
// conditioning term is log 1 = 0, so the fit is the plain one; a bound below its interval
// counts as the interval; and the bounds must match the intervals one to one.
func TestTruncationOnlyAddsTheConditioning(t *testing.T) {
	iv := []int{2, 3, 3, 4, 5, 5, 6, 7, 9, 4, 3, 5}
	far := make([]int, len(iv))
	for i := range far {
		far[i] = 10000
	}
	a, err := FitSerialInterval(iv, FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := FitSerialInterval(iv, FitOptions{Truncation: far})
	if err != nil {
		t.Fatal(err)
	}
	for i := range a.Models {
		if math.Abs(a.Models[i].Mean-b.Models[i].Mean) > 1e-9 || math.Abs(a.Models[i].LogLik-b.Models[i].LogLik) > 1e-9 {
			t.Errorf("%s: plain %+v, far bounds %+v", a.Models[i].Name, a.Models[i], b.Models[i])
		}
	}
	// A bound below its interval (the infectee's onset after the analysis date) counts as
	// the interval itself: the link was observed, so the conditioning cannot exclude it.
	at, below := make([]int, len(iv)), make([]int, len(iv))
	for i, d := range iv {
		at[i], below[i] = d, d-3
	}
	c, err := FitSerialInterval(iv, FitOptions{Truncation: at})
	if err != nil {
		t.Fatal(err)
	}
	d, err := FitSerialInterval(iv, FitOptions{Truncation: below})
	if err != nil {
		t.Fatal(err)
	}
	for i := range c.Models {
		if c.Models[i].Mean != d.Models[i].Mean || c.Models[i].LogLik != d.Models[i].LogLik {
			t.Errorf("%s: bounds at the intervals %+v, below them %+v", c.Models[i].Name, c.Models[i], d.Models[i])
		}
	}
	if _, err := FitSerialInterval(iv, FitOptions{Truncation: far[:3]}); err == nil {
		t.Error("3 bounds for 12 intervals were accepted")
	}
}

// TestTruncationStudy (CASEWEAVE_LONG=1) is the study of VALIDATION.md: many simulated
// growing outbreaks, each cut at its analysis date, fitted plainly and truncation-aware.
func TestTruncationStudy(t *testing.T) {
	if os.Getenv("CASEWEAVE_LONG") != "1" {
		t.Skip("set CASEWEAVE_LONG=1 for the truncation study")
	}
	for _, sc := range []struct {
		R           float64
		index, days int
	}{{1.6, 20, 70}, {1.3, 20, 90}, {2, 5, 50}, {1.5, 3, 40}, {0.8, 40, 120}} {
		const sims = 200
		var sn, st, sn2, st2, links float64
		skipped := 0
		for s := 0; s < sims; s++ {
			iv, bd := growingLinks(t, sc.R, sc.index, sc.days, uint64(100+s))
			if len(iv) < 20 { // an outbreak that died out early: too few links to fit
				skipped++
				continue
			}
			naive, err := FitSerialInterval(iv, FitOptions{})
			if err != nil {
				t.Fatal(err)
			}
			fixed, err := FitSerialInterval(iv, FitOptions{Truncation: bd})
			if err != nil {
				t.Fatal(err)
			}
			mn, mt := gammaMean(t, naive), gammaMean(t, fixed)
			sn, st, sn2, st2, links = sn+mn, st+mt, sn2+mn*mn, st2+mt*mt, links+float64(len(iv))
		}
		n := float64(sims - skipped)
		en, et := sn/n, st/n
		sdn, sdt := math.Sqrt((sn2-n*en*en)/(n-1)), math.Sqrt((st2-n*et*et)/(n-1))
		t.Logf("| %.1f | %d | %d | %.0f | %.0f | %.3f ± %.3f | %.3f | %.3f ± %.3f | %.3f |", sc.R, sc.index, sc.days, n, links/n,
			en, sdn/math.Sqrt(n), sdn, et, sdt/math.Sqrt(n), sdt)
		if math.Abs(et-5) > 3*sdt/math.Sqrt(n) {
			t.Errorf("R=%v: truncation-aware mean %.3f is more than 3 SE from 5", sc.R, et)
		}
	}
}

// TestTruncatedFitWithReportDelay: when a case is listed only once reported, a link is
// observed only if its infectee's onset and report both fall by the analysis date, so the
// conditioning on the bound alone under-corrects; conditioning on onset plus report delay
// (FitOptions.Delay, the true negative-binomial delay of mean 6 days here) recovers the
// true mean of 5 days within 3 bootstrap SE.
func TestTruncatedFitWithReportDelay(t *testing.T) {
	start, _ := linelist.ParseISODay("2026-01-05")
	until := start + 70
	recs, err := simulate.Run(simulate.Scenario{
		R: 1.6, K: 1, SerialMean: 5, SerialSD: 2.5, IndexCases: 20, Start: start,
		IndexSpreadDays: 5, Until: &until, Seed: 1,
	})
	if err != nil {
		t.Fatal(err)
	}
	// Negative-binomial delays of size 2 and mean 6: P(D = d) = (d + 1)·p²·(1 − p)^d, p = 2/8.
	const size, mean = 2.0, 6.0
	p := size / (size + mean)
	var pmf []float64
	for d, tail := 0, 1.0; tail > 1e-13; d++ {
		v := float64(d+1) * p * p * math.Pow(1-p, float64(d))
		pmf = append(pmf, v)
		tail -= v
	}
	total := 0.0
	for _, v := range pmf {
		total += v
	}
	for i := range pmf {
		pmf[i] /= total
	}
	listed := make(map[string]linelist.Day, len(recs))
	for i, r := range recs {
		rng := numeric.StreamRand(7, i)
		if r.Onset+linelist.Day(numeric.Poisson(rng, numeric.Gamma(rng, size)*mean/size)) <= until {
			listed[r.ID] = r.Onset
		}
	}
	var iv, bd []int
	for _, r := range recs {
		j, ok := listed[r.InfectorID]
		if _, self := listed[r.ID]; !ok || !self {
			continue
		}
		iv = append(iv, int(r.Onset-j))
		bd = append(bd, int(until-j))
	}
	boundOnly, err := FitSerialInterval(iv, FitOptions{Truncation: bd})
	if err != nil {
		t.Fatal(err)
	}
	both, err := FitSerialInterval(iv, FitOptions{Truncation: bd, Delay: pmf, Bootstrap: 200, Rand: rand.New(rand.NewPCG(2, 3))})
	if err != nil {
		t.Fatal(err)
	}
	mb, md := gammaMean(t, boundOnly), gammaMean(t, both)
	se := (both.MeanCI[1] - both.MeanCI[0]) / (2 * 1.96)
	t.Logf("%d links: bound only %.3f, bound and delay %.3f (bootstrap SE %.3f)", len(iv), mb, md, se)
	if math.Abs(md-5) > 3*se {
		t.Errorf("with the delay the mean %.3f is more than 3 SE (%.3f) from the true 5", md, se)
	}
	if !(5-mb > 3*se) {
		t.Errorf("the bound alone should leave the mean %.3f short of 5 by more than 3 SE (%.3f)", mb, se)
	}
}
