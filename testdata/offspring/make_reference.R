# Reference values for pipeline/offspring (fit_test.go, bootstrap_test.go).
# Run from this directory:  Rscript make_reference.R
# Writes: datasets as <name>.csv (value,count) and reference.csv (dataset,quantity,value).
# Versions are written into versions.txt by this script.
suppressPackageStartupMessages({ library(MASS); library(boot) })
set.seed(20240501)

# Offspring-count datasets (drawn once here, then fixed in the CSV files).
data <- list(
  overdispersed = rnbinom(400, size = 0.3, mu = 1.8),   # k ~ 0.3
  mild          = rnbinom(600, size = 4,   mu = 2.5),   # k ~ 4
  underdispersed = rbinom(300, 4, 0.5)                  # variance <= mean: Poisson limit
)

tab <- function(x) { t <- table(x); data.frame(value = as.integer(names(t)), count = as.integer(t)) }
for (nm in names(data)) write.csv(tab(data[[nm]]), paste0(nm, ".csv"), row.names = FALSE, quote = FALSE)

# Profile score of k (R-hat = mean) and its root by uniroot on log k; Inf when
# the variance with divisor n does not exceed the mean (no finite root).
khat <- function(x) {
  n <- length(x); m <- mean(x)
  if (m == 0 || mean((x - m)^2) <= m) return(Inf)
  f <- function(u) { k <- exp(u); sum(digamma(x + k) - digamma(k)) + n * log(k / (k + m)) }
  lo <- log(1e-8); hi <- log(1e10)
  if (f(hi) > 0) return(Inf)
  exp(uniroot(f, c(lo, hi), tol = 1e-13)$root)
}

out <- data.frame(dataset = character(), quantity = character(), value = numeric())
put <- function(d, q, v) out[nrow(out) + 1, ] <<- list(d, q, v)

B <- 10000
for (nm in names(data)) {
  x <- data[[nm]]
  fp <- fitdistr(x, "Poisson")
  put(nm, "poisson_R", fp$estimate[["lambda"]]); put(nm, "poisson_se_R", fp$sd[["lambda"]])
  put(nm, "poisson_loglik", fp$loglik)
  fg <- fitdistr(x, "geometric")
  p <- fg$estimate[["prob"]]
  put(nm, "geometric_R", (1 - p) / p)
  # delta method: R = (1-p)/p, dR/dp = -1/p^2
  put(nm, "geometric_se_R", fg$sd[["prob"]] / p^2)
  put(nm, "geometric_loglik", fg$loglik)
  # With variance <= mean the size parameter runs off to infinity and optim fails with the
  # tight tolerance; the default one then stops at a large size whose log-likelihood is
  # just below the Poisson one.
  fn <- tryCatch(suppressWarnings(fitdistr(x, "negative binomial", control = list(reltol = 1e-14, maxit = 10000))),
                 error = function(e) suppressWarnings(fitdistr(x, "negative binomial")))
  put(nm, "nb_fitdistr_k", fn$estimate[["size"]]); put(nm, "nb_fitdistr_R", fn$estimate[["mu"]])
  put(nm, "nb_fitdistr_se_k", fn$sd[["size"]]); put(nm, "nb_fitdistr_se_R", fn$sd[["mu"]])
  put(nm, "nb_fitdistr_loglik", fn$loglik)
  k <- khat(x)
  put(nm, "nb_uniroot_k", k)
  if (is.finite(k)) put(nm, "nb_loglik_at_uniroot_k", sum(dnbinom(x, size = k, mu = mean(x), log = TRUE)))

  stat <- function(d, i) { y <- d[i]; c(mean(y), khat(y)) }
  b <- boot(x, stat, R = B)
  put(nm, "boot_B", B)
  for (j in 1:2) {
    q <- c("R", "k")[j]
    tj <- b$t[, j]
    put(nm, paste0("boot_", q, "_infinite"), sum(!is.finite(tj)))
    if (!is.finite(b$t0[j]) || any(!is.finite(tj))) next
    # Jackknife influence values centred at the mean of the leave-one-out values, as in
    # Efron (1987, eq. 6.6). boot's empinf(type = "jack") centres at the full-sample estimate
    # instead (identical for the mean, not for k); its value is recorded too.
    tjack <- sapply(seq_along(x), function(i) stat(x, seq_along(x)[-i])[j])
    L <- (length(x) - 1) * (mean(tjack) - tjack)
    put(nm, paste0("jack_", q, "_acceleration"), sum(L^3) / (6 * sum(L^2)^1.5))
    Lb <- empinf(b, type = "jack", index = j)
    put(nm, paste0("jack_", q, "_acceleration_boot_empinf"), sum(Lb^3) / (6 * sum(Lb^2)^1.5))
    ci <- boot.ci(b, conf = 0.95, type = c("perc", "bca"), index = j, L = L)
    put(nm, paste0("boot_", q, "_perc_lo"), ci$percent[4]); put(nm, paste0("boot_", q, "_perc_hi"), ci$percent[5])
    put(nm, paste0("boot_", q, "_bca_lo"), ci$bca[4]);     put(nm, paste0("boot_", q, "_bca_hi"), ci$bca[5])
    put(nm, paste0("boot_", q, "_z0"), qnorm(sum(tj < b$t0[j]) / length(tj)))
  }
}
# boot's interpolated order statistic (norm.inter) on a fixed vector, for orderQuantile.
tq <- c(3, 1, 4, 1, 5, 9, 2, 6, 5, 3, 5, 8, 9, 7, 9, 3, 2, 3, 8, 4)
for (a in c(0.01, 0.025, 0.1, 0.33, 0.5, 0.9, 0.975, 0.99))
  put("norm_inter", sprintf("%.3f", a), boot:::norm.inter(tq, a)[, 2])
write.csv(transform(out, value = sprintf("%.17g", value)), "reference.csv", row.names = FALSE, quote = FALSE)
writeLines(c(R.version.string,
             paste("MASS", as.character(packageVersion("MASS"))),
             paste("boot", as.character(packageVersion("boot"))),
             "seed 20240501 (set.seed), B = 10000, RNG kind: default (Mersenne-Twister, Inversion, Rejection)"),
           "versions.txt")
