package branching

import (
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

// OutlookMaxPMFLength caps every PMF list in an OutlookResult; the mass beyond goes into
// the list's truncated_mass (so the JSON stays small).
const OutlookMaxPMFLength = 10_000

// OutlookResult is the branching-process outlook of one offspring model.
type OutlookResult struct {
	Distribution             offspring.Distribution
	ExtinctionProbability    float64
	MajorOutbreakProbability float64
	// ShareTarget is the share of transmission the two shares below refer to.
	ShareTarget float64
	// ShareByNu and ShareByOffspring are nil where the model gives none.
	ShareByNu        *float64
	ShareByOffspring *float64
	SSEThreshold     int
	// Generations and ChainSize have their PMF lists cut at OutlookMaxPMFLength, the rest
	// counted in their truncated mass.
	Generations []GenerationDistribution
	ChainSize   *ChainSizeDistribution
}

// Outlook assembles the branching-process outlook of one offspring model: extinction and
// major-outbreak probabilities (ExtinctionProbability, MajorOutbreakProbability), the
// shares of cases causing `share` of transmission (ShareByNu, ShareByOffspring; share 0
// means DefaultShareTarget), the superspreading threshold, the count distributions of the
// next `generations` generations from `active` cases (GenerationSizes) and the chain-size
// distribution from one root (ChainSizes). PMF lists are cut at OutlookMaxPMFLength, the
// rest reported as truncated mass. Every float in the result is finite.
func Outlook(d offspring.Distribution, active, generations int, share float64) (*OutlookResult, error) {
	if err := checkDistribution(d); err != nil {
		return nil, err
	}
	if share == 0 {
		share = DefaultShareTarget
	}
	if err := checkTarget(share); err != nil {
		return nil, err
	}
	res := &OutlookResult{Distribution: d, ShareTarget: share}
	var err error
	if res.MajorOutbreakProbability, err = MajorOutbreakProbability(d); err != nil {
		return nil, err
	}
	res.ExtinctionProbability = 1 - res.MajorOutbreakProbability
	if res.ShareByNu, err = ShareByNu(d, share); err != nil {
		return nil, err
	}
	if res.ShareByOffspring, err = ShareByOffspring(d, share); err != nil {
		return nil, err
	}
	if res.SSEThreshold, err = SuperspreadingThreshold(d); err != nil {
		return nil, err
	}
	gens, err := GenerationSizes(d, active, generations)
	if err != nil {
		return nil, err
	}
	for _, g := range gens {
		g.PMF, g.TruncatedMass = capPMF(g.PMF, g.TruncatedMass, 1)
		res.Generations = append(res.Generations, g)
	}
	if res.ChainSize, err = ChainSizes(d, OutlookMaxPMFLength); err != nil {
		return nil, err
	}
	if err := checkFinite(res); err != nil {
		return nil, err
	}
	return res, nil
}

// capPMF keeps at most OutlookMaxPMFLength entries, moving the rest into the truncated mass.
func capPMF(p []float64, trunc, total float64) ([]float64, float64) {
	if len(p) <= OutlookMaxPMFLength {
		return p, trunc
	}
	var s numeric.Sum
	for _, v := range p[:OutlookMaxPMFLength] {
		s.Add(v)
	}
	return p[:OutlookMaxPMFLength], math.Min(total, math.Max(0, total-s.Value()))
}

// checkFinite guards the callers that print the result as JSON, which has no NaN or ±Inf.
func checkFinite(r *OutlookResult) error {
	bad := func(what string, v float64) error {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("branching: outlook %s is %v", what, v)
		}
		return nil
	}
	for _, c := range []struct {
		what string
		v    float64
	}{
		{"R", r.Distribution.Mean()}, {"extinction probability", r.ExtinctionProbability},
		{"major-outbreak probability", r.MajorOutbreakProbability},
		{"chain-size truncated mass", r.ChainSize.TruncatedMass},
	} {
		if err := bad(c.what, c.v); err != nil {
			return err
		}
	}
	for _, g := range r.Generations {
		if err := bad(fmt.Sprintf("generation %d P(X=0)", g.N), g.PZero); err != nil {
			return err
		}
		if err := bad(fmt.Sprintf("generation %d truncated mass", g.N), g.TruncatedMass); err != nil {
			return err
		}
		for _, v := range g.PMF {
			if err := bad(fmt.Sprintf("generation %d PMF", g.N), v); err != nil {
				return err
			}
		}
	}
	for _, v := range r.ChainSize.PMF {
		if err := bad("chain-size PMF", v); err != nil {
			return err
		}
	}
	return nil
}
