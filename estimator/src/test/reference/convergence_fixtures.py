# Regenerates src/test/resources/reference/convergence/*.csv: reference logistic fits of designs that
# are large or moderately conditioned (ten million grouped trials, a million single events, uncentered
# calendar years and ages in days, near-collinear columns, prevalence 0.1 %).
# Run from the estimator directory:  python3 src/test/reference/convergence_fixtures.py [output-dir]
#
# The designs are invented and drawn from a counter-based generator (SplitMix64 of the row index and a
# stream number) using only +, -, *, /, sqrt and floor, which IEEE 754 rounds identically in Python and
# Java; ConvergenceDesigns.java draws the same rows, so only the reference results are stored here.
# Fits: statsmodels GLM (binomial, logit link, IRLS) converged past its default tolerance.
import math
import sys

import numpy as np
import statsmodels
import statsmodels.api as sm

OUT = sys.argv[1] if len(sys.argv) > 1 else "src/test/resources/reference/convergence"
MASK = (1 << 64) - 1


def splitmix(index, stream):
    z = (index * 0x9E3779B97F4A7C15 + stream * 0xD1B54A32D192ED03 + 0x632BE59BD9B4E019) & MASK
    z = ((z ^ (z >> 30)) * 0xBF58476D1CE4E5B9) & MASK
    z = ((z ^ (z >> 27)) * 0x94D049BB133111EB) & MASK
    return z ^ (z >> 31)


def uniform(index, stream):
    """In [0, 1), 53 random bits."""
    return (splitmix(index, stream) >> 11) * (1.0 / 9007199254740992.0)


def grouped_counts(p, trials, index):
    """Positives near trials*p: floor(t p + 3 (u - 1/2) sqrt(t p (1 - p))), clipped to [0, t]."""
    m = trials * p
    k = math.floor(m + 3 * (uniform(index, 9) - 0.5) * math.sqrt(m * (1 - p)))
    return float(min(max(k, 0), trials))


def banded_counts(trials, weeks, base, band_effect, contact_effect, week_effect, divisor):
    """Patterns of age band (5 levels), sex, contact and week 1..weeks, each with the same number of trials."""
    rows = []
    i = 0
    for band in range(5):
        for sex in range(2):
            for contact in range(2):
                for week in range(1, weeks + 1):
                    p = (base * (1 + band_effect * band) * (1 + 0.3 * sex) * (1 + contact_effect * contact)
                         * (1 + week_effect * week) / divisor)
                    x = [1.0] + [1.0 if band == b else 0.0 for b in range(1, 5)] + [sex, contact, week]
                    rows.append((x, trials, grouped_counts(p, trials, i)))
                    i += 1
    return ["(intercept)", "band1", "band2", "band3", "band4", "sex", "contact", "week"], rows


def ten_million():
    """400 patterns x 25,000 trials; prevalence about 4 %."""
    return banded_counts(25000.0, 20, 0.03, 0.2, 0.8, 0.01, 1.9)


def rare():
    """200 patterns x 20,000 trials (4 million); prevalence about 0.1 %."""
    return banded_counts(20000.0, 10, 0.0003, 0.25, 1.5, 0.02, 1)


def uncentered():
    """50,000 single events: calendar year 2024..2028 and age in days 365..31999, both raw; sex."""
    rows = []
    for i in range(50000):
        year = 2024 + math.floor(5 * uniform(i, 1))
        days = 365 + math.floor(31635 * uniform(i, 2))
        sex = math.floor(2 * uniform(i, 3))
        p = 0.04 + 0.03 * sex + 0.02 * (year - 2024) + 0.2 * (days / 32000)
        y = 1.0 if uniform(i, 4) < p else 0.0
        rows.append(([1.0, float(year), float(days), float(sex)], 1.0, y))
    return ["(intercept)", "year", "age_days", "sex"], rows


def collinear():
    """40,000 single events: x1 in [-5, 5) and x2 = x1 + 0.01 (u - 1/2) (1 - r^2 about 1e-6); prevalence about 30 %."""
    rows = []
    for i in range(40000):
        x1 = 10 * (uniform(i, 1) - 0.5)
        x2 = x1 + 0.01 * (uniform(i, 2) - 0.5)
        band = math.floor(3 * uniform(i, 3))
        p = 0.3 + 0.03 * x1 + 0.05 * (band - 1)
        y = 1.0 if uniform(i, 4) < p else 0.0
        rows.append(([1.0, x1, x2, 1.0 if band == 1 else 0.0, 1.0 if band == 2 else 0.0], 1.0, y))
    return ["(intercept)", "x1", "x2", "band1", "band2"], rows


def million():
    """A million single events (row storage): raw age in years 0..99, sex, four-level region; prevalence about 8 %."""
    rows = []
    for i in range(1000000):
        age = math.floor(100 * uniform(i, 1))
        sex = math.floor(2 * uniform(i, 2))
        region = math.floor(4 * uniform(i, 3))
        p = 0.04 + 0.0006 * age + 0.02 * sex + 0.01 * region
        y = 1.0 if uniform(i, 4) < p else 0.0
        rows.append(([1.0, float(age), float(sex)] + [1.0 if region == r else 0.0 for r in (1, 2, 3)], 1.0, y))
    return ["(intercept)", "age", "sex", "region1", "region2", "region3"], rows


def fit_and_write(name, names, rows):
    x = np.array([r[0] for r in rows])
    t = np.array([r[1] for r in rows])
    y = np.array([r[2] for r in rows])
    model = sm.GLM(np.column_stack([y, t - y]), x, family=sm.families.Binomial())
    # statsmodels stops when the deviance changes by at most tol (absolute); 1e-9 is far past its default
    # 1e-8 relative to these deviances (up to 3e6) yet reachable in double precision.
    res = model.fit(method="IRLS", tol=1e-9, maxiter=200)
    assert res.converged, name
    beta = res.params
    eta = x @ beta
    ll = float(np.sum(y * eta - t * np.logaddexp(0, eta)))
    lines = ["# Source: statsmodels %s GLM(Binomial, logit), IRLS tol 1e-9 (numpy %s); "
             "design %s, %d rows, %d trials, %d positives" % (statsmodels.__version__, np.__version__, name,
                                                            len(rows), int(t.sum()), int(y.sum())),
             "# logLik %.17g (binomial coefficients left out)" % ll,
             "column,coef,se"]
    for j, n in enumerate(names):
        lines.append("%s,%.17g,%.17g" % (n, beta[j], res.bse[j]))
    with open("%s/%s-fit.csv" % (OUT, name), "w") as f:
        f.write("\n".join(lines) + "\n")
    print(name, len(rows), int(t.sum()), int(y.sum()), res.converged, res.fit_history["iteration"])


for design in (ten_million, rare, uncentered, collinear, million):
    names, rows = design()
    fit_and_write(design.__name__.replace("_", "-"), names, rows)
