// Package numeric holds the numerical routines the pipeline stages share, each written once:
//
//   - Brent, a bracketed scalar root finder [Brent 1973];
//   - NelderMead, a derivative-free minimiser [Nelder & Mead 1965], and NewtonMin, Newton
//     steps with finite-difference derivatives that polish a minimum from a nearby start
//     [Nocedal & Wright 2006];
//   - Quantile7, the type-7 sample quantile [Hyndman & Fan 1996];
//   - Sum, compensated summation [Neumaier 1974], and FinitePtr, the nullable numbers of the
//     summary;
//   - exact random variates for the bootstraps and simulation studies: Binomial
//     [Kachitvichyanukul & Schmeiser 1988], Multinomial by conditional binomials, Gamma
//     [Marsaglia & Tsang 2000] and Poisson [Knuth, TAOCP vol. 2], and StreamRand, the
//     independent stream of each bootstrap replicate.
//
// gonum supplies the special functions, quadrature and FFT; what is here is what gonum does
// not export, or exports in a form the pipeline cannot use (each says why beside it).
package numeric
