"""Fits a logistic model to one window's complete-case events with statsmodels (reference for
ReplayAgainstStatsmodelsTest). Input: CSV with a header; the last column is the 0/1 outcome, the
others are design columns without the intercept. Output: JSON with the column names, coefficients
and standard errors, intercept first."""
import json
import sys

import numpy as np
import statsmodels
import statsmodels.api as sm

data = np.genfromtxt(sys.argv[1], delimiter=",", names=True)
names = list(data.dtype.names)
y = data[names[-1]]
x = np.column_stack([data[n] for n in names[:-1]])
fit = sm.Logit(y, sm.add_constant(x, has_constant="add")).fit(disp=0, method="newton", tol=1e-12, maxiter=100)
print(json.dumps({"source": "statsmodels " + statsmodels.__version__ + " Logit (Newton)",
                  "columns": ["intercept"] + names[:-1],
                  "coef": [float(v) for v in fit.params],
                  "se": [float(v) for v in fit.bse],
                  "events": int(len(y))}))
