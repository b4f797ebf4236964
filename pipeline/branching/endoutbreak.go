package branching

import (
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"
	"slices"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

// MaxEndOfOutbreakHorizon caps the number of days EndOfOutbreak evaluates.
const MaxEndOfOutbreakHorizon = 100_000

// EndOfOutbreakResult is the end-of-outbreak probability curve.
type EndOfOutbreakResult struct {
	// Days[i] = from + i; Probability[i] = P(no further cases after Days[i]).
	Days        []int
	Probability []float64
	// Day95 and Day99 are the first days the probability reaches 0.95 and 0.99, nil if it
	// does not within the horizon.
	Day95 *int
	Day99 *int
	// Cases and DistinctDays count the onsets used.
	Cases        int
	DistinctDays int
}

// EndOfOutbreak is the probability that no further cases follow, on days from..from+horizon,
// given cases with onset days onsets, offspring distribution d and serial-interval CDF F
// [Nishiura, Miyamatsu & Mizumoto 2016, Emerg Infect Dis 22:146]:
//
//	P(t) = Π_i G(F(t − t_i)),
//
// each case's offspring not yet seen by day t being a thinned copy of its offspring count.
// It is computed as exp(Σ_d c_d·log G(F(t − d))) over the distinct onset days d with case
// counts c_d, so a million cases neither underflow nor cost more than O(distinct days ×
// horizon). F must return values in [0, 1]; non-finite values are an error.
func EndOfOutbreak(onsets []int, d offspring.Distribution, F func(float64) float64, from, horizon int) (*EndOfOutbreakResult, error) {
	if err := checkDistribution(d); err != nil {
		return nil, err
	}
	if F == nil {
		return nil, fmt.Errorf("branching: the serial-interval CDF is nil")
	}
	if len(onsets) == 0 {
		return nil, fmt.Errorf("branching: no case onsets given")
	}
	if horizon < 0 || horizon > MaxEndOfOutbreakHorizon {
		return nil, fmt.Errorf("branching: horizon %d outside 0..%d days", horizon, MaxEndOfOutbreakHorizon)
	}
	const maxDay = 1 << 40 // keeps day arithmetic far from int overflow
	if from < -maxDay || from > maxDay {
		return nil, fmt.Errorf("branching: start day %d outside ±2^40", from)
	}
	sorted := slices.Clone(onsets)
	slices.Sort(sorted)
	if sorted[0] < -maxDay || sorted[len(sorted)-1] > maxDay {
		return nil, fmt.Errorf("branching: onset days must lie within ±2^40")
	}
	var days, counts []int
	for i, t := range sorted {
		if i == 0 || t != sorted[i-1] {
			days = append(days, t)
			counts = append(counts, 0)
		}
		counts[len(counts)-1]++
	}
	// log G(F(lag)) depends on the lag only; cache it when the lag range is moderate.
	minLag := int64(from) - int64(days[len(days)-1])
	maxLag := int64(from) + int64(horizon) - int64(days[0])
	var cache []float64
	if maxLag-minLag < 1<<22 {
		cache = make([]float64, maxLag-minLag+1)
		for i := range cache {
			v, err := logPGFofCDF(d, F, float64(minLag+int64(i)))
			if err != nil {
				return nil, err
			}
			cache[i] = v
		}
	}
	res := &EndOfOutbreakResult{Cases: len(onsets), DistinctDays: len(days)}
	for h := 0; h <= horizon; h++ {
		t := from + h
		var sum numeric.Sum
		impossible := false // a factor G(F(t − t_i)) is 0, and so is the product
		for i, day := range days {
			lag := int64(t) - int64(day)
			var v float64
			if cache != nil {
				v = cache[lag-minLag]
			} else {
				var err error
				if v, err = logPGFofCDF(d, F, float64(lag)); err != nil {
					return nil, err
				}
			}
			if math.IsInf(v, -1) {
				impossible = true
				break
			}
			sum.Add(float64(counts[i]) * v)
		}
		p := 0.0
		if s := sum.Value(); !impossible && !math.IsInf(s, -1) && !math.IsNaN(s) {
			p = math.Min(1, math.Exp(s))
		}
		res.Days = append(res.Days, t)
		res.Probability = append(res.Probability, p)
		if res.Day95 == nil && p >= 0.95 {
			day := t
			res.Day95 = &day
		}
		if res.Day99 == nil && p >= 0.99 {
			day := t
			res.Day99 = &day
		}
	}
	return res, nil
}

func logPGFofCDF(d offspring.Distribution, F func(float64) float64, lag float64) (float64, error) {
	f := F(lag)
	if math.IsNaN(f) || math.IsInf(f, 0) || f < -1e-12 || f > 1+1e-12 {
		return math.NaN(), fmt.Errorf("branching: serial-interval CDF at %g days is %v, outside [0, 1]", lag, f)
	}
	return logPGF(d, math.Min(1, math.Max(0, f))), nil
}
