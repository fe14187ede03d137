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

# --- Grouped-data chi-square test of normality (plain numpy/scipy, written from the published rule) ---
from statsmodels.stats.diagnostic import normal_ad


def grouped_test(x, h):
    x = np.asarray(x, float)
    n = len(x)
    g = np.round(x / h).astype(int)
    lo, hi = g.min(), g.max()
    counts = np.array([(g == k).sum() for k in range(lo, hi + 1)])
    mean = x.mean()
    s2 = x.var(ddof=1)
    sd0 = math.sqrt(max(s2 - h * h / 12, s2 / 4))
    m = len(counts)
    upper = [np.inf if j == m - 1 else (lo + j + 0.5) * h for j in range(m)]
    lower = [-np.inf if j == 0 else (lo + j - 0.5) * h for j in range(m)]
    prob = lambda a, b, mu, sd: stats.norm.cdf((b - mu) / sd) - stats.norm.cdf((a - mu) / sd)
    groups, cur = [], None
    for j in range(m):
        if cur is None:
            cur = [lower[j], upper[j], 0]
        cur[1] = upper[j]
        cur[2] += counts[j]
        if n * prob(cur[0], cur[1], mean, sd0) >= 5:
            groups.append(cur)
            cur = None
    if cur is not None:
        if groups:
            groups[-1][1] = cur[1]
            groups[-1][2] += cur[2]
        else:
            groups.append(cur)
    groups[-1][1] = np.inf
    obs = np.array([gr[2] for gr in groups], float)
    a = np.array([gr[0] for gr in groups])
    b = np.array([gr[1] for gr in groups])

    def nll(t):
        mu, sd = t[0], math.exp(t[1])
        p = stats.norm.cdf((b - mu) / sd) - stats.norm.cdf((a - mu) / sd)
        if np.any(p[obs > 0] <= 0):
            return np.inf
        return -np.sum(obs[obs > 0] * np.log(p[obs > 0]))

    res = optimize.minimize(nll, [mean, math.log(sd0)], method="Nelder-Mead", options={"xatol": 1e-10, "fatol": 1e-12, "maxiter": 20000})
    mu, sd = res.x[0], math.exp(res.x[1])
    e = n * (stats.norm.cdf((b - mu) / sd) - stats.norm.cdf((a - mu) / sd))
    x2 = float(np.sum((obs - e) ** 2 / e))
    df = len(groups) - 3
    return {"mu": float(mu), "sigma": float(sd), "cells": len(groups), "observed": f(obs), "statistic": x2, "df": df, "pValue": float(stats.chi2.sf(x2, df)) if df >= 1 else None}


rng = np.random.default_rng(20261204)
whole_normal = np.round(36.3 + 1.5 * rng.standard_normal(100))
skew_raw = 28 + rng.gamma(2.0, 2.0, 150)
skew_small = 2 + rng.gamma(2.0, 2.0, 150)
whole_skew = np.round(skew_raw)
fix["grouped"] = [
    {"name": "whole-HRC normal, n = 100", "values": f(whole_normal), "step": 1.0, **grouped_test(whole_normal, 1.0), "andersonDarlingP": float(normal_ad(whole_normal)[1])},
    {"name": "whole-HRC skewed (28 + Gamma(2, 2)), n = 150", "values": f(whole_skew), "step": 1.0, **grouped_test(whole_skew, 1.0), "andersonDarlingP": float(normal_ad(whole_skew)[1])},
]

# --- Box-Cox maximum likelihood (scipy.stats.boxcox_normmax, method "mle") and fitted indices --------
def boxcox_indices(x, lsl, usl):
    lam = float(stats.boxcox_normmax(x, method="mle"))
    y = stats.boxcox(x, lmbda=lam)
    my, sy = float(np.mean(y)), float(np.std(y, ddof=1))
    inv = lambda v: float(np.power(lam * v + 1, 1 / lam)) if abs(lam) > 1e-12 else math.exp(v)
    q = lambda p: inv(my + stats.norm.ppf(p) * sy)
    x00135, x50, x99865 = q(0.00135), q(0.5), q(0.99865)
    t = lambda v: float(stats.boxcox(np.array([v]), lmbda=lam)[0])
    ppu = (usl - x50) / (x99865 - x50)
    ppl = (x50 - lsl) / (x50 - x00135)
    ppm = 1e6 * (stats.norm.cdf((t(lsl) - my) / sy) + stats.norm.sf((t(usl) - my) / sy))
    return {"lambda": lam, "llf": float(stats.boxcox_llf(lam, x)), "mean": my, "sd": sy, "x00135": x00135, "x50": x50, "x99865": x99865, "pp": (usl - lsl) / (x99865 - x00135), "ppu": ppu, "ppl": ppl, "ppk": min(ppu, ppl), "expectedPpm": float(ppm)}


