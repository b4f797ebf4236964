package analysis

import (
	"math"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

func fp(v float64) *float64 { return &v }
func ip(v int) *int         { return &v }

func TestChangeBeyondUncertainty(t *testing.T) {
	span := func(lo, hi float64) Span { return Span{Estimate: fp((lo + hi) / 2), Lower: fp(lo), Upper: fp(hi)} }
	for _, c := range []struct {
		name      string
		now, then Span
		want      bool
	}{
		{"overlapping", span(0.8, 1.4), span(1.2, 2.0), false},
		{"apart, down", span(0.5, 0.9), span(1.1, 1.8), true},
		{"apart, up", span(1.9, 2.5), span(1.1, 1.8), true},
		{"touching", span(0.5, 1.1), span(1.1, 1.8), false},
		{"no interval then", span(0.5, 0.9), Span{Estimate: fp(1.5)}, false},
		{"nothing now", Span{}, span(1.1, 1.8), false},
	} {
		if got := ChangeBeyondUncertainty(c.now, c.then); got != c.want {
			t.Errorf("%s: %v, want %v", c.name, got, c.want)
		}
	}
}

// TestWeightedIntervalScore against hand computations of Bracher et al. (2021), eqs. 1–2,
// with K = 2 intervals (50% and 90%): WIS = (½|y − m| + ¼·IS₀.₅ + 0.05·IS₀.₁) / 2.5.
func TestWeightedIntervalScore(t *testing.T) {
	alpha := []float64{0.5, 0.1}
	for _, c := range []struct {
		y, m float64
		want float64
	}{
		// y = m inside both: (0 + ¼·4 + 0.05·11) / 2.5 = 0.62
		{10, 10, 0.62},
		// y = 14 above the 50% interval: (½·4 + ¼·(4 + 4·2) + 0.05·11) / 2.5 = 2.22
		{14, 10, 2.22},
		// y = 2 below both: (½·8 + ¼·(4 + 4·6) + 0.05·(11 + 20·3)) / 2.5 = 5.82
		{2, 10, 5.82},
	} {
		got := WeightedIntervalScore(c.y, c.m, alpha, []float64{8, 5}, []float64{12, 16})
		if math.Abs(got-c.want) > 1e-12 {
			t.Errorf("y = %g: WIS %g, want %g", c.y, got, c.want)
		}
	}
}

// TestCheckForecasts: one archived forecast, one of its weeks passed; coverage and score by
// hand.
func TestCheckForecasts(t *testing.T) {
	d := func(s string) linelist.Day {
		v, err := linelist.ParseISODay(s)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	old := &Summary{AsOf: d("2026-03-13"), Forecast: &Forecast{Weeks: []ForecastWeek{
		{WeekStart: d("2026-03-16"), Median: ip(3), P50: [2]*int{ip(2), ip(4)}, P90: [2]*int{ip(1), ip(6)}},
		{WeekStart: d("2026-03-23"), Median: ip(4), P50: [2]*int{ip(2), ip(6)}, P90: [2]*int{ip(0), ip(10)}},
	}}}
	s := &Summary{AsOf: d("2026-03-24"), EpiCurve: &EpiCurve{
		Weeks: []linelist.Day{d("2026-03-09"), d("2026-03-16"), d("2026-03-23")},
		Total: []*int{ip(7), ip(5), ip(1)},
	}}
	CheckForecasts(s, []*Summary{old})
	fc := s.ForecastCheck
	if fc == nil || len(fc.Weeks) != 1 {
		t.Fatalf("checked weeks %+v, want the one week that has passed", fc)
	}
	w := fc.Weeks[0]
	// y = 5, m = 3, [2, 4], [1, 6]: (½·2 + ¼·(2 + 4·1) + 0.05·5) / 2.5 = 1.1
	if *w.Observed != 5 || w.Within50 || !w.Within90 || math.Abs(*w.WIS-1.1) > 1e-12 {
		t.Errorf("week %+v (WIS %v), want observed 5, outside 50%%, inside 90%%, WIS 1.1", w, *w.WIS)
	}
	if fc.Scored != 1 || fc.Within50 != 0 || fc.Within90 != 1 || math.Abs(*fc.MeanWIS-1.1) > 1e-12 {
		t.Errorf("totals %+v", fc)
	}
	// The released view withholds the week's count when the curve does, and its score.
	s.EpiCurve.Total[1] = ip(2)
	s.Tree.Cases = 10
	r, err := Release(s, Policy{})
	if err != nil {
		t.Fatal(err)
	}
	rw := r.Summary().ForecastCheck.Weeks[0]
	if rw.Observed != nil || rw.WIS != nil || rw.Within90 || r.Summary().ForecastCheck.Scored != 0 {
		t.Errorf("released week %+v, want the withheld count and its score gone", rw)
	}
}

// TestReleaseSinceLast: small counts withheld, the one line of cases kept from giving a
// withheld count away, the identifiers dropped.
func TestReleaseSinceLast(t *testing.T) {
	s := &Summary{SinceLast: &SinceLast{
		NewByOnset: ip(12), NewByReport: ip(3),
		Revisions: Revisions{Late: ip(7), Removed: ip(2), OnsetChanged: ip(0), LinksAdded: ip(5), LinksRemoved: ip(1), LinksMoved: ip(9)},
		IDs:       &RevisionIDs{Removed: []string{"x"}},
	}}
	r, err := Release(s, Policy{SuppressBelow: 5})
	if err != nil {
		t.Fatal(err)
	}
	sl := r.Summary().SinceLast
	if sl.IDs != nil {
		t.Error("identifiers released")
	}
	rv := sl.Revisions
	switch {
	case sl.NewByReport != nil, rv.Removed != nil, rv.LinksRemoved != nil:
		t.Errorf("a count below 5 shown: %+v", sl)
	case rv.Late != nil:
		t.Error("late (7, the smaller of new and late) shown beside the withheld removed count")
	case sl.NewByOnset == nil || *sl.NewByOnset != 12, rv.OnsetChanged == nil || *rv.OnsetChanged != 0,
		rv.LinksAdded == nil || *rv.LinksAdded != 5, rv.LinksMoved == nil || *rv.LinksMoved != 9:
		t.Errorf("a count withheld that needs no withholding: %+v", rv)
	}
	if s.SinceLast.IDs == nil || *s.SinceLast.Revisions.Removed != 2 {
		t.Error("Release changed the full summary")
	}
}
