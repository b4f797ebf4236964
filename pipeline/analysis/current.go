package analysis

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"github.com/caseweave/caseweave/pipeline/branching"
	"github.com/caseweave/caseweave/pipeline/forecast"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

// exposures groups the report's cases by offspring so far and days since onset, each with
// the share of its infectees already in the list (forecast.Elapsed: the serial interval, and
// the reporting delay when the list has report dates; branching.Exposure); nil without a
// serial interval.
func (a *run) exposures() []branching.Exposure {
	if a.serial == nil {
		return nil
	}
	elapsed, err := forecast.Elapsed(a.serial, a.delay())
	if err != nil {
		return nil
	}
	type key struct {
		off float64
		lag int64
	}
	groups := map[key]int{}
	for _, i := range a.selected {
		off := float64(a.f.Offspring[i])
		if a.expected != nil {
			off += a.expected[i]
		}
		groups[key{off, int64(a.o.AsOf) - int64(a.cases[i].Onset)}]++
	}
	keys := make([]key, 0, len(groups))
	for k := range groups {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(i, j int) bool {
		if keys[i].lag != keys[j].lag {
			return keys[i].lag < keys[j].lag
		}
		return keys[i].off < keys[j].off
	})
	out := make([]branching.Exposure, 0, len(keys))
	for _, k := range keys {
		f := 1.0 // an onset after the analysis date cannot be (the reader rejects it); a guard
		if k.lag >= 0 {
			f = elapsed(int(min(k.lag, math.MaxInt32)))
		}
		out = append(out, branching.Exposure{Offspring: k.off, Elapsed: f, Count: groups[k]})
	}
	return out
}

// currentChains fills Outlook.CurrentChains: the point estimate from the fit, the intervals
// from the bootstrap replicates, every replicate conditioning the same cases.
func (a *run) currentChains(ol *Outlook) {
	ex := a.exposures()
	if ex == nil {
		ol.CurrentChainsNote = "no serial interval is available to say how far each case is through its infectious period"
		return
	}
	point, err := branching.CurrentChains(a.family.Distribution(a.boot.Estimate), ex)
	if err != nil {
		if errors.Is(err, branching.ErrNoNuPosterior) {
			ol.CurrentChainsNote = fmt.Sprintf("the fitted %s model gives no individual reproduction number to update from what each case has done so far", a.family.Name())
		} else {
			ol.CurrentChainsNote = err.Error()
		}
		return
	}
	stat := func(pick func(*branching.CurrentChainsResult) float64) func(offspring.Params) float64 {
		return func(p offspring.Params) float64 {
			r, err := branching.CurrentChains(a.family.Distribution(p), ex)
			if err != nil {
				return math.NaN()
			}
			return pick(r)
		}
	}
	cc := &CurrentChains{
		DieOut:  a.interval(stat(func(r *branching.CurrentChainsResult) float64 { return r.DieOut }), point.DieOut),
		Pending: a.interval(stat(func(r *branching.CurrentChainsResult) float64 { return r.Pending }), point.Pending),
		Further: a.interval(stat(func(r *branching.CurrentChainsResult) float64 { return r.Further }), point.Further),
	}
	ol.CurrentChains = cc
}