lognormal = np.exp(rng.normal(math.log(8.0), 0.35, 120))
fix["boxCox"] = [
    {"name": "2 + Gamma(2, 2), n = 150", "values": f(skew_small), "lsl": 1.5, "usl": 25.0, **boxcox_indices(skew_small, 1.5, 25.0)},
    {"name": "lognormal(ln 8, 0.35), n = 120", "values": f(lognormal), "lsl": 2.0, "usl": 25.0, **boxcox_indices(lognormal, 2.0, 25.0)},
]

# --- Exact normal tolerance factors (ISO 16269-6; Hahn & Meeker 1991) ---------------------------------
from scipy import integrate


def k1_exact(n, p, g):
    return float(stats.nct.ppf(g, n - 1, stats.norm.ppf(p) * math.sqrt(n)) / math.sqrt(n))


def k2_exact(n, p, g):
    # Odeh & Owen: gamma = sqrt(2n/pi) * int_0^inf P(chi2_{n-1} > (n-1) r(x)^2 / k^2) exp(-n x^2 / 2) dx,
    # r(x) solving Phi(x + r) - Phi(x - r) = p.
    def r_of(x):
        return optimize.brentq(lambda r: stats.norm.cdf(x + r) - stats.norm.cdf(x - r) - p, 0, 50)

    def cover(k):
        fn = lambda x: stats.chi2.sf((n - 1) * r_of(x) ** 2 / k ** 2, n - 1) * math.exp(-n * x * x / 2)
        return math.sqrt(2 * n / math.pi) * integrate.quad(fn, 0, 10 / math.sqrt(n), limit=200, epsabs=1e-12)[0]

    return float(optimize.brentq(lambda k: cover(k) - g, 0.5, 30, xtol=1e-12))


fix["tolerance"] = [
    {"n": n, "p": p, "gamma": g, "k1": k1_exact(n, p, g), "k2": k2_exact(n, p, g)}
    for (n, p, g) in [(20, 0.95, 0.95), (50, 0.99, 0.95), (100, 0.9962, 0.9962), (30, 0.9, 0.9), (200, 0.999, 0.95)]
]

# --- Johnson SU / SB population quantiles (scipy.stats.johnsonsu / johnsonsb) -------------------------
# scipy's form: z = a + b*asinh((x - loc)/scale) (SU), z = a + b*ln(u/(1 - u)), u = (x - loc)/scale (SB).
zj = 0.524
johnson = []
for fam, dist, a, b, loc, scale in [("SU", stats.johnsonsu, -0.8, 1.6, 30.0, 2.5), ("SU", stats.johnsonsu, 0.5, 2.2, 36.0, 4.0), ("SB", stats.johnsonsb, 0.7, 1.3, 24.0, 20.0), ("SB", stats.johnsonsb, -0.4, 0.9, 20.0, 30.0)]:
    qs = {k: float(dist.ppf(stats.norm.cdf(m * zj), a, b, loc=loc, scale=scale)) for k, m in [("xm3", -3), ("xm1", -1), ("x1", 1), ("x3", 3)]}
    lsl, usl = loc + 0.1 * scale, loc + 0.8 * scale
    if fam == "SU":
        lsl, usl = float(dist.ppf(0.0005, a, b, loc=loc, scale=scale)), float(dist.ppf(0.999, a, b, loc=loc, scale=scale))
    johnson.append({"family": fam, "gamma": a, "eta": b, "epsilon": loc, "lambda": scale, "quantiles": qs,
                    "lsl": lsl, "usl": usl,
                    "x00135": float(dist.ppf(0.00135, a, b, loc=loc, scale=scale)), "x50": float(dist.ppf(0.5, a, b, loc=loc, scale=scale)), "x99865": float(dist.ppf(0.99865, a, b, loc=loc, scale=scale)),
                    "expectedPpm": float(1e6 * (dist.cdf(lsl, a, b, loc=loc, scale=scale) + dist.sf(usl, a, b, loc=loc, scale=scale)))})
fix["johnson"] = johnson

if __name__ == "__main__":
    with open(OUT, "w") as fh:
        json.dump(fix, fh, indent=1)
    print("wrote", OUT)
