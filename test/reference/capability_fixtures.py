#!/usr/bin/python3
"""Reference values for capability on supply data (issue: mixed mills, whole-HRC readings, skew).

Run:  /usr/bin/python3 test/reference/capability_fixtures.py   (writes test/reference/capability-fixtures.json)
Debian's python3-scipy / python3-statsmodels / python3-numpy; versions are written into the JSON.
Data sets are our own, generated here with fixed numpy seeds. Every value is computed by the reference
libraries (statsmodels proportion_confint, scipy.stats.boxcox_normmax, scipy.stats.nct, scipy.optimize)
or by plain numpy written independently of the TypeScript sources.
"""
import json
import math
import os
import platform

import numpy as np
import scipy
import statsmodels
from scipy import optimize, stats
from statsmodels.stats.proportion import proportion_confint

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "capability-fixtures.json")


def f(x):
    return [float(v) for v in x]


fix = {
    "generator": "test/reference/capability_fixtures.py",
    "versions": {
        "python": platform.python_version(),
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "statsmodels": statsmodels.__version__,
    },
}

# --- Clopper-Pearson (statsmodels proportion_confint method="beta") -------------------------------
cp = []
for x, n in [(20000, 20000), (0, 20000), (19990, 20000), (7, 50), (1, 10), (9, 10), (500, 1000)]:
    lo, hi = proportion_confint(x, n, alpha=0.05, method="beta")
    cp.append({"x": x, "n": n, "lower": float(lo), "upper": float(hi)})
fix["clopperPearson"] = cp

if __name__ == "__main__":
    with open(OUT, "w") as fh:
        json.dump(fix, fh, indent=1)
    print("wrote", OUT)
