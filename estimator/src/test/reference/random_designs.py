#!/usr/bin/env python3
"""Randomized differential fixture for the logistic fitters.

Writes src/test/resources/reference/random-designs.csv (or OUT_DIR/random-designs.csv):
one line per random design, fitted by statsmodels' GLM (binomial, logit link, IRLS) when the
maximum-likelihood estimate exists, and by brglm2's brglmFit (type "MPL_Jeffreys": Firth's
penalized likelihood for the logit link, run through Rscript) when the design is separated.

Run from the estimator directory:
    /usr/bin/python3 src/test/reference/random_designs.py [OUT_DIR]

Only the outcome counts are stored as data. The design matrix and the trials are rebuilt from the
line's seed and column specification by the generator below, which uses SplitMix64 and nothing but
integer arithmetic and correctly rounded double division and addition, so the Java test
(RandomDesigns.java) rebuilds the identical doubles; the line's sha256 of the design checks that.

Column specification (space-separated, one token per design column, in order):
  1               the intercept
  b<q>            an indicator that is 1 with probability q/100
  c<k>            a categorical term with k levels: k-1 indicator tokens "c<k>" for levels 1..k-1,
                  one level drawn per row for the whole block
  u<a>:<m>:<d>    a numeric value a + below(m) / d (uncentered: calendar years such as 2026 + months
                  / 12, ages in days, ages in years with one decimal)
  k<j>:<m>:<d>    a near-collinear copy of design column j: x_j + (below(m) - floor(m / 2)) / d
Per row the generator draws, column by column, the values above (a categorical block draws once at
its first column), then, in pattern storage, trials = 1 + below(2 * cap - 1).
"""
import csv
import hashlib
import io
import math
import os
import struct
import subprocess
import sys
import tempfile
import warnings

import numpy as np
import scipy
import statsmodels
import statsmodels.api as sm
from scipy.optimize import linprog

MASTER_SEED = 20261203
ML_DESIGNS = 2000
FIRTH_DESIGNS = 150
MASK = (1 << 64) - 1
MAX_TRIALS = 10_000_000
MAX_ROWS = 3000
MAX_PATTERNS = 250


