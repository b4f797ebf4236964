# Reference for TestTruncatedDelayReference: the maximum likelihood estimate of a discrete
# onset-to-report delay under right truncation, by direct numerical maximisation of the
# truncated likelihood  prod_i p[d_i] / F(T - t_i)  (Lagakos, Barraj & De Gruttola 1988,
# Biometrika 75:515; Lawless 1994, Can J Statist 22:15), with p parametrised by softmax and
# maximised by optim's BFGS. This is independent of the closed-form reverse-time hazard that
# caseweave uses: the two agree only if both are the maximum likelihood estimate.
# Run:  Rscript truncated_delay.R   (writes truncated_delay_cases.csv, truncated_delay_ref.csv)
# Made with R version 4.2.2 Patched (2022-11-10 r83330), Debian r-base-core; optim converged (code 0).
set.seed(20261202)
T <- 40                                 # analysis day
days <- 0:T
lambda <- 2 * exp(0.06 * days)          # a growing outbreak
true_p <- c(0.10, 0.20, 0.22, 0.16, 0.11, 0.08, 0.05, 0.04, 0.02, 0.01, 0.01)
onset <- integer(0); delay <- integer(0)
for (t in days) {
  n <- rpois(1, lambda[t + 1])
  if (n == 0) next
  d <- sample(seq_along(true_p) - 1, n, replace = TRUE, prob = true_p)
  keep <- t + d <= T                    # right truncation: reported by T
  onset <- c(onset, rep(t, sum(keep))); delay <- c(delay, d[keep])
}
write.csv(data.frame(onset = onset, report = onset + delay), "truncated_delay_cases.csv", row.names = FALSE)
D <- max(delay)
window <- pmin(T - onset, D)
nll <- function(theta) {
  p <- exp(c(0, theta)); p <- p / sum(p)
  F <- cumsum(p)
  -sum(log(p[delay + 1])) + sum(log(F[window + 1]))
}
# start from the plain shares
start <- tabulate(delay + 1, D + 1) + 0.5
fit <- optim(log(start[-1] / start[1]), nll, method = "BFGS",
             control = list(reltol = 1e-15, maxit = 10000))
p <- exp(c(0, fit$par)); p <- p / sum(p)
write.csv(data.frame(delay = 0:D, p = sprintf("%.10f", p)), "truncated_delay_ref.csv",
          row.names = FALSE, quote = FALSE)
cat(R.version.string, "\n", "convergence", fit$convergence, "nll", fit$value, "\n")
