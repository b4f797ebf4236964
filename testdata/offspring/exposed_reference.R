# Reference values for the truncation-aware offspring likelihood (pipeline/offspring/exposed.go).
# Run: Rscript testdata/offspring/exposed_reference.R > testdata/offspring/exposed_reference.csv
# Each case i has x_i observed offspring and observed share F_i; x_i ~ NB(mean R*F_i, size k).
# The fit is MASS::glm.nb with offset log(F) (intercept = log R, theta = k); the profile
# intervals are computed here directly from dnbinom with optimize/uniroot, an implementation
# independent of caseweave's.
suppressMessages(library(MASS))
set.seed(20261202)
cat(sprintf("# R %s, MASS %s; columns: dataset,quantity,value\n", getRversion(), packageVersion("MASS")))
sets <- list()
mk <- function(n, R, k, lagmax) {
  Fs <- round(pgamma(sample(0:lagmax, n, replace = TRUE) + 0.5, shape = 4, rate = 0.8), 6)
  Fs <- pmin(pmax(Fs, 0.1), 1)
  x <- rnbinom(n, size = k, mu = R * Fs)
  list(x = x, F = Fs)
}
sets[[1]] <- mk(60, 1.2, 0.4, 12)
sets[[2]] <- mk(150, 0.8, 1.5, 15)
sets[[3]] <- mk(40, 2.0, 0.2, 10)
q <- qchisq(0.95, 1)
for (d in seq_along(sets)) {
  x <- sets[[d]]$x; Fs <- sets[[d]]$F
  for (i in seq_along(x)) cat(sprintf("%d,case,%d,%.6f\n", d, x[i], Fs[i]))
  m <- glm.nb(x ~ 1 + offset(log(Fs)), control = glm.control(epsilon = 1e-14, maxit = 200))
  Rh <- exp(coef(m)[[1]]); kh <- m$theta
  ll <- function(R, k) sum(dnbinom(x, size = k, mu = R * Fs, log = TRUE))
  best <- ll(Rh, kh)
  cat(sprintf("%d,R,%.15g\n%d,k,%.15g\n%d,loglik,%.15g\n%d,se_k,%.15g\n", d, Rh, d, kh, d, best, d, m$SE.theta))
  prR <- function(R) -2 * (optimize(function(lk) ll(R, exp(lk)), c(-12, 12), maximum = TRUE, tol = 1e-12)$objective - best) - q
  prK <- function(k) -2 * (optimize(function(lr) ll(exp(lr), k), c(log(Rh) - 5, log(Rh) + 5), maximum = TRUE, tol = 1e-12)$objective - best) - q
  cat(sprintf("%d,R_lo,%.12g\n", d, uniroot(prR, c(Rh / 20, Rh), tol = 1e-12)$root))
  cat(sprintf("%d,R_hi,%.12g\n", d, uniroot(prR, c(Rh, Rh * 20), tol = 1e-12)$root))
  cat(sprintf("%d,k_lo,%.12g\n", d, uniroot(prK, c(kh / 1000, kh), tol = 1e-12)$root))
  up <- prK(1e6)
  if (up > 0) cat(sprintf("%d,k_hi,%.12g\n", d, uniroot(prK, c(kh, 1e6), tol = 1e-12)$root)) else cat(sprintf("%d,k_hi,Inf\n", d))
}