def build(seed, spec, rows, cap):
    """Design (rows x p numpy array) and trials, exactly as RandomDesigns.java builds them."""
    p = len(spec)
    ops = []                                    # the spec parsed once: (column, kind, arguments)
    j = 0
    while j < p:
        tok = spec[j]
        if tok == "1":
            ops.append((j, "1", None))
        elif tok[0] == "b":
            ops.append((j, "b", int(tok[1:])))
        elif tok[0] == "c":
            ops.append((j, "c", int(tok[1:])))
            j += int(tok[1:]) - 1
            continue
        elif tok[0] in "uk":
            a, m, d = tok[1:].split(":")
            ops.append((j, tok[0], (int(a), int(m), float(int(d)))))
        else:
            raise ValueError(tok)
        j += 1
    # Every row takes the same number of draws (one per column operation, one for the trials), so
    # draw number k of row i is SplitMix64's output number i * per_row + k: computed all at once.
    per_row = sum(1 for op in ops if op[1] != "1") + (1 if cap > 0 else 0)
    draws = splitmix64_block(seed, rows * per_row).reshape(rows, per_row) >> np.uint64(11)
    x = np.zeros((rows, p))
    k = 0
    for j, kind, arg in ops:
        if kind == "1":
            x[:, j] = 1.0
            continue
        column = draws[:, k]
        k += 1
        if kind == "b":
            x[:, j] = np.where(column % np.uint64(100) < np.uint64(arg), 1.0, 0.0)
        elif kind == "c":
            level = column % np.uint64(arg)
            for l in range(1, arg):
                x[:, j + l - 1] = np.where(level == np.uint64(l), 1.0, 0.0)
        elif kind == "u":
            x[:, j] = float(arg[0]) + (column % np.uint64(arg[1])).astype(np.float64) / arg[2]
        else:
            x[:, j] = x[:, arg[0]] + ((column % np.uint64(arg[1])).astype(np.int64) - arg[1] // 2).astype(np.float64) / arg[2]
    if cap > 0:
        trials = (np.uint64(1) + draws[:, k] % np.uint64(2 * cap - 1)).astype(np.float64)
    else:
        trials = np.ones(rows)
    return x, trials


def splitmix64_block(seed, n):
    """The first n outputs of SplitMix64 seeded with seed (Steele, Lea and Flood 2014; the constants of
    java.util.SplittableRandom): output k mixes seed + k * 0x9E3779B97F4A7C15 (mod 2^64). A draw
    below(m) is the output's top 53 bits modulo m."""
    with np.errstate(over="ignore"):
        z = np.uint64(seed & MASK) + np.uint64(0x9E3779B97F4A7C15) * np.arange(1, n + 1, dtype=np.uint64)
        z = (z ^ (z >> np.uint64(30))) * np.uint64(0xBF58476D1CE4E5B9)
        z = (z ^ (z >> np.uint64(27))) * np.uint64(0x94D049BB133111EB)
        return z ^ (z >> np.uint64(31))


def design_hash(x, trials):
    """sha256 of the design's doubles (row-major, little-endian) followed by the trials, first 16 hex digits."""
    h = hashlib.sha256()
    h.update(struct.pack("<%dd" % x.size, *x.ravel()))
    h.update(struct.pack("<%dd" % trials.size, *trials))
    return h.hexdigest()[:16]


def draw_spec(rng, p):
    spec = ["1"]
    numeric = []
    while len(spec) < p:
        room = p - len(spec)
        kind = rng.integers(0, 7)
        if kind == 0:
            spec.append("b%d" % rng.integers(5, 51))
        elif kind == 1 and room >= 2:
            k = int(rng.integers(3, min(room + 1, 5) + 1))
            spec.extend(["c%d" % k] * (k - 1))
        elif kind == 2:
            numeric.append(len(spec))
            spec.append("u%d:%d:12" % (rng.integers(2016, 2027), rng.integers(24, 121)))   # calendar year, by month
        elif kind == 3:
            numeric.append(len(spec))
            spec.append("u0:36525:1")                                                   # age in days
        elif kind == 4:
            numeric.append(len(spec))
            spec.append("u0:%d:10" % rng.integers(200, 1001))                            # age in years, one decimal
        elif kind == 5:
            numeric.append(len(spec))
            spec.append("u%d:20001:1000" % rng.integers(-10, 11))                        # a lab value
        elif kind == 6 and numeric:
            j = int(numeric[rng.integers(0, len(numeric))])
            a, m, d = spec[j][1:].split(":") if spec[j][0] == "u" else (None, None, None)
            if a is None:
                continue
            span = int(m) / int(d)
            share = 10.0 ** -int(rng.integers(1, 3))           # noise range 10 % or 1 % of the column's range
            e = max(0, math.ceil(-math.log10(span * share / 200)))
            spec.append("k%d:%d:%d" % (j, max(3, int(round(span * share * 10 ** e))), 10 ** e))
    return spec


def separated(x, trials, positives):
    """Whether a direction b != 0 has x_i.b >= 0 where positives occur and <= 0 where negatives occur,
    strictly somewhere (complete or quasi-complete separation): a linear programme on scaled columns."""
    scale = np.maximum(np.abs(x).max(axis=0), 1e-300)
    z = x / scale
    pos = positives > 0
    neg = positives < trials
    a_ub = np.vstack([-z[pos], z[neg]])
    c = -(z[pos].sum(axis=0) - z[neg].sum(axis=0))
    res = linprog(c, A_ub=a_ub, b_ub=np.zeros(a_ub.shape[0]), bounds=[(-1, 1)] * x.shape[1], method="highs")
    return res.status == 0 and -res.fun > 1e-7


def scaled_score(x, trials, positives, beta):
    eta = x @ beta
    mu = trials / (1 + np.exp(-eta))
    w = mu * (1 - 1 / (1 + np.exp(-eta)))
    u = x.T @ (positives - mu)
    info = (x * w[:, None]).T @ x
    return float(np.max(np.abs(u) / np.sqrt(np.diag(info)))), info


def draw_design(rng, seed, want_separated):
    storage = "rows" if rng.random() < 0.5 else "patterns"
    p = int(rng.integers(1, 21))
    prevalence = math.exp(rng.uniform(math.log(0.001), math.log(0.5)))
    if want_separated:
        p = int(rng.integers(1, 6))
        storage = "rows"
        rows = int(rng.integers(10, 80))
        cap = 0
    elif storage == "rows":
        rows = int(round(math.exp(rng.uniform(math.log(min(MAX_ROWS, max(20, 5 * p / prevalence))),
                                              math.log(MAX_ROWS)))))
        cap = 0
    else:
        rows = int(rng.integers(max(p + 2, 8), MAX_PATTERNS + 1))
        total = math.exp(rng.uniform(math.log(max(rows, 20 * p / prevalence)), math.log(MAX_TRIALS)))
        if rng.random() < 0.1:
            total = MAX_TRIALS                                # the top of the range, often
        cap = max(1, int(total / rows))
    spec = draw_spec(rng, p)
    x, trials = build(seed, spec, rows, cap)
    if trials.sum() > MAX_TRIALS or np.linalg.matrix_rank(x / np.maximum(np.abs(x).max(axis=0), 1e-300)) < p:
        return None
    # A true model with the drawn prevalence: effects of about half a standard deviation.
    sd = x.std(axis=0)
    beta = np.array([0.0 if sd[j] == 0 else rng.normal(0, 0.5) / sd[j] for j in range(p)])
    eta0 = x @ beta
    eta0 -= np.average(eta0, weights=trials)              # uncentered columns: keep the intercept's search in range
    lo, hi = -40.0, 40.0
    for _ in range(100):
        mid = (lo + hi) / 2
        if np.sum(trials / (1 + np.exp(-(eta0 + mid)))) / trials.sum() < prevalence:
            lo = mid
        else:
            hi = mid
    positives = rng.binomial(trials.astype(np.int64), 1 / (1 + np.exp(-(eta0 + lo)))).astype(float)
    if positives.sum() == 0 or positives.sum() == trials.sum():
        return None
    is_separated = separated(x, trials, positives)
    if is_separated != want_separated:
        return None
    return dict(seed=seed, storage=storage, spec=spec, rows=rows, cap=cap, x=x, trials=trials,
                positives=positives, prevalence=prevalence)


def fit_ml(d):
    endog = np.column_stack([d["positives"], d["trials"] - d["positives"]])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = sm.GLM(endog, d["x"], family=sm.families.Binomial()).fit(
            method="IRLS", maxiter=100, tol=1e-12, rtol=1e-15)
    coef = np.asarray(res.params)
    score, info = scaled_score(d["x"], d["trials"], d["positives"], coef)
    cond = np.linalg.cond(info / np.sqrt(np.outer(np.diag(info), np.diag(info))))
    # Well-posed: the reference reached the optimum and the scaled information is not near-singular.
    if not (score < 1e-7 and cond < 1e10 and np.all(np.isfinite(res.bse))):
        return None
    return coef, np.asarray(res.bse), score, cond


FIRTH_R = r"""
suppressPackageStartupMessages(library(brglm2))
a <- commandArgs(TRUE)
d <- read.csv(a[1])
out <- c()
for (id in unique(d$design)) {
  s <- d[d$design == id, ]
  X <- as.matrix(s[, grep("^x", names(s))])
  X <- X[, colSums(!is.na(X)) > 0, drop = FALSE]
  fit <- glm(cbind(s$positives, s$trials - s$positives) ~ 0 + X, family = binomial, method = "brglmFit",
             type = "MPL_Jeffreys", control = list(epsilon = 1e-13, maxit = 500))
  sm <- summary(fit)$coefficients
  out <- c(out, paste(id, as.integer(fit$converged), paste(sprintf("%.17g", sm[, 1]), collapse = " "),
                      paste(sprintf("%.17g", sm[, 2]), collapse = " "), sep = ","))
}
writeLines(c(paste0("brglm2 ", packageVersion("brglm2"), " under ", R.version.string), out), a[2])
"""


def fit_firth(designs):
    with tempfile.TemporaryDirectory() as tmp:
        pmax = max(len(d["spec"]) for d in designs)
        data = os.path.join(tmp, "separated.csv")
        with open(data, "w", newline="") as f:
            w = csv.writer(f)
            w.writerow(["design"] + ["x%d" % j for j in range(pmax)] + ["trials", "positives"])
            for k, d in enumerate(designs):
                for i in range(d["rows"]):
                    row = [repr(v) for v in d["x"][i]] + ["NA"] * (pmax - len(d["spec"]))
                    w.writerow([k] + row + [repr(d["trials"][i]), repr(d["positives"][i])])
        script = os.path.join(tmp, "firth.R")
        with open(script, "w") as f:
            f.write(FIRTH_R)
        result = os.path.join(tmp, "firth.txt")
        subprocess.run(["Rscript", script, data, result], check=True)
        lines = open(result).read().splitlines()
    version = lines[0]
    fits = {}
    for line in lines[1:]:
        k, ok, coef, se = line.split(",")
        fits[int(k)] = (ok == "1", [float(v) for v in coef.split()], [float(v) for v in se.split()])
    return version, fits


def positives_field(d):
    if d["storage"] == "rows":
        bits = "".join("1" if v > 0 else "0" for v in d["positives"])
        bits += "0" * (-len(bits) % 4)
        return "h" + "".join("%x" % int(bits[i:i + 4], 2) for i in range(0, len(bits), 4))
    return " ".join("%d" % v for v in d["positives"])


def main():
    np.seterr(over="ignore")
    out_dir = sys.argv[1] if len(sys.argv) > 1 else "src/test/resources/reference"
    rng = np.random.default_rng(MASTER_SEED)
    ml, firth = [], []
    attempt = 0
    while len(ml) < ML_DESIGNS or len(firth) < FIRTH_DESIGNS:
        attempt += 1
        want_separated = len(firth) < FIRTH_DESIGNS and (len(ml) >= ML_DESIGNS or attempt % 4 == 0)
        d = draw_design(rng, MASTER_SEED * 100_003 + attempt, want_separated)
        if d is None:
            continue
        if want_separated:
            firth.append(d)
            continue
        fit = fit_ml(d)
        if fit is None:
            continue
        d["coef"], d["se"], d["score"], d["cond"] = fit
        ml.append(d)
    firth_version, firth_fits = fit_firth(firth)
    lines = []
    for k, d in enumerate(firth):
        ok, coef, se = firth_fits[k]
        if ok:
            d["coef"], d["se"] = np.array(coef), np.array(se)
            lines.append(("firth", d))
    lines = [("ml", d) for d in ml] + lines
    buf = io.StringIO()
    buf.write("# Source: statsmodels %s GLM(Binomial(logit)).fit(IRLS, tol 1e-12, rtol 1e-15) under numpy %s, "
              "scipy %s (separation: scipy.optimize.linprog HiGHS); Firth: %s "
              "glm(method = \"brglmFit\", type = \"MPL_Jeffreys\", epsilon 1e-13)\n"
              % (statsmodels.__version__, np.__version__, scipy.__version__, firth_version))
    buf.write("# Generated by src/test/reference/random_designs.py, master seed %d; design rebuilt from seed, "
              "spec, rows and cap (see the script)\n" % MASTER_SEED)
    buf.write("id,reference,storage,seed,rows,cap,spec,sha256,trials,positives,coef,se\n")
    for n, (ref, d) in enumerate(lines):
        buf.write(",".join([str(n), ref, d["storage"], str(d["seed"]), str(d["rows"]), str(d["cap"]),
                            " ".join(d["spec"]), design_hash(d["x"], d["trials"]), "%d" % d["trials"].sum(),
                            positives_field(d), " ".join("%.17g" % v for v in d["coef"]),
                            " ".join("%.17g" % v for v in d["se"])]) + "\n")
    with open(os.path.join(out_dir, "random-designs.csv"), "w") as f:
        f.write(buf.getvalue())
    print("wrote %d ML and %d Firth designs after %d attempts" % (len(ml), len(lines) - len(ml), attempt))


if __name__ == "__main__":
    main()
