package analysis

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/caseweave/caseweave/pipeline/forecast"
	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// BacktestOptions configure RunBacktest.
type BacktestOptions struct {
	// Every is the days between analysis dates (default 7); From the first (zero: four
	// weeks after the first onset).
	Every int
	From  linelist.Day
	// Replicates is the bootstrap replicates of each replayed analysis (default
	// backtestReplicates): the forecast mixes over at most forecastReplicates of them.
	Replicates int
}

const (
	// backtestReplicates are enough for the forecast, which mixes over at most
	// forecastReplicates replicates, and keep a replay of a season to seconds.
	backtestReplicates = forecastReplicates
	// backtestMinCases is the fewest cases known at a date for a forecast to be replayed.
	backtestMinCases = 10
	// backtestSettle is the share of the reporting delay a week's outcome must have had
	// time for before it is scored: 95%, so that the outcome is close to final.
	backtestSettle = 0.95
)

// Backtest scores the forecasts that would have been made at past analysis dates against
// the cases later observed (RunBacktest).
type Backtest struct {
	Dates []linelist.Day `json:"dates"`
	// SettleDays is how long after a week ends its count is taken as final (the reporting
	// delay's 95th percentile; 0 without one); LastScored the last Sunday scored.
	SettleDays int            `json:"settle_days"`
	LastScored linelist.Day   `json:"last_scored"`
	Forecasts  []BacktestWeek `json:"forecasts"`
	Horizons   []HorizonScore `json:"horizons"`
	Verdict    string         `json:"verdict"`
}

// BacktestWeek is one forecast week of one replayed analysis and what was later observed.
type BacktestWeek struct {
	AsOf      linelist.Day `json:"as_of"`
	Horizon   int          `json:"horizon"` // weeks ahead, 1 = the week after AsOf's
	WeekStart linelist.Day `json:"week_start"`
	Median    *int         `json:"median"`
	P50       [2]*int      `json:"p50"`
	P90       [2]*int      `json:"p90"`
	Observed  int          `json:"observed"`
}

// HorizonScore sums the scored forecasts of one horizon: the share of outcomes inside the
// 50% and 90% intervals, the mean weighted interval score (forecast.WeightedIntervalScore,
// from the median and both intervals) and the mean absolute error of the median.
type HorizonScore struct {
	Horizon int `json:"horizon"`
	Scored  int `json:"scored"`
	// Below counts the scored forecasts whose median fell below the outcome: far from half
	// of Scored, the forecasts are biased.
	Below    int      `json:"below"`
	Cover50  *float64 `json:"cover50"`
	Cover90  *float64 `json:"cover90"`
	WIS      *float64 `json:"wis"`
	AbsError *float64 `json:"abs_error"`
}

// RunBacktest replays the line list as it was known at each analysis date from bo.From to
// opts.AsOf every bo.Every days: a case is known once reported (its report date; a case
// with none, once its onset is past), its infector link kept where the infector is known
// too. Each replay is analysed with opts (AsOf moved to the date) and its forecast by week
// scored against the cases of the whole list with onset in that week, for the weeks that
// ended at least SettleDays before opts.AsOf.
func RunBacktest(ll *linelist.LineList, opts Options, bo BacktestOptions) (*Backtest, error) {
	if bo.Every == 0 {
		bo.Every = 7
	}
	if bo.Every < 1 {
		return nil, fmt.Errorf("%w: the days between backtest dates must be at least 1, got %d", ErrOptions, bo.Every)
	}
	if bo.Replicates == 0 {
		bo.Replicates = backtestReplicates
	}
	if err := opts.defaults(); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrOptions, err)
	}
	inScope := func(c *linelist.Case) bool { return opts.Select == nil || opts.Select(c) }
	first := linelist.Day(math.MaxInt32)
	var reported []forecast.Reported
	for i := range ll.Cases {
		c := &ll.Cases[i]
		if c.Onset > opts.AsOf {
			continue
		}
		first = min(first, c.Onset)
		if c.HasReport && c.Report >= c.Onset && c.Report <= opts.AsOf && int(c.Report-c.Onset) <= maxDelayDays {
			reported = append(reported, forecast.Reported{Onset: c.Onset, Report: c.Report})
		}
	}
	if first == linelist.Day(math.MaxInt32) {
		return nil, errors.New("no case has an onset up to the analysis date")
	}
	bt := &Backtest{}
	if len(reported) >= minDelayCases {
		if pmf, err := forecast.TruncatedDelay(reported, opts.AsOf); err == nil {
			cum := 0.0
			for d, p := range pmf {
				if cum += p; cum >= backtestSettle {
					bt.SettleDays = d
					break
				}
			}
		}
	}
	bt.LastScored = opts.AsOf - linelist.Day(bt.SettleDays)
	from := bo.From
	if from == 0 {
		from = first + 28
	}
	byHorizon := make([][]BacktestWeek, opts.ForecastWeeks)
	for d := from; d.ISOWeekStart()+13 <= bt.LastScored; d += linelist.Day(bo.Every) {
		var known []linelist.Case
		for i := range ll.Cases {
			c := ll.Cases[i]
			if c.Onset > d || (c.HasReport && c.Report > d) {
				continue
			}
			known = append(known, c)
		}
		if len(known) < backtestMinCases {
			continue
		}
		o := opts
		o.AsOf, o.Replicates, o.Progress = d, bo.Replicates, nil
		o.Seed = opts.Seed ^ uint64(d)
		sub := &linelist.LineList{Cases: known, Rows: len(known)}
		s, err := Run("", sub, forest.Build(known), o)
		if err != nil {
			return nil, err
		}
		if s.Forecast == nil {
			continue
		}
		bt.Dates = append(bt.Dates, d)
		for h, w := range s.Forecast.Weeks {
			if w.WeekStart+6 > bt.LastScored {
				break
			}
			obs := 0
			for i := range ll.Cases {
				c := &ll.Cases[i]
				if c.Onset >= w.WeekStart && c.Onset <= w.WeekStart+6 && inScope(c) {
					obs++
				}
			}
			bw := BacktestWeek{AsOf: d, Horizon: h + 1, WeekStart: w.WeekStart, Median: w.Median, P50: w.P50, P90: w.P90, Observed: obs}
			bt.Forecasts = append(bt.Forecasts, bw)
			byHorizon[h] = append(byHorizon[h], bw)
		}
	}
	for h, ws := range byHorizon {
		bt.Horizons = append(bt.Horizons, scoreHorizon(h+1, ws))
	}
	bt.Verdict = backtestVerdict(bt.Horizons)
	return bt, nil
}

