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

// OutlookModel names the offspring model.
type OutlookModel struct {
	Name string  `json:"name"`
	R    float64 `json:"R"`
	// K is the dispersion: the negative binomial's k, 1 for the geometric, nil otherwise.
	K *float64 `json:"k"`
}

// OutlookGeneration is one generation's count distribution in the outlook.
type OutlookGeneration struct {
	N             int       `json:"n"`
	PZero         float64   `json:"p_zero"`
	Mean          *float64  `json:"mean"`
	Variance      *float64  `json:"variance"`
	PMF           []float64 `json:"pmf"`
	TruncatedMass float64   `json:"truncated_mass"`
}

// OutlookChainSize is the chain-size distribution from one root in the outlook.
type OutlookChainSize struct {
	// PMF[i] = P(Y = i + 1).
	PMF  []float64 `json:"pmf"`
	Mean *float64  `json:"mean"`
	// TruncatedMass = q − Σ PMF (finite chains longer than the list).
	TruncatedMass float64 `json:"truncated_mass"`
}

// OutlookResult is the JSON document `caseweave outlook` prints. The share fields keep
// their "80pct" names whatever ShareTarget is.
type OutlookResult struct {
	Model                    OutlookModel        `json:"model"`
	Mean                     float64             `json:"mean"`
	ExtinctionProbability    float64             `json:"extinction_probability"`
	MajorOutbreakProbability float64             `json:"major_outbreak_probability"`
	ShareTarget              float64             `json:"share_target"`
	ShareByNu                *float64            `json:"share_causing_80pct"`
	ShareByOffspring         *float64            `json:"share_causing_80pct_offspring"`
	SSEThreshold             int                 `json:"sse_threshold"`
	Generations              []OutlookGeneration `json:"generations"`
	ChainSize                OutlookChainSize    `json:"chain_size"`
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
	res := &OutlookResult{
		Model:       OutlookModel{Name: d.Name(), R: d.Mean()},
		Mean:        d.Mean(),
		ShareTarget: share,
	}
	if k, ok := dispersion(d); ok {
		res.Model.K = &k
	}
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
		pmf, trunc := capPMF(g.PMF, g.TruncatedMass, 1)
		res.Generations = append(res.Generations, OutlookGeneration{
			N: g.N, PZero: g.PZero, Mean: g.Mean, Variance: g.Variance,
			PMF: pmf, TruncatedMass: trunc,
		})
	}
	cs, err := ChainSizes(d, OutlookMaxPMFLength)
	if err != nil {
		return nil, err
	}
	res.ChainSize = OutlookChainSize{PMF: cs.PMF, Mean: cs.Mean, TruncatedMass: cs.TruncatedMass}
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

// checkFinite guards the JSON encoder, which rejects NaN and ±Inf.
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
		{"R", r.Model.R}, {"extinction probability", r.ExtinctionProbability},
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
