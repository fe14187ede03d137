"""Reference values for src/stats/censoredNormal.ts: the censored-normal maximum-likelihood estimate of
(mu, sigma) found by direct numerical maximisation of the log-likelihood with scipy.optimize (Nelder-Mead,
then BFGS), independent of our EM iteration.

Run with Debian's python3 (scipy 1.10.1): /usr/bin/python3 test/reference/censored_normal_reference.py
Writes test/reference/censored_normal.json.
"""
import json
import numpy as np
from scipy import optimize, stats

rng = np.random.default_rng(20261204)


def mle(values, censoring):
    x = np.asarray(values, float)
    below = np.array([c == "below" for c in censoring])
    above = np.array([c == "above" for c in censoring])
    obs = ~(below | above)

    def nll(theta):
        mu, log_s = theta
        s = np.exp(log_s)
        ll = stats.norm.logpdf(x[obs], mu, s).sum()
        ll += stats.norm.logcdf(x[below], mu, s).sum()
        ll += stats.norm.logsf(x[above], mu, s).sum()
        return -ll

    start = [x[obs].mean(), np.log(x[obs].std())]
    r = optimize.minimize(nll, start, method="Nelder-Mead", options={"xatol": 1e-12, "fatol": 1e-14, "maxiter": 20000})
    r = optimize.minimize(nll, r.x, method="BFGS", options={"gtol": 1e-10})
    return float(r.x[0]), float(np.exp(r.x[1])), float(-r.fun)


cases = []
# 1. Hardness at a far distance, whole HRC, readings under 20 written "<20" (left-censored at 20).
v = np.round(rng.normal(22.0, 2.5, 60))
cens = ["below" if y < 20 else None for y in v]
vals = [20.0 if y < 20 else float(y) for y in v]
cases.append(("left-censored at 20 HRC, n = 60", vals, cens))
# 2. Both sides: under 20 and over 30.
v = np.round(rng.normal(25.0, 3.0, 80))
cens = ["below" if y < 20 else "above" if y > 30 else None for y in v]
vals = [20.0 if y < 20 else 30.0 if y > 30 else float(y) for y in v]
cases.append(("censored below 20 and above 30, n = 80", vals, cens))
# 3. Nothing censored: the MLE is the mean and the n-divisor SD.
v = [float(y) for y in np.round(rng.normal(40.0, 1.5, 25), 1)]
cases.append(("nothing censored, n = 25", v, [None] * len(v)))

out = []
for name, vals, cens in cases:
    mu, s, ll = mle(vals, cens)
    out.append({"name": name, "values": vals, "censoring": cens, "mean": mu, "sigmaMle": s, "logLikelihood": ll})

import scipy
with open("test/reference/censored_normal.json", "w") as f:
    json.dump({"generator": f"scipy {scipy.__version__}, numpy {np.__version__}", "cases": out}, f, indent=1)
print("wrote", len(out), "cases")
