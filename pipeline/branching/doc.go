// Package branching is caseweave's Bienaymé–Galton–Watson engine: probability generating
// function (PGF) algebra on an offspring distribution from package offspring.
//
// Each case independently causes Z secondary cases with PGF G(s) = Σ p_x s^x; generation n
// from a cases has PGF G_n(s)^a with G_n the n-fold composition of G [Harris 1963, ch. 1].
// The package computes
//
//   - the extinction probability q (smallest root of G(s) = s in [0, 1]) by a bracketed Brent
//     root finder [Brent 1973] on the complement u = 1 − q, so that 1 − q keeps its relative
//     precision near R = 1 (ExtinctionProbability, MajorOutbreakProbability,
//     ExtinctionByGeneration);
//   - generation-size distributions decoded from PGF values on a circle by an inverse FFT
//     [Abate & Whitt 1992], with the truncation point and the mass beyond it reported
//     (GenerationSizes), and predictive distributions mixing over bootstrap replicates
//     (Project);
//   - chain (cluster) size distributions P(Y = y) = (1/y)[s^{y−1}]G(s)^y, from the model's
//     closed form where it has one and by Lagrange inversion on the FFT circle for any model
//     [Blumberg & Lloyd-Smith 2013; Dwass 1969], and a
//     maximum-likelihood fit of (R, k) to cluster sizes with right-censoring and a seeded,
//     parallel cluster bootstrap (ChainSizes, FitChainSizes, BootstrapChainFit);
//   - the share of cases that cause a target share of transmission, by individual
//     reproductive number and by realised offspring (ShareByNu, ShareByOffspring);
//   - the end-of-outbreak probability P(t) = Π_i G(F(t − t_i)) of Nishiura, Miyamatsu &
//     Mizumoto (2016, Emerg Infect Dis 22:146), F the serial-interval CDF (EndOfOutbreak);
//   - the control scenarios of Lloyd-Smith et al. (2005, Nature 438:355) as offspring
//     distributions of their own, so that every routine above applies to them: every ν
//     scaled by 1 − c, a random share c of cases removed, or the share c with the largest ν
//     removed, and the effort that brings R to 1 (Controlled, ControlCurve, ControlThreshold);
//   - the multitype process of a next-generation matrix with multinomially split totals: R as
//     its spectral radius [Diekmann, Heesterbeek & Metz 1990], the extinction probability per
//     type as the minimal fixed point of the multitype PGF [Harris 1963, ch. II], and the
//     shares of the types in later generations (Multitype, SpectralRadius, StableShares,
//     GenerationShares);
//   - Outlook, which assembles all of these for one model.
//
// Every routine works from the Distribution's PMF and PGF; where a model offers a capability
// of package offspring (a closed form, a logarithm taken first, a modulus known to fall on
// the circle) the routine uses it, and otherwise takes the general path.
//
// No function panics on bad input: every problem is returned as an error. Randomness comes
// only from seeds passed in. Results never depend on the number of worker goroutines.
package branching
