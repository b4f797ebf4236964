package analysis

import (
	"errors"
	"math"
	"slices"

	"github.com/caseweave/caseweave/pipeline/forecast"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

// NoForecast as Options.ForecastWeeks leaves the forecast out.
const NoForecast = -1

const (
	// DefaultForecastWeeks is how many weeks the forecast covers: a month, the horizon
	// stakeholders plan over and beyond which a process fitted to the past says little.
	DefaultForecastWeeks = 4
	// forecastReplicates caps the bootstrap replicates the forecast mixes over, and
	// forecastPerReplicate is the simulations of each: 200 × 10 = 2,000 simulations put the
	// 5% and 95% quantiles within about a percentage point of their level.
	forecastReplicates   = 200
	forecastPerReplicate = 10
	// forecastCaseBudget bounds the cases all simulations together may make: a large
	// growing outbreak is simulated fewer times rather than for hours (a pilot of
	// forecastPilot simulations measures the cases one makes). forecastMinSimulations is the
	// fewest the intervals rest on, whatever the cost.
	forecastCaseBudget     = 2_000_000
	forecastPilot          = 40
	forecastMinSimulations = 200
)

// forecast fills Summary.Forecast from the report's cases (package forecast), one batch of
// simulations per bootstrap replicate so that the intervals carry the uncertainty in R and k.
func (a *run) forecast() {
	if a.o.ForecastWeeks == NoForecast || a.serial == nil || a.boot == nil || len(a.selected) == 0 {
		return
	}
	cases := make([]forecast.Case, 0, len(a.selected))
	for _, i := range a.selected {
		off := float64(a.f.Offspring[i])
		if a.expected != nil {
			off += a.expected[i]
		}
		cases = append(cases, forecast.Case{Onset: a.cases[i].Onset, Offspring: off})
	}
	var models []offspring.Distribution
	for b := 0; b < len(a.boot.Replicates) && len(models) < forecastReplicates; b++ {
		if p := a.boot.Replicates[b]; !slices.ContainsFunc(p, math.IsNaN) {
			models = append(models, a.family.Distribution(p))
		}
	}
	if len(models) == 0 {
		models = append(models, a.family.Distribution(a.boot.Estimate))
	}
	opt := forecast.Options{
		AsOf: a.o.AsOf, Weeks: a.o.ForecastWeeks, Serial: a.serial, Models: models[:min(forecastPilot, len(models))], PerModel: 1,
		Delay: a.delay(), ImportsPerWeek: a.o.ImportsPerWeek, Seed: a.o.Seed ^ streamForecast, Workers: a.o.Workers,
		MaxCases: forecastCaseBudget / forecastMinSimulations,
	}
	// The pilot's cost per simulation sets how many the budget allows: all replicates ×
	// forecastPerReplicate when it can, fewer replicates (never below the minimum) when not.
	pilot, err := forecast.Forecast(cases, opt)
	var res *forecast.Result
	if err == nil {
		perSim := max(1, pilot.Cases/len(opt.Models))
		sims := min(len(models)*forecastPerReplicate, max(forecastMinSimulations, forecastCaseBudget/perSim))
		opt.PerModel = max(1, sims/len(models))
		opt.Models = models[:min(len(models), max(1, sims/opt.PerModel))]
		opt.MaxCases = max(opt.MaxCases, forecastCaseBudget/(len(opt.Models)*opt.PerModel))
		res, err = forecast.Forecast(cases, opt)
	}
	if err != nil {
		if errors.Is(err, forecast.ErrNoNuPosterior) {
			a.note("No forecast by week: the fitted model gives no individual reproduction number to update from what each case has done so far.")
		} else {
			a.note("No forecast by week: %v.", err)
		}
		return
	}
	fc := &Forecast{Simulations: res.Simulations, Replicates: len(opt.Models), Capped: res.Capped, ImportsPerWeek: a.o.ImportsPerWeek,
		DelayCases: a.delayCases}
	for _, w := range res.Weeks {
		fc.Weeks = append(fc.Weeks, ForecastWeek{WeekStart: w.Start, Mean: numeric.FinitePtr(w.Mean), Median: w.Median, P50: w.P50, P90: w.P90})
	}
	a.s.Forecast = fc
}

// streamForecast separates the forecast's random streams from the bootstrap's.
const streamForecast = 0x666f7265636173 // "forecas"

// minDelayCases is the fewest cases with both an onset and a report date from which the
// reporting delay is taken (common practice: fewer give a distribution too ragged to use).
const minDelayCases = 20

// delay is the distribution of the days from onset to report over the cases that have
// both dates (and a report no earlier than the onset), corrected for right truncation
// (forecast.TruncatedDelay: the longest delays of the latest onsets are not yet in the
// export), or nil when fewer than minDelayCases have both: then every onset up to the
// analysis date is taken to be in the list. Computed once per run.
func (a *run) delay() []float64 {
	if a.delayDone {
		return a.delayPMF
	}
	a.delayDone = true
	a.delayCases = len(a.reported())
	if a.delayCases < minDelayCases {
		return nil
	}
	pmf, err := forecast.TruncatedDelay(a.reported(), a.o.AsOf)
	if err != nil {
		a.note("No reporting delay: %v.", err)
		return nil
	}
	a.delayPMF = pmf
	return a.delayPMF
}

// maxDelayDays leaves out reports more than a year after onset (a date error, not a delay).
const maxDelayDays = 365
