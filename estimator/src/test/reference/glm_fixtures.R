# Regenerates the logistic-fit fixtures in src/test/resources/reference/glm/.
# Run from the estimator directory:  Rscript src/test/reference/glm_fixtures.R [output-dir]
# Uses R's stats::glm (binomial, logit link) and, for the separated dataset, brglm2::brglmFit
# (type = "MPL_Jeffreys", which for the logit link is Firth's 1993 penalized likelihood).
# The datasets are invented (house scenario: a regional respiratory-illness testing programme) and
# drawn with fixed seeds; each data file is written beside its results so Java tests need no R.
dir <- if (length(commandArgs(TRUE)) > 0) commandArgs(TRUE)[1] else "src/test/resources/reference/glm"
f <- function(v) sprintf("%.17g", v)
src <- R.version.string
# Converge far past the defaults so the fixtures are accurate to well below the 1e-6 test tolerance.
tight <- glm.control(epsilon = 1e-14, maxit = 100)

write_fit <- function(name, fit, library) {
  s <- summary(fit)$coefficients
  lines <- c(paste0("# Source: ", src, "; ", library),
             paste0("# logLik ", f(as.numeric(logLik(fit))), " deviance ", f(deviance(fit)),
                    " null.deviance ", f(fit$null.deviance)),
             "column,coef,se")
  lines <- c(lines, paste(rownames(s), f(s[, 1]), f(s[, 2]), sep = ","))
  writeLines(lines, file.path(dir, paste0(name, "-fit.csv")))
}

# 1. Grouped counts: age band (5 levels, reference 18-29) x household contact x sex.
set.seed(20260201)
g <- expand.grid(age = c("0-17", "18-29", "30-49", "50-69", "70+"), contact = c("no", "yes"),
                 sex = c("female", "male"), stringsAsFactors = FALSE)
g$trials <- sample(40:400, nrow(g), replace = TRUE)
lp <- -2.2 + c(0.3, 0, 0.15, 0.45, 0.9)[match(g$age, c("0-17", "18-29", "30-49", "50-69", "70+"))] +
  0.9 * (g$contact == "yes") + 0.2 * (g$sex == "male")
g$positives <- rbinom(nrow(g), g$trials, plogis(lp))
write.csv(g, file.path(dir, "grouped-data.csv"), row.names = FALSE, quote = FALSE)
g$age <- relevel(factor(g$age), ref = "18-29")
g$contact <- factor(g$contact, levels = c("no", "yes"))
g$sex <- factor(g$sex, levels = c("female", "male"))
fit <- glm(cbind(positives, trials - positives) ~ age + contact + sex, family = binomial, data = g, control = tight)
write_fit("grouped", fit, "stats::glm(cbind(positives, trials - positives) ~ age + contact + sex, binomial)")

# 2. Individual level with a numeric term: age in years (per 10 years), recent travel, clinic (4 levels).
set.seed(20260202)
n <- 600
d <- data.frame(age = round(runif(n, 1, 90), 1),
                travel = sample(c("no", "yes"), n, replace = TRUE, prob = c(0.8, 0.2)),
                clinic = sample(c("central", "harbour", "hill", "valley"), n, replace = TRUE),
                stringsAsFactors = FALSE)
lp <- -1.6 + 0.18 * d$age / 10 + 0.7 * (d$travel == "yes") +
  c(0, -0.3, 0.25, 0.5)[match(d$clinic, c("central", "harbour", "hill", "valley"))]
d$positive <- rbinom(n, 1, plogis(lp))
write.csv(d, file.path(dir, "individual-data.csv"), row.names = FALSE, quote = FALSE)
d$age10 <- d$age / 10
d$travel <- factor(d$travel, levels = c("no", "yes"))
d$clinic <- factor(d$clinic, levels = c("central", "harbour", "hill", "valley"))
fit <- glm(positive ~ age10 + travel + clinic, family = binomial, data = d, control = tight)
write_fit("individual", fit, "stats::glm(positive ~ I(age / 10) + travel + clinic, binomial)")

