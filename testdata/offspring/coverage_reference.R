# Independent check of the simulation study's R coverage for the hardest scenario
# (R = 2.5, k = 0.1, 500 cases): boot's percentile and BCa intervals for the mean, and the
# normal-theory t interval, over 1000 datasets drawn with rnbinom. Output: coverage_reference.txt.
# Run from this directory: Rscript coverage_reference.R   (R 4.2.2, boot 1.3-28.1)
suppressPackageStartupMessages(library(boot))
set.seed(99)
D <- 1000; B <- 2000; R0 <- 2.5; k0 <- 0.1; n <- 500
perc <- bca <- tint <- 0
for (d in 1:D) {
  x <- rnbinom(n, size = k0, mu = R0)
  b <- boot(x, function(y, i) mean(y[i]), R = B)
  ci <- suppressWarnings(boot.ci(b, type = c("perc", "bca")))
  perc <- perc + (ci$percent[4] <= R0 && R0 <= ci$percent[5])
  bca <- bca + (ci$bca[4] <= R0 && R0 <= ci$bca[5])
  h <- qt(0.975, n - 1) * sd(x) / sqrt(n)
  tint <- tint + (mean(x) - h <= R0 && R0 <= mean(x) + h)
}
writeLines(c(R.version.string, paste("boot", packageVersion("boot")),
  sprintf("R=%g k=%g n=%d datasets=%d B=%d: percentile %.3f, BCa %.3f, t interval %.3f",
          R0, k0, n, D, B, perc / D, bca / D, tint / D)), "coverage_reference.txt")
