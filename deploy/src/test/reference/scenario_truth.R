# Fits the house scenario's logistic model with R's glm (binomial, logit link) to check that the
# generator's documented true parameters (deploy/SCENARIOS.md) are what its data carry.
#
# Usage: Rscript scenario_truth.R events.csv out.csv "<data checksum>"
#   events.csv: y (0/1), household, travel, age, sex, clinic   (written by TruthRecoveryTest)
#   out.csv:    comment lines, then term,estimate,se
# Regenerate the committed fixture (src/test/resources/reference/scenario-steady-glm.csv) with
#   mvn -pl deploy test -Dtest=TruthRecoveryTest -Doddswatch.regenerate=true
args <- commandArgs(trailingOnly = TRUE)
d <- read.csv(args[1], stringsAsFactors = FALSE, colClasses = "character")
d$y <- as.integer(d$y)
d$household <- factor(d$household, levels = c("no", "yes"))
d$travel <- factor(d$travel, levels = c("no", "yes"))
d$age <- factor(d$age, levels = c("18-39", "0-17", "40-64", "65+"))
d$sex <- factor(d$sex, levels = c("female", "male"))
d$clinic <- factor(d$clinic, levels = c("harbourside", "millbrook", "fernhill", "eastgate", "stonebridge"))
m <- glm(y ~ household + travel + age + sex + clinic, family = binomial(link = "logit"), data = d)
s <- summary(m)$coefficients
out <- file(args[2], "w")
cat("# ", R.version.string, ", glm(binomial) on ", nrow(d), " events; data sha256 ", args[3], "\n", sep = "", file = out)
write.csv(data.frame(term = rownames(s), estimate = sprintf("%.10g", s[, 1]), se = sprintf("%.10g", s[, 2])),
          out, row.names = FALSE, quote = FALSE)
close(out)
