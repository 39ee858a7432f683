# Regenerates the calibration fixtures in src/test/resources/reference/:
#   calibration-<name>-data.csv      grouped design rows (x0..x{p-1}, trials, positives); x0 is the intercept
#   calibration-<name>-baseline.csv  the frozen baseline coefficients scored on those rows
#   calibration-expected.csv         the statistics computed here, in base R
# Run from the estimator directory:  Rscript src/test/reference/calibration.R
# Datasets are invented (house scenario: respiratory-illness testing), drawn with fixed seeds; the
# baseline coefficients deliberately differ from the generating ones, so the model is miscalibrated.
dir <- if (length(commandArgs(TRUE)) > 0) commandArgs(TRUE)[1] else "src/test/resources/reference"
f <- function(v) if (is.na(v)) "" else sprintf("%.17g", v)

write_data <- function(name, X, trials, positives, beta) {
  cols <- paste0("x", seq_len(ncol(X)) - 1)
  d <- data.frame(X, trials, positives)
  names(d) <- c(cols, "trials", "positives")
  lines <- c(sprintf("# Source: %s; invented data, seed in src/test/reference/calibration.R", R.version.string),
             paste(names(d), collapse = ","),
             apply(d, 1, function(r) paste(sprintf("%.17g", r), collapse = ",")))
  writeLines(lines, file.path(dir, sprintf("calibration-%s-data.csv", name)))
  writeLines(c(sprintf("# Source: %s; baseline coefficients, one per column", R.version.string),
               paste(cols, collapse = ","), paste(sprintf("%.17g", beta), collapse = ",")),
             file.path(dir, sprintf("calibration-%s-baseline.csv", name)))
}

# Tied risks as documented in RiskLevels: two risks are tied when their linear predictors differ by at
# most 1e-9 (a tolerance, so that risks equal in exact arithmetic stay tied whatever order a BLAS sums
# X %*% beta in). The sorted distinct linear predictors are cut into levels from the lowest up: a level
# starts at its lowest value a and holds every value up to a + 1e-9. Returns each element's level.
risk_level <- function(eta, tolerance = 1e-9) {
  s <- sort(unique(eta))
  level <- integer(length(s))
  k <- 0L
  start <- -Inf
  for (i in seq_along(s)) {
    if (k == 0L || s[i] > start + tolerance) {
      k <- k + 1L
      start <- s[i]
    }
    level[i] <- k
  }
  level[match(eta, s)]
}

# Hosmer-Lemeshow as documented in CalibrationStatistics: individuals sorted by risk level; cut
# points are the type-1 (inverse empirical distribution) quantiles of the individual risk levels at
# k/10, k = 1..10; group k holds levels in (cut_{k-1}, cut_k] with duplicate cuts merged, so tied
# risks stay together and every group is non-empty.
hosmer_lemeshow <- function(level, p, y, groups = 10) {
  cuts <- unique(quantile(level, probs = seq_len(groups) / groups, type = 1, names = FALSE))
  grp <- cut(level, breaks = c(-Inf, cuts), right = TRUE)
  o <- tapply(y, grp, sum); e <- tapply(p, grp, sum); n <- tapply(p, grp, length)
  keep <- !is.na(n)
  o <- o[keep]; e <- e[keep]; n <- n[keep]
  g <- length(n)
  stat <- sum((o - e)^2 / (e * (1 - e / n)))
  c(stat = stat, g = g, p = if (g >= 3) pchisq(stat, g - 2, lower.tail = FALSE) else NA)
}

statistics <- function(name, X, trials, positives, beta, level) {
  eta <- drop(X %*% beta)
  p <- plogis(eta)
  O <- sum(positives); E <- sum(trials * p)
  oe <- poisson.test(O, T = E, conf.level = level)$conf.int          # exact Poisson interval on O, divided by E
  ctl <- glm.control(epsilon = 1e-14, maxit = 100)
  yy <- cbind(positives, trials - positives)
  fi <- glm(yy ~ 1, offset = eta, family = binomial, control = ctl)  # calibration intercept
  fs <- glm(yy ~ eta, family = binomial, control = ctl)              # calibration slope
  # individual level: each pattern expands to its positives (y = 1) and negatives (y = 0)
  p_ind <- c(rep(p, positives), rep(p, trials - positives))
  y_ind <- c(rep(1, sum(positives)), rep(0, sum(trials - positives)))
  level_ind <- risk_level(c(rep(eta, positives), rep(eta, trials - positives)))
  hl <- hosmer_lemeshow(level_ind, p_ind, y_ind)
  brier <- mean((y_ind - p_ind)^2)
  r <- rank(level_ind)                                                # mid-ranks: tied risks count one half
  npos <- sum(y_ind); nneg <- length(y_ind) - npos
  auc <- (sum(r[y_ind == 1]) - npos * (npos + 1) / 2) / (npos * nneg)
  paste(name, f(level), f(sum(trials)), f(O), f(E), f(O / E), f(oe[1]), f(oe[2]),
        f(coef(fi)[1]), f(sqrt(vcov(fi)[1, 1])), f(coef(fs)[2]), f(sqrt(vcov(fs)[2, 2])),
        f(hl["stat"]), f(hl["g"]), f(hl["p"]), f(brier), f(auc), sep = ",")
}

