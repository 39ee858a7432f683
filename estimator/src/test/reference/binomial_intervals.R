# Regenerates src/test/resources/reference/binomial-intervals.csv
# Run from the estimator directory:  Rscript src/test/reference/binomial_intervals.R
# Wilson:          prop.test(x, n, correct = FALSE)$conf.int
# Clopper-Pearson: binom.test(x, n)$conf.int
# Jeffreys:        qbeta(alpha/2, x + 1/2, n - x + 1/2), qbeta(1 - alpha/2, ...); lower 0 at x = 0, upper 1 at x = n
#                  (Brown, Cai & DasGupta 2001, Statistical Science 16:101)
dir <- if (length(commandArgs(TRUE)) > 0) commandArgs(TRUE)[1] else "src/test/resources/reference"
out <- file.path(dir, "binomial-intervals.csv")
grid <- list()
for (n in c(1, 2, 3, 5, 10, 17, 30, 100, 263, 1000, 10000, 1000000)) {
  xs <- unique(c(0, 1, 2, floor(n / 10), floor(n / 3), floor(n / 2), n - 2, n - 1, n))
  xs <- xs[xs >= 0 & xs <= n]
  if (n == 263) xs <- unique(c(xs, 81))
  for (x in sort(xs)) for (level in c(0.95, 0.90, 0.99)) grid[[length(grid) + 1]] <- c(n, x, level)
}
f <- function(v) sprintf("%.17g", v)
lines <- c(sprintf("# Source: %s; stats::prop.test (correct = FALSE), stats::binom.test, stats::qbeta", R.version.string),
           "n,x,level,wilson_lower,wilson_upper,cp_lower,cp_upper,jeffreys_lower,jeffreys_upper")
for (g in grid) {
  n <- g[1]; x <- g[2]; level <- g[3]; alpha <- 1 - level
  w <- suppressWarnings(prop.test(x, n, correct = FALSE, conf.level = level)$conf.int)
  cp <- binom.test(x, n, conf.level = level)$conf.int
  jl <- if (x == 0) 0 else qbeta(alpha / 2, x + 0.5, n - x + 0.5)
  ju <- if (x == n) 1 else qbeta(1 - alpha / 2, x + 0.5, n - x + 0.5)
  lines <- c(lines, paste(sprintf("%d", n), sprintf("%d", x), f(level), f(w[1]), f(w[2]), f(cp[1]), f(cp[2]), f(jl), f(ju), sep = ","))
}
writeLines(lines, out)
