// Package offspring holds caseweave's offspring models and their estimation: the number of
// secondary cases each case causes (its offspring count), summarised as a frequency table.
//
// # Models
//
// A Distribution is an offspring distribution p_x = P(Z = x) with its probability generating
// function G(s) = Σ p_x s^x [Harris 1963, The Theory of Branching Processes, ch. 1]:
//
//   - Poisson(R): p_x = e^{−R}R^x/x!, G(s) = e^{R(s−1)};
//   - geometric with mean R: p_x = (1/(1+R))(R/(1+R))^x, G(s) = 1/(1 + R(1 − s));
//   - negative binomial (R, k) [Lloyd-Smith et al. 2005, Nature 438:355]: ν ~ Gamma(shape k,
//     mean R), Z | ν ~ Poisson(ν), so p_x = Γ(x + k)/(Γ(k)x!)·(k/(k+R))^k(R/(k+R))^x and
//     G(s) = (1 + (R/k)(1 − s))^{−k}; variance R(1 + R/k); k → ∞ is Poisson, k = 1 geometric;
//   - Empirical, any list of probabilities.
//
// A model may add optional capabilities (capability.go) — its own validity check, log G,
// log G on the complex disc, 1 − G(1 − u) without cancellation, closed-form chain sizes (the
// Borel and negative-binomial total-progeny laws of Blumberg & Lloyd-Smith 2013, PLoS Comput
// Biol 9:e1002993, in chainsize.go), the distribution of ν for the "20/80" share by ν
// (the incomplete-gamma formula of Lloyd-Smith et al. 2005 and Endo et al. 2020, Wellcome
// Open Res 5:67, in nu.go) — that package branching uses when present. A new family is one
// file here; without capabilities it takes branching's general paths.
//
// # Estimation
//
// A Family is fitted by maximum likelihood on a FreqTable (fit.go, family.go): R̂ is the
// sample mean for all three; the negative binomial's k̂ solves the profile score
// Σ_i [ψ(x_i + k) − ψ(k)] + n·log(k/(k + R̂)) = 0, and when the variance (divisor n) does not
// exceed the mean there is no finite k̂ (the Poisson limit, k = +Inf). Models are compared by
// AIC = 2·(parameters) − 2·log L [Akaike 1974]. Fits carry a parameter vector, R first.
//
// # Uncertainty
//
// Bootstrap (bootstrap.go) resamples cases — a multinomial draw over the frequency table,
// O(distinct counts) a replicate — or whole clusters, refits the family in every replicate,
// and gives percentile and BCa intervals [Efron 1987, JASA 82:171] for any function of the
// parameters, the BCa acceleration from the jackknife on the same table. Every replicate
// draws from its own seeded stream, so results do not depend on the number of cores.
//
// # Empirical views
//
// share.go and views.go: the concentration curve and share (the smallest share of cases,
// ranked by offspring, causing a target share of transmission), the zero share, and the
// superspreaders above the 99th percentile of Poisson(R) [Lloyd-Smith et al. 2005].
//
// Every computation works on the table of distinct offspring counts, so its cost grows with
// the number of distinct values, not the number of cases.
package offspring
