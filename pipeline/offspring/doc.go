// Package offspring holds caseweave's offspring models and their estimation: the number of
// secondary cases each case causes (its offspring count), summarised as a frequency table.
//
// Models (model.go): Poisson(R), geometric with mean R, and the negative binomial (R, k) of
// Lloyd-Smith et al. (2005, Nature 438:355), each a Distribution with PMF and PGF.
//
// Estimation (fit.go): maximum-likelihood fits on a FreqTable (FitPoisson, FitGeometric,
// FitNegBin, FitAll with AIC choice). R̂ is the sample mean for all three; the negative
// binomial k̂ is the root of its profile score, or the Poisson limit (K nil) when the
// variance does not exceed the mean.
//
// Uncertainty (bootstrap.go): case and cluster bootstrap of (R, k) with percentile and BCa
// intervals [Efron 1987] for any function of (R, k), seeded, reproducible and parallel, with
// every draw exact (sample.go: binomial BTPE/inversion, Marsaglia–Tsang gamma, Poisson).
//
// Empirical views (share.go, views.go): concentration share and curve, zero share,
// superspreaders above the 99th percentile of Poisson(R).
//
// All computations work on the table of distinct offspring counts, so their cost grows with
// the number of distinct values, not the number of cases (DOMAIN.md §3, §6).
package offspring
