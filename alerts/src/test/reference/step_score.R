# Score (Rao) test of one added column with the intercept re-estimated and a fixed offset: the check
# value of StepScoreTest. Run: Rscript step_score.R
i <- 0:59
o <- -2 + 0.1 * (i %% 7)
x <- as.numeric(i %% 3 == 0)
y <- as.numeric(i %% 5 == 0 | i %% 11 == 0)
null <- glm(y ~ 1, offset = o, family = binomial, control = glm.control(epsilon = 1e-14, maxit = 100))
full <- glm(y ~ 1 + x, offset = o, family = binomial, control = glm.control(epsilon = 1e-14, maxit = 100))
rao <- anova(null, full, test = "Rao")
p <- fitted(null)
u <- sum(x * (y - p))
cat(sprintf("R %s: Rao statistic %.12f, signed root %.12f, intercept %.12f\n", getRversion(), rao$Rao[2],
            sign(u) * sqrt(rao$Rao[2]), coef(null)[1]))