# 3. Rare outcome (under 2 % prevalence), individual level: household contact, sex, age band (3 levels).
set.seed(20260203)
n <- 8000
r <- data.frame(contact = sample(c("no", "yes"), n, replace = TRUE, prob = c(0.85, 0.15)),
                sex = sample(c("female", "male"), n, replace = TRUE),
                band = sample(c("child", "adult", "senior"), n, replace = TRUE, prob = c(0.25, 0.55, 0.2)),
                stringsAsFactors = FALSE)
lp <- -4.9 + 1.1 * (r$contact == "yes") + 0.25 * (r$sex == "male") +
  c(-0.4, 0, 0.6)[match(r$band, c("child", "adult", "senior"))]
r$positive <- rbinom(n, 1, plogis(lp))
stopifnot(mean(r$positive) < 0.02)
write.csv(r, file.path(dir, "rare-data.csv"), row.names = FALSE, quote = FALSE)
r$contact <- factor(r$contact, levels = c("no", "yes"))
r$sex <- factor(r$sex, levels = c("female", "male"))
r$band <- factor(r$band, levels = c("adult", "child", "senior"))
fit <- glm(positive ~ contact + sex + band, family = binomial, data = r, control = tight)
write_fit("rare", fit, paste0("stats::glm(positive ~ contact + sex + band, binomial); prevalence ",
                              f(mean(r$positive))))

# 4. Quasi-complete separation: no positive at all among those without household contact at one clinic.
set.seed(20260204)
n <- 120
s <- data.frame(contact = sample(c("no", "yes"), n, replace = TRUE, prob = c(0.6, 0.4)),
                age = round(runif(n, 5, 80)), stringsAsFactors = FALSE)
s$positive <- ifelse(s$contact == "yes", rbinom(n, 1, plogis(-1 + 0.02 * s$age)), 0L)
write.csv(s, file.path(dir, "separated-data.csv"), row.names = FALSE, quote = FALSE)
s$contact <- factor(s$contact, levels = c("no", "yes"))
s$age10 <- s$age / 10
suppressPackageStartupMessages(library(brglm2))
fit <- glm(positive ~ contact + age10, family = binomial, data = s, method = "brglmFit", type = "MPL_Jeffreys",
           control = list(epsilon = 1e-13, maxit = 500))
sm <- summary(fit)$coefficients
writeLines(c(paste0("# Source: ", src, "; brglm2 ", as.character(packageVersion("brglm2")),
                    " glm(positive ~ contact + I(age / 10), binomial, method = \"brglmFit\", type = \"MPL_Jeffreys\")"),
             "column,coef,se", paste(rownames(sm), f(sm[, 1]), f(sm[, 2]), sep = ",")),
           file.path(dir, "separated-firth-fit.csv"))

# 5. Likelihood-ratio tests (stats::drop1, test = "LRT") and profile-likelihood intervals
#    (MASS::confint.glm, which profiles the deviance and interpolates) for the individual dataset.
fit <- glm(positive ~ age10 + travel + clinic, family = binomial, data = d, control = tight)
lrt <- drop1(fit, test = "LRT")
ci <- suppressMessages(MASS:::confint.glm(fit, level = 0.95))
writeLines(c(paste0("# Source: ", src, "; stats::drop1(glm(positive ~ I(age / 10) + travel + clinic), test = \"LRT\");",
                    " MASS ", as.character(packageVersion("MASS")), " confint.glm(level = 0.95) (profile likelihood)"),
             "term,chisq,df,p",
             paste(rownames(lrt)[-1], f(lrt$LRT[-1]), lrt$Df[-1], f(lrt[["Pr(>Chi)"]][-1]), sep = ","),
             "column,profileLower,profileUpper",
             paste(rownames(ci), f(ci[, 1]), f(ci[, 2]), sep = ",")),
           file.path(dir, "individual-lrt-profile.csv"))
