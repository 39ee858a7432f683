# Regenerates the 2x2 / Mantel-Haenszel / Rogan-Gladen fixtures in src/test/resources/reference/.
# Run from the estimator directory:  Rscript src/test/reference/tables_and_adjustment.R
# Uses base R only (stats::mantelhaen.test, stats::prop.test, stats::binom.test, datasets::UCBAdmissions).
dir <- if (length(commandArgs(TRUE)) > 0) commandArgs(TRUE)[1] else "src/test/resources/reference"
f <- function(v) sprintf("%.17g", v)
src <- R.version.string

# --- Mantel-Haenszel strata: table rows exposure (exposed first), columns outcome (positive first) ---
# a = exposed positive, b = exposed negative, c = unexposed positive, d = unexposed negative.
ucb <- datasets::UCBAdmissions   # dims Admit x Gender x Dept
strata <- data.frame(case = "ucb", stratum = dimnames(ucb)$Dept,
                     a = ucb["Admitted", "Male", ], b = ucb["Rejected", "Male", ],
                     c = ucb["Admitted", "Female", ], d = ucb["Rejected", "Female", ])
# An invented sparse set: zero cells, and one stratum with ad = bc = 0 (no information).
sparse <- data.frame(case = "sparse", stratum = c("s1", "s2", "s3", "s4"),
                     a = c(3, 0, 5, 0), b = c(10, 12, 0, 4), c = c(1, 2, 4, 0), d = c(15, 9, 6, 7))
strata <- rbind(strata, sparse)
writeLines(c(paste0("# Source: ", src, "; case ucb = datasets::UCBAdmissions (Bickel, Hammel & O'Connell 1975, ",
                    "Science 187:398), exposure Male vs Female, outcome Admitted; case sparse is invented"),
             "case,stratum,a,b,c,d",
             sprintf("%s,%s,%d,%d,%d,%d", strata$case, strata$stratum, strata$a, strata$b, strata$c, strata$d)),
           file.path(dir, "mantel-haenszel-strata.csv"))
mh <- c(paste0("# Source: ", src, "; stats::mantelhaen.test(array(c(a, c, b, d), c(2, 2, K)), conf.level = level)"),
        "case,level,or,lower,upper")
for (cs in unique(strata$case)) for (level in c(0.95, 0.90)) {
  s <- strata[strata$case == cs, ]
  arr <- array(0, c(2, 2, nrow(s)))
  for (k in seq_len(nrow(s))) arr[, , k] <- matrix(c(s$a[k], s$c[k], s$b[k], s$d[k]), 2, 2)
  t <- mantelhaen.test(arr, conf.level = level)
  mh <- c(mh, paste(cs, f(level), f(t$estimate), f(t$conf.int[1]), f(t$conf.int[2]), sep = ","))
}
writeLines(mh, file.path(dir, "mantel-haenszel.csv"))

# --- Woolf interval, computed directly from its formula (Haldane 0.5 when a cell is zero) ---
woolf <- data.frame(a = c(20, 81, 0, 7, 150), b = c(80, 182, 25, 0, 3),
                    c = c(10, 40, 6, 11, 1200), d = c(90, 223, 30, 14, 40))
wl <- c(paste0("# Source: ", src, "; exp(log(ad/bc) +- qnorm(1 - (1 - level)/2) * sqrt(1/a + 1/b + 1/c + 1/d)), ",
               "0.5 added to every cell when one is zero"), "a,b,c,d,level,or,se,lower,upper")
for (i in seq_len(nrow(woolf))) for (level in c(0.95, 0.99)) {
  cells <- unlist(woolf[i, ])
  if (any(cells == 0)) cells <- cells + 0.5
  lor <- log(cells[1] * cells[4] / (cells[2] * cells[3]))
  se <- sqrt(sum(1 / cells))
  z <- qnorm(1 - (1 - level) / 2)
  wl <- c(wl, paste(paste(unlist(woolf[i, ]), collapse = ","), f(level), f(exp(lor)), f(se),
                    f(exp(lor - z * se)), f(exp(lor + z * se)), sep = ","))
}
writeLines(wl, file.path(dir, "woolf.csv"))

# --- Rogan-Gladen: (p + Sp - 1) / (Se + Sp - 1) applied to the estimate and to the interval bounds ---
rg <- data.frame(x = c(30, 2, 195, 81, 0, 50, 12, 178), n = c(200, 200, 200, 263, 150, 1000, 200, 200),
                 se = c(0.9, 0.9, 0.9, 0.85, 0.95, 0.99, 0.9, 0.9), sp = c(0.95, 0.95, 0.95, 0.98, 0.97, 0.999, 0.95, 0.95))
rl <- c(paste0("# Source: ", src, "; Rogan & Gladen 1978; apparent interval from prop.test(correct = FALSE) ",
               "(wilson) or binom.test (clopper-pearson), level 0.95, mapped and clipped to [0, 1]"),
        "x,n,se,sp,method,value,lower,upper,clipped")
adj <- function(p, se, sp) (p + sp - 1) / (se + sp - 1)
for (i in seq_len(nrow(rg))) for (method in c("wilson", "clopper-pearson")) {
  r <- rg[i, ]
  ci <- if (method == "wilson") suppressWarnings(prop.test(r$x, r$n, correct = FALSE)$conf.int) else binom.test(r$x, r$n)$conf.int
  raw <- adj(c(r$x / r$n, ci[1], ci[2]), r$se, r$sp)
  clipped <- any(raw < 0 | raw > 1)
  v <- pmin(1, pmax(0, raw))
  rl <- c(rl, paste(r$x, r$n, f(r$se), f(r$sp), method, f(v[1]), f(v[2]), f(v[3]), tolower(clipped), sep = ","))
}
writeLines(rl, file.path(dir, "rogan-gladen.csv"))
