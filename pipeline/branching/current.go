package branching

import (
	"errors"
	"fmt"
	"math"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

// ErrNoNuPosterior is returned by CurrentChains for a model whose individual reproduction
// number cannot be conditioned on the offspring a case has had (offspring.NuPosterior).
var ErrNoNuPosterior = errors.New("branching: the model has no individual reproduction number to condition on the offspring seen")

// Exposure is a group of Count cases of the chains under way, each with Offspring people
// infected so far (a mean when infectors were inferred) and Elapsed, the share of its serial
// interval that has passed by the analysis date (the serial-interval CDF at the days since its
// onset).
type Exposure struct {
	Offspring float64
	Elapsed   float64
	Count     int
}

// CurrentChainsResult is what the model says of the chains now under way.
type CurrentChainsResult struct {
	// DieOut is the probability that every chain dies out on its own.
	DieOut float64
	// Pending is the expected number of people the listed cases have still to infect.
	Pending float64
	// Further is the expected number of cases still to come, all generations: +Inf when
	// R ≥ 1, where that number has no finite mean.
	Further float64
	// Cases counts the cases given.
	Cases int
}

// CurrentChains conditions each listed case's individual reproduction number ν on what it
// has done so far. A case that has infected o people while the share F of its serial
// interval passed carries ν | o (offspring.NuPosterior; for the negative binomial the gamma
// posterior of shape k + o and rate k/R + F), and the people it has still to infect are
// Poisson(ν(1 − F)); each of them starts a line of descent that dies out with the extinction
// probability q of one case (ExtinctionProbability). Given ν the chance that all of them die
// out is E[q^N] = exp(−ν(1 − F)(1 − q)), so
//
//	P(all current chains die out) = Π_i E[exp(−ν_i(1 − F_i)(1 − q)) | o_i, F_i],
//
// for the negative binomial Π_i (1 + (1 − F_i)(1 − q)/(k/R + F_i))^{−(k + o_i)}. A case
// with F = 1 contributes 1; a new case (o = 0, F = 0) contributes G(q) = q, the chance for a
// single new introduction. The expected cases still to come are Σ_i E[ν_i | o_i, F_i](1 − F_i)
// times 1/(1 − R), the expected total progeny of one case of a subcritical process [Harris
// 1963, ch. I]. Imported cases still to arrive are not part of it.
func CurrentChains(d offspring.Distribution, cases []Exposure) (*CurrentChainsResult, error) {
	if err := checkDistribution(d); err != nil {
		return nil, err
	}
	mp, ok := d.(offspring.MixedPoisson)
	if !ok {
		return nil, fmt.Errorf("%w (%s)", ErrNoNuPosterior, d.Name())
	}
	post, ok := mp.IndividualR().(offspring.NuPosterior)
	if !ok {
		return nil, fmt.Errorf("%w (%s)", ErrNoNuPosterior, d.Name())
	}
	q, err := ExtinctionProbability(d)
	if err != nil {
		return nil, err
	}
	r := d.Mean()
	var logP, pending numeric.Sum
	res := &CurrentChainsResult{}
	for _, c := range cases {
		if !(c.Offspring >= 0) || math.IsInf(c.Offspring, 0) || !(c.Elapsed >= 0 && c.Elapsed <= 1) || c.Count < 0 {
			return nil, fmt.Errorf("branching: exposure %+v: offspring must be finite and ≥ 0, elapsed share in [0, 1], count ≥ 0", c)
		}
		if c.Count == 0 {
			continue
		}
		res.Cases += c.Count
		n := float64(c.Count)
		left := 1 - c.Elapsed
		logP.Add(n * post.PosteriorLogLaplace(r, c.Offspring, c.Elapsed, left*(1-q)))
		pending.Add(n * post.PosteriorMean(r, c.Offspring, c.Elapsed) * left)
	}
	res.DieOut = math.Min(1, math.Exp(logP.Value()))
	res.Pending = pending.Value()
	switch {
	case res.Pending == 0:
		res.Further = 0
	case r < 1:
		res.Further = res.Pending / (1 - r)
	default:
		res.Further = math.Inf(1)
	}
	return res, nil
}
