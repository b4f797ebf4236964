// Package timing holds caseweave's time-based estimates:
//
//   - FitSerialInterval fits gamma, lognormal and Weibull serial intervals to integer onset
//     differences by maximum likelihood with daily interval censoring, picks one by AIC,
//     and gives bootstrap intervals for its mean and 95th percentile. FixedGamma builds an
//     agreed gamma interval from its mean and sd. Either is a SerialInterval with CDF,
//     Quantile and DailyMass.
//   - WeeklyR gives mean offspring per ISO week of onset with exact negative-binomial
//     intervals, marking weeks whose offspring are still right-censored.
//   - InferInfectors gives Wallinga–Teunis infector probabilities for cases without a
//     recorded infector [Wallinga & Teunis 2004, Am J Epidemiol 160:509]: expected
//     offspring per case and a seeded sampler of whole assignments, working per
//     (group, day) so a national line list of 10^6 cases stays cheap.
//
// Inputs are plain slices (days, counts, strings, flags), one entry per interval or case;
// dates are linelist.Day. Randomness comes only from a *rand.Rand the caller seeds.
package timing
