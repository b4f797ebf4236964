package analysis

import (
	"bytes"
	"math"
	"reflect"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/simulate"
)

// backtestList simulates a growing outbreak with random reporting delays, as exported on
// asOf (the cases reported by then).
func backtestList(t *testing.T, asOf linelist.Day) *linelist.LineList {
	t.Helper()
	sc := simulate.Scenario{R: 1.2, K: 0.5, SerialMean: 5, SerialSD: 2.5, IndexCases: 10, IndexSpreadDays: 10,
		Start: asOf - 70, Until: &asOf, Jurisdictions: []string{"a"}, Settings: []string{"household"},
		AgeGroups: []string{"18-39"}, Seed: 4}
	recs, err := simulate.Run(sc)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := simulate.WriteCSV(&buf, recs, simulate.WriteOptions{ReportDelayMean: 3, DelaySeed: 9, ReportedBy: &asOf}); err != nil {
		t.Fatal(err)
	}
	ll, err := linelist.Read(&buf, linelist.Options{AsOf: asOf})
	if err != nil {
		t.Fatal(err)
	}
	return ll
}

// TestRunBacktest: the replayed dates are Every days apart, each scored week's outcome is
// the count of the full list's cases with onset in it, only weeks settled by the analysis
// date are scored, the scores by horizon are those of the forecasts listed, and the result
// is the same on a second run.
func TestRunBacktest(t *testing.T) {
	asOf := linelist.Day(20800)
	ll := backtestList(t, asOf)
	opts := Options{AsOf: asOf, Seed: 2, ForecastWeeks: 2}
	bo := BacktestOptions{Every: 7, Replicates: 40}
	bt, err := RunBacktest(ll, opts, bo)
	if err != nil {
		t.Fatal(err)
	}
	if len(bt.Dates) < 3 || len(bt.Forecasts) == 0 {
		t.Fatalf("%d dates, %d forecasts: nothing to check", len(bt.Dates), len(bt.Forecasts))
	}
	for i := 1; i < len(bt.Dates); i++ {
		if (bt.Dates[i]-bt.Dates[i-1])%7 != 0 {
			t.Errorf("dates %v and %v are not a multiple of 7 days apart", bt.Dates[i-1], bt.Dates[i])
		}
	}
	if bt.SettleDays < 3 {
		t.Errorf("settle %d days for a delay of mean 3", bt.SettleDays)
	}
	for _, f := range bt.Forecasts {
		n := 0
		for i := range ll.Cases {
			if o := ll.Cases[i].Onset; o >= f.WeekStart && o < f.WeekStart+7 {
				n++
			}
		}
		if f.Observed != n {
			t.Errorf("week %v: observed %d, the list has %d", f.WeekStart, f.Observed, n)
		}
		if f.WeekStart+6 > bt.LastScored || f.WeekStart != f.AsOf.ISOWeekStart()+linelist.Day(7*f.Horizon) {
			t.Errorf("forecast %+v: week not settled or not its horizon's", f)
		}
	}
	for _, h := range bt.Horizons {
		var in90, n float64
		below := 0
		for _, f := range bt.Forecasts {
			if f.Horizon == h.Horizon && f.Median != nil && f.P90[0] != nil {
				n++
				if *f.Median < f.Observed {
					below++
				}
				if float64(f.Observed) >= bound(f.P90[0]) && float64(f.Observed) <= bound(f.P90[1]) {
					in90++
				}
			}
		}
		if int(n) != h.Scored || below != h.Below || (n > 0 && math.Abs(*h.Cover90-in90/n) > 1e-12) {
			t.Errorf("horizon %d: %+v, recount %v of %v", h.Horizon, h, in90, n)
		}
	}
	if bt.Verdict == "" {
		t.Error("no verdict")
	}
	again, err := RunBacktest(ll, opts, bo)
	if err != nil || !reflect.DeepEqual(bt, again) {
		t.Error("a second run differs")
	}
	if _, err := RunBacktest(ll, opts, BacktestOptions{Every: -1}); err == nil {
		t.Error("every −1 accepted")
	}
}