// bound is a prediction bound as a number, +Inf for an upper end beyond reach.
func bound(p *int) float64 {
	if p == nil {
		return math.Inf(1)
	}
	return float64(*p)
}

func scoreHorizon(h int, ws []BacktestWeek) HorizonScore {
	hs := HorizonScore{Horizon: h}
	var in50, in90, wis, ae float64
	for _, w := range ws {
		if w.Median == nil || w.P50[0] == nil || w.P90[0] == nil {
			continue // beyond the simulation budget: not scored
		}
		y := float64(w.Observed)
		i50 := forecast.Interval{Alpha: 0.5, Lower: bound(w.P50[0]), Upper: bound(w.P50[1])}
		i90 := forecast.Interval{Alpha: 0.1, Lower: bound(w.P90[0]), Upper: bound(w.P90[1])}
		if y >= i50.Lower && y <= i50.Upper {
			in50++
		}
		if y >= i90.Lower && y <= i90.Upper {
			in90++
		}
		wis += forecast.WeightedIntervalScore(float64(*w.Median), []forecast.Interval{i50, i90}, y)
		ae += math.Abs(y - float64(*w.Median))
		if float64(*w.Median) < y {
			hs.Below++
		}
		hs.Scored++
	}
	if hs.Scored > 0 {
		n := float64(hs.Scored)
		hs.Cover50, hs.Cover90 = numeric.FinitePtr(in50/n), numeric.FinitePtr(in90/n)
		hs.WIS, hs.AbsError = numeric.FinitePtr(wis/n), numeric.FinitePtr(ae/n)
	}
	return hs
}

// backtestVerdict is one sentence on the one-week-ahead intervals: calibrated when each
// coverage is within two binomial standard errors, √(p(1 − p)/n), of its level (common
// practice), too narrow or too wide otherwise.
func backtestVerdict(hs []HorizonScore) string {
	i := slices.IndexFunc(hs, func(h HorizonScore) bool { return h.Scored > 0 })
	if i < 0 {
		return "No forecast could be scored yet: the line list is too short for a week to have been forecast and then observed in full."
	}
	h := hs[i]
	judge := func(got, level float64) string {
		se := math.Sqrt(level * (1 - level) / float64(h.Scored))
		switch {
		case got < level-2*se:
			return "too narrow"
		case got > level+2*se:
			return "wider than needed"
		}
		return "about right"
	}
	return fmt.Sprintf("Over %s %s ahead, the 90%% ranges held the outcome %.0f%% of the time (%s) and the 50%% ranges %.0f%% (%s); the median was off by %.1f cases on average, and below the outcome %d times of %d.",
		countOf(h.Scored, "forecast"), countOf(h.Horizon, "week"), 100**h.Cover90, judge(*h.Cover90, 0.9), 100**h.Cover50, judge(*h.Cover50, 0.5), *h.AbsError, h.Below, h.Scored)
}

// releaseBacktest leaves out the scored forecasts whose outcome is a small count (1 to
// thr − 1); the scores by horizon, which sum over many weeks, stay.
func releaseBacktest(c *Summary, thr int) {
	if c.Backtest == nil {
		return
	}
	kept := c.Backtest.Forecasts[:0]
	for _, f := range c.Backtest.Forecasts {
		if f.Observed == 0 || f.Observed >= thr {
			kept = append(kept, f)
		}
	}
	c.Backtest.Forecasts = kept
}