expected <- c(sprintf(paste("# Source: %s; stats::glm (binomial, offset; epsilon 1e-14), stats::poisson.test,",
                            "stats::pchisq, base::rank; Hosmer-Lemeshow and risk ties (1e-9 on the log-odds scale) coded here"), R.version.string),
              "dataset,level,events,observed,expected,oe,oe_lower,oe_upper,intercept,intercept_se,slope,slope_se,hl,hl_groups,hl_p,brier,c")

# 1. Grouped covariate patterns: household contact, recent travel, 5 age bands, sex (3000 people).
set.seed(20261201)
N <- 3000
contact <- rbinom(N, 1, 0.3); travel <- rbinom(N, 1, 0.15)
age <- sample(1:5, N, replace = TRUE, prob = c(0.15, 0.25, 0.25, 0.2, 0.15)); sex <- rbinom(N, 1, 0.5)
Xi <- cbind(1, contact, travel, sapply(2:5, function(k) as.numeric(age == k)), sex)
truth <- c(-2.3, 1.1, 0.5, 0.2, 0.35, 0.6, 0.9, 0.15)
y <- rbinom(N, 1, plogis(drop(Xi %*% truth)))
key <- apply(Xi, 1, paste, collapse = ":")
ord <- order(key)
keys <- unique(key[ord])
Xg <- Xi[match(keys, key), , drop = FALSE]
tg <- as.numeric(table(factor(key, levels = keys)))
yg <- as.numeric(tapply(y, factor(key, levels = keys), sum))
beta1 <- c(-2.0, 0.8, 0.6, 0.1, 0.3, 0.4, 0.7, 0.05)
write_data("patterns", Xg, tg, yg, beta1)
expected <- c(expected, statistics("patterns", Xg, tg, yg, beta1, 0.95), statistics("patterns", Xg, tg, yg, beta1, 0.90))

# 2. Individual rows (trials 1): household contact and age in decades (numeric), 800 people.
set.seed(7321)
N <- 800
contact <- rbinom(N, 1, 0.35); decades <- round(runif(N, 0.5, 8.5), 2)
X2 <- cbind(1, contact, decades)
y2 <- rbinom(N, 1, plogis(drop(X2 %*% c(-2.6, 0.9, 0.25))))
beta2 <- c(-2.2, 1.0, 0.15)
write_data("individuals", X2, rep(1, N), y2, beta2)
expected <- c(expected, statistics("individuals", X2, rep(1, N), y2, beta2, 0.95))

# 3. A rare outcome (about 1.5 %), grouped over contact x 5 age bands (20000 people).
set.seed(99)
N <- 20000
contact <- rbinom(N, 1, 0.2); age <- sample(1:5, N, replace = TRUE)
Xi <- cbind(1, contact, sapply(2:5, function(k) as.numeric(age == k)))
y <- rbinom(N, 1, plogis(drop(Xi %*% c(-4.6, 0.7, 0.1, 0.2, 0.4, 0.5))))
key <- apply(Xi, 1, paste, collapse = ":")
keys <- unique(key[order(key)])
X3 <- Xi[match(keys, key), , drop = FALSE]
t3 <- as.numeric(table(factor(key, levels = keys)))
y3 <- as.numeric(tapply(y, factor(key, levels = keys), sum))
beta3 <- c(-4.3, 0.9, 0.0, 0.1, 0.2, 0.3)
write_data("rare", X3, t3, y3, beta3)
expected <- c(expected, statistics("rare", X3, t3, y3, beta3, 0.95))

writeLines(expected, file.path(dir, "calibration-expected.csv"))
