# Chain-size log-likelihoods of testdata/branching/national_chains.csv under negative-binomial
# (and Poisson: Borel) offspring, with censored clusters contributing log P(Y >= y), computed
# term by term in R, independently of caseweave:
#   Rscript testdata/branching/chain_loglik_reference.R > testdata/branching/chain_loglik_reference.txt
# P(Y = y) is the closed form of Blumberg & Lloyd-Smith (2013), through lgamma. P(Y >= y) is
# (1 - q) + sum_{j >= y} P(Y = j), the sum taken from the top with R's cumsum (long-double
# accumulation) over j < 5e6 (the script stops if the last term is not below 1e-25); q, the
# extinction probability, solves q = (1 + (R/k)(1 - q))^(-k) (q = 1 for R <= 1).
tab <- read.csv("testdata/branching/national_chains.csv")
J <- 5e6
logp_nb <- function(y, R, k) lgamma((k + 1) * y - 1) - lgamma(k * y) - lgamma(y + 1) +
  (y - 1) * log(R / k) - ((k + 1) * y - 1) * log1p(R / k)
logp_borel <- function(y, R) (y - 1) * log(R * y) - R * y - lgamma(y + 1)
extinction <- function(R, k) {
  if (R <= 1) return(1)
  G <- if (is.infinite(k)) function(s) exp(R * (s - 1)) else function(s) (1 + R / k * (1 - s))^(-k)
  uniroot(function(s) G(s) - s, c(0, 1 - 1e-12), tol = 1e-15)$root
}
loglik <- function(R, k) {
  lp <- if (is.infinite(k)) function(y) logp_borel(y, R) else function(y) logp_nb(y, R, k)
  p <- exp(lp(1:J))
  stopifnot(p[J] < 1e-25)      # the terms left out (j >= J) are negligible
  tail <- rev(cumsum(rev(p)))   # tail[y] = sum_{j >= y} p_j
  q <- extinction(R, k)
  comp <- tab$complete > 0
  cens <- tab$censored > 0
  sum(tab$complete[comp] * lp(tab$size[comp])) +
    sum(tab$censored[cens] * log((1 - q) + tail[tab$size[cens]]))
}
cat(sprintf("# %s; made by testdata/branching/chain_loglik_reference.R\n", R.version.string))
cat("R,k,loglik\n")
for (pt in list(c(0.9912804, 0.5135261), c(0.95, 0.3), c(0.98, 2), c(1.02, 0.8), c(0.99, Inf), c(0.7, 0.1))) {
  cat(sprintf("%.7f,%s,%.12f\n", pt[1], format(pt[2]), loglik(pt[1], pt[2])))
}
