#!/usr/bin/env python3
"""
Agreement fixture for the engine's tests (tests/unit/stats/engine-agreement.json):
seeded random small data sets with the p-values and 95 % interval bounds that
scipy 1.17.1 (general-purpose statistics library) computes for them:
- one-sample t test (scipy.stats.ttest_1samp, its confidence_interval);
- Welch's t test (scipy.stats.ttest_ind, equal_var=False);
- Pearson's r: t-test p and the Fisher z interval (scipy.stats.pearsonr,
  confidence_interval(method=None), which is the Fisher transformation);
- Benjamini–Hochberg adjusted p (scipy.stats.false_discovery_control, "bh").
Values are rounded to 4 decimals so that the data are short exact decimals.

Run: python3 scripts/reference/engine-agreement.py > tests/unit/stats/engine-agreement.json
"""
import json
import sys

import numpy as np
import scipy
import scipy.stats as st

assert scipy.__version__ == "1.17.1", scipy.__version__

rng = np.random.default_rng(20261203)


def data(n, loc=0.0, scale=1.0):
    return [round(float(v), 4) for v in rng.normal(loc, scale, n)]


out = {"source": "scipy 1.17.1 (general-purpose statistics library); scripts/reference/engine-agreement.py",
       "oneSample": [], "welch": [], "pearson": [], "bh": []}
for _ in range(150):
    x = data(int(rng.integers(3, 31)), float(rng.normal(0, 1)), float(rng.uniform(0.2, 3)))
    if np.std(x) == 0:
        continue
    r = st.ttest_1samp(x, 0.0)
    ci = r.confidence_interval(0.95)
    out["oneSample"].append({"x": x, "p": float(r.pvalue), "ciLow": float(ci.low), "ciHigh": float(ci.high)})
for _ in range(150):
    a = data(int(rng.integers(2, 21)), float(rng.normal(0, 1)), float(rng.uniform(0.2, 3)))
    b = data(int(rng.integers(2, 21)), float(rng.normal(0, 1)), float(rng.uniform(0.2, 3)))
    if np.std(a) == 0 and np.std(b) == 0:
        continue
    r = st.ttest_ind(a, b, equal_var=False)
    ci = r.confidence_interval(0.95)
    out["welch"].append({"x1": a, "x2": b, "p": float(r.pvalue), "ciLow": float(ci.low), "ciHigh": float(ci.high)})
for _ in range(150):
    n = int(rng.integers(4, 31))
    x = data(n)
    rho = float(rng.uniform(-0.9, 0.9))
    y = [round(rho * xi + float(e), 4) for xi, e in zip(x, rng.normal(0, 1, n))]
    r = st.pearsonr(x, y)
    ci = r.confidence_interval(0.95)
    out["pearson"].append({"x": x, "y": y, "p": float(r.pvalue), "ciLow": float(ci.low), "ciHigh": float(ci.high)})
for _ in range(100):
    m = int(rng.integers(2, 41))
    p = [float(v) for v in rng.uniform(0, 1, m) ** float(rng.uniform(1, 6))]
    out["bh"].append({"p": p, "adjusted": [float(v) for v in st.false_discovery_control(p, method="bh")]})
json.dump(out, sys.stdout)
sys.stdout.write("\n")
