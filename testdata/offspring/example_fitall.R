# The values quoted by ExampleFitAll (pipeline/offspring/example_test.go) and checked by
# TestExampleFitAllAgainstMASS, from MASS::fitdistr on the example's 15 offspring counts.
# Run from this directory:  Rscript example_fitall.R > example_fitall.txt
suppressPackageStartupMessages(library(MASS))
x <- c(0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 2, 3, 12)
aic <- function(f) -2 * f$loglik + 2 * length(f$estimate)
fp <- fitdistr(x, "Poisson")
fg <- fitdistr(x, "geometric")
fn <- suppressWarnings(fitdistr(x, "negative binomial", control = list(reltol = 1e-14, maxit = 10000)))
# fitdistr's optim stops near the optimum (its mu is 5e-7 from the mean, the exact
# maximum-likelihood R); the root of the profile score of k at R = mean(x), by uniroot, is the
# exact maximum-likelihood k.
score <- function(u) { k <- exp(u); m <- mean(x); sum(digamma(x + k) - digamma(k)) + length(x) * log(k / (k + m)) }
k_root <- exp(uniroot(score, c(log(1e-4), log(1e4)), tol = 1e-13)$root)
cat("# ", R.version.string, ", MASS ", as.character(packageVersion("MASS")), "\n", sep = "")
cat("quantity,value\n")
cat(sprintf("poisson_R,%.10g\npoisson_AIC,%.10g\n", fp$estimate[["lambda"]], aic(fp)))
p <- fg$estimate[["prob"]]
cat(sprintf("geometric_R,%.10g\ngeometric_AIC,%.10g\n", (1 - p) / p, aic(fg)))
cat(sprintf("negative_binomial_R,%.10g\nnegative_binomial_k,%.10g\nnegative_binomial_AIC,%.10g\n",
            fn$estimate[["mu"]], fn$estimate[["size"]], aic(fn)))
cat(sprintf("negative_binomial_k_uniroot,%.12g\n", k_root))
