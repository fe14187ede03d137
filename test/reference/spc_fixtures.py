#!/usr/bin/python3
"""Reference values for the SPC half of src/stats, from Debian's scipy/statsmodels/numpy.

Run:  /usr/bin/python3 test/reference/spc_fixtures.py   (writes test/reference/spc-fixtures.json)
All data sets are our own, generated here with fixed numpy seeds. Every value is computed by the
reference libraries or by plain numpy code written independently of the TypeScript sources.
"""
import json
import math
import os
import platform

import numpy as np
import scipy
import statsmodels
from scipy import integrate, special, stats
from statsmodels.stats.diagnostic import normal_ad

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "spc-fixtures.json")


def f(x):
    return [float(v) for v in x]


fix = {
    "generator": "test/reference/spc_fixtures.py",
    "versions": {
        "python": platform.python_version(),
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "statsmodels": statsmodels.__version__,
    },
}

# ---------------------------------------------------------------- distributions (scipy.stats)
dist = {"normalCdf": [], "normalQuantile": [], "tCdf": [], "tQuantile": [], "chiSquareCdf": [],
        "chiSquareQuantile": [], "fCdf": [], "fQuantile": [], "betaCdf": [], "betaQuantile": []}
for x in [-8.0, -6.0, -4.5, -3.0, -1.0, 0.0, 0.5, 2.0, 3.0]:
    dist["normalCdf"].append({"x": x, "value": float(stats.norm.cdf(x))})
for p in [1e-9, 0.00135, 0.025, 0.5, 0.975, 0.99865]:
    dist["normalQuantile"].append({"p": p, "value": float(stats.norm.ppf(p))})
for x, df in [(-3.0, 4), (1.5, 10), (2.2, 30), (0.3, 1)]:
    dist["tCdf"].append({"x": x, "df": df, "value": float(stats.t.cdf(x, df))})
for p, df in [(0.975, 5), (0.995, 24), (0.025, 99), (0.9, 2)]:
    dist["tQuantile"].append({"p": p, "df": df, "value": float(stats.t.ppf(p, df))})
for x, df in [(3.0, 5), (40.0, 24), (0.5, 1), (120.0, 99)]:
    dist["chiSquareCdf"].append({"x": x, "df": df, "value": float(stats.chi2.cdf(x, df))})
for p, df in [(0.025, 24), (0.975, 24), (0.0027, 13), (0.9973, 13), (0.5, 1), (0.025, 199)]:
    dist["chiSquareQuantile"].append({"p": p, "df": df, "value": float(stats.chi2.ppf(p, df))})
for x, d1, d2 in [(2.5, 5, 20), (0.7, 13, 87), (4.0, 3, 7)]:
    dist["fCdf"].append({"x": x, "d1": d1, "d2": d2, "value": float(stats.f.cdf(x, d1, d2))})
for p, d1, d2 in [(0.9973, 5, 55), (0.99, 13, 87), (0.95, 2, 10), (0.9973, 13, 987)]:
    dist["fQuantile"].append({"p": p, "d1": d1, "d2": d2, "value": float(stats.f.ppf(p, d1, d2))})
for x, a, b in [(0.3, 2.5, 26.0), (0.05, 0.5, 10.0), (0.9, 6.5, 43.0)]:
    dist["betaCdf"].append({"x": x, "a": a, "b": b, "value": float(stats.beta.cdf(x, a, b))})
for p, a, b in [(0.9973, 2.5, 27.0), (0.99, 6.5, 43.0), (0.5, 1.0, 1.0), (0.9973, 6.5, 493.0)]:
    dist["betaQuantile"].append({"p": p, "a": a, "b": b, "value": float(stats.beta.ppf(p, a, b))})
fix["distributions"] = dist

# ---------------------------------------------------------------- Anderson–Darling (statsmodels)
rng = np.random.default_rng(20240601)
ad_sets = {
    "normal_n10": rng.normal(45.0, 2.0, 10),
    "normal_n25": rng.normal(38.0, 1.5, 25),
    "normal_n200": rng.normal(30.0, 3.0, 200),
    "lognormal_n50": np.exp(rng.normal(3.0, 0.6, 50)),
    "uniform_n30": rng.uniform(20.0, 30.0, 30),
    "exponential_n100": rng.exponential(2.0, 100),
    "t3_n60": rng.standard_t(3, 60),
    # Blom normal scores: A*² < 0.2 (first branch of the p-value formula)
    "normal_scores_n40": stats.norm.ppf((np.arange(1, 41) - 0.375) / 40.25) * 2.0 + 41.0,
    # Gross contamination: A*² > 13 (p reported as 0)
    "contaminated_n100": np.concatenate([rng.normal(40.0, 1.0, 85), np.full(15, 80.0)]),
}
ad = []
for name, x in ad_sets.items():
    a2, p = normal_ad(x)
    ad.append({"name": name, "x": f(x), "a2": float(a2), "pValue": float(p)})
fix["andersonDarling"] = ad

# ---------------------------------------------------------------- Shewhart constants (scipy quad)
def d2_quad(n):
    g = lambda x: 1.0 - stats.norm.cdf(x) ** n - stats.norm.sf(x) ** n
    v, _ = integrate.quad(g, -np.inf, np.inf, epsabs=1e-13, epsrel=1e-13, limit=500)
    return v


def ew2_quad(n):
    # E[W^2] = 2 ∫∫_{x<y} [1 − (1−Φ(x))^n − Φ(y)^n + (Φ(y)−Φ(x))^n] dy dx
    def h(y, x):
        return 1.0 - stats.norm.sf(x) ** n - stats.norm.cdf(y) ** n + (stats.norm.cdf(y) - stats.norm.cdf(x)) ** n
    v, _ = integrate.dblquad(h, -12.0, 12.0, lambda x: x, lambda x: 12.0, epsabs=1e-11, epsrel=1e-11)
    return 2.0 * v


consts = []
for n in list(range(2, 26)) + [30, 50]:
    d2 = d2_quad(n)
    d3 = math.sqrt(ew2_quad(n) - d2 * d2)
    c4 = math.sqrt(2.0 / (n - 1)) * math.exp(special.gammaln(n / 2) - special.gammaln((n - 1) / 2))
    consts.append({"n": n, "d2": d2, "d3": d3, "c4": c4})
fix["shewhartConstants"] = consts
cmap = {c["n"]: c for c in consts}

# ---------------------------------------------------------------- subgroup charts (numpy)
rng = np.random.default_rng(7)
sizes = [5, 5, 4, 6, 5, 3, 5, 5, 7, 5, 4, 5]
groups = [rng.normal(42.0, 1.2, s) for s in sizes]
groups[8] = groups[8] + 2.5  # a shifted subgroup
allv = np.concatenate(groups)
grand = float(allv.mean())
R = np.array([g.max() - g.min() for g in groups])
S = np.array([g.std(ddof=1) for g in groups])
sig_r = float(np.mean([R[i] / cmap[s]["d2"] for i, s in enumerate(sizes)]))
sig_s = float(np.mean([S[i] / cmap[s]["c4"] for i, s in enumerate(sizes)]))
sub = {"groups": [f(g) for g in groups], "grandMean": grand, "xbarR": {}, "xbarS": {}}
for key, sig, disp, mid, spread in [
    ("xbarR", sig_r, R, lambda s: cmap[s]["d2"], lambda s: cmap[s]["d3"]),
    ("xbarS", sig_s, S, lambda s: cmap[s]["c4"], lambda s: math.sqrt(1 - cmap[s]["c4"] ** 2)),
]:
    sub[key] = {
        "sigma": sig,
        "dispersions": f(disp),
        "ucl": [grand + 3 * sig / math.sqrt(s) for s in sizes],
        "lcl": [grand - 3 * sig / math.sqrt(s) for s in sizes],
        "dispersionUcl": [(mid(s) + 3 * spread(s)) * sig for s in sizes],
        "dispersionLcl": [max(0.0, (mid(s) - 3 * spread(s)) * sig) for s in sizes],
    }
fix["subgroupCharts"] = sub

# ---------------------------------------------------------------- EWMA and CUSUM (numpy loops)
rng = np.random.default_rng(11)
series = np.concatenate([rng.normal(40.0, 1.0, 30), rng.normal(41.0, 1.0, 30)])
lam, L, tgt, sd = 0.2, 2.86, 40.0, 1.0
z = []
prev = tgt
for i, x in enumerate(series, start=1):
    prev = lam * x + (1 - lam) * prev
    z.append(prev)
half = [L * sd * math.sqrt(lam / (2 - lam) * (1 - (1 - lam) ** (2 * i))) for i in range(1, len(series) + 1)]
ew_sig = [i for i in range(len(series)) if abs(z[i] - tgt) > half[i]]
fix["ewma"] = {"x": f(series), "target": tgt, "sigma": sd, "lambda": lam, "L": L, "z": z,
               "ucl": [tgt + h for h in half], "lcl": [tgt - h for h in half], "signals": ew_sig}
cus = {"x": f(series), "target": tgt, "sigma": sd, "cases": []}
for k, h, hs in [(0.5, 4.0, 0.0), (0.5, 4.0, 2.0), (0.25, 8.0, 0.0)]:
    cp = cm = hs
    up, lo = [], []
    for x in series:
        zz = (x - tgt) / sd
        cp = max(0.0, cp + zz - k)
        cm = max(0.0, cm - zz - k)
        up.append(cp)
        lo.append(cm)
    first = next((i for i in range(len(series)) if up[i] > h or lo[i] > h), None)
    cus["cases"].append({"k": k, "h": h, "headStart": hs, "upper": up, "lower": lo, "firstSignal": first})
fix["cusum"] = cus

# ---------------------------------------------------------------- capability (numpy/scipy)
rng = np.random.default_rng(3)
cap_x = rng.normal(36.2, 1.4, 60)
d2_2 = 2 / math.sqrt(math.pi)
# Effective degrees of freedom of MR-bar/d2: 0.62 (n - 1) (Cryer & Ryan 1990, J. Quality Technology 22(3);
# constant from memory). The sample SD has n - 1.
MR_DF_FACTOR = 0.62


def capability_ref(x, lsl, usl, target, conf=0.95):
    n = len(x)
    mu = float(np.mean(x))
    so = float(np.std(x, ddof=1))
    sw = float(np.mean(np.abs(np.diff(x)))) / d2_2
    dfw = MR_DF_FACTOR * (n - 1)
    out = {"n": n, "mean": mu, "sigmaOverall": so, "sigmaWithin": sw, "dfWithin": dfw, "dfOverall": n - 1}
    for pre, s, nu in [("c", sw, dfw), ("p", so, n - 1)]:
        u = None if usl is None else (usl - mu) / (3 * s)
        l = None if lsl is None else (mu - lsl) / (3 * s)
        p = None if (usl is None or lsl is None) else (usl - lsl) / (6 * s)
        k = min(v for v in [u, l] if v is not None)
        out[pre + "p"], out[pre + "pu"], out[pre + "pl"], out[pre + "pk"] = p, u, l, k
        a = 1 - conf
        if p is not None:
            out[pre + "pInterval"] = [p * math.sqrt(stats.chi2.ppf(a / 2, nu) / nu),
                                      p * math.sqrt(stats.chi2.ppf(1 - a / 2, nu) / nu)]
        zq = stats.norm.ppf(1 - a / 2)
        hw = zq * math.sqrt(1 / (9 * n) + k * k / (2 * nu))
        out[pre + "pkInterval"] = [k - hw, k + hw]
        below = 0.0 if lsl is None else 1e6 * stats.norm.cdf((lsl - mu) / s)
        above = 0.0 if usl is None else 1e6 * stats.norm.sf((usl - mu) / s)
        out["ppm_" + ("within" if pre == "c" else "overall")] = [below, above]
    out["cpm"] = None if (target is None or lsl is None or usl is None) else (usl - lsl) / (6 * math.sqrt(so ** 2 + (mu - target) ** 2))
    out["observedPpm"] = [1e6 * float(np.sum(x < lsl)) / n if lsl is not None else 0.0,
                          1e6 * float(np.sum(x > usl)) / n if usl is not None else 0.0]
    q = np.quantile(x, [0.00135, 0.5, 0.99865])  # numpy 'linear' = Hyndman & Fan type 7
    out["quantiles"] = f(q)
    return out


fix["capability"] = {
    "x": f(cap_x),
    "cases": [
        {"lsl": 32.0, "usl": 40.0, "target": 36.0, "conf": 0.95, "ref": capability_ref(cap_x, 32.0, 40.0, 36.0)},
        {"lsl": 33.0, "usl": None, "target": None, "conf": 0.90, "ref": capability_ref(cap_x, 33.0, None, None, 0.90)},
        {"lsl": None, "usl": 38.5, "target": None, "conf": 0.99, "ref": capability_ref(cap_x, None, 38.5, None, 0.99)},
    ],
}

# ---------------------------------------------------------------- quantiles (numpy, type 7)
rng = np.random.default_rng(5)
qx = rng.normal(0, 1, 37)
ps = [0.0, 0.00135, 0.1, 0.25, 0.5, 0.9, 0.99865, 1.0]
fix["quantiles"] = {"x": f(qx), "p": ps, "values": f(np.quantile(qx, ps))}

# ---------------------------------------------------------------- Hotelling T² (numpy)
rng = np.random.default_rng(13)
p = 5
A = rng.normal(0, 1, (p, p))
cov = A @ A.T + p * np.eye(p)
m = 60
X = rng.multivariate_normal(np.linspace(50, 30, p), cov, m)
X[17] += np.array([12.0, -9.0, 0.0, 7.0, 10.0])  # two disturbed heats
X[42, 2] += 14.0
alpha = 0.0027


def t2_all(X, mean, S):
    Si = np.linalg.inv(S)
    D = X - mean
    return np.einsum("ij,jk,ik->i", D, Si, D)


mean = X.mean(axis=0)
S = np.cov(X, rowvar=False, ddof=1)
t2 = t2_all(X, mean, S)
ucl1 = (m - 1) ** 2 / m * stats.beta.ppf(1 - alpha, p / 2, (m - p - 1) / 2)
ucl2 = p * (m + 1) * (m - 1) / (m * m - m * p) * stats.f.ppf(1 - alpha, p, m - p)
contrib = []
for i in [17, 42, 0]:
    cond = []
    for j in range(p):
        keep = [c for c in range(p) if c != j]
        t2_minus = t2_all(X[i:i + 1, keep], mean[keep], S[np.ix_(keep, keep)])[0]
        cond.append(float(t2[i] - t2_minus))
    unc = [float((X[i, j] - mean[j]) ** 2 / S[j, j]) for j in range(p)]
    contrib.append({"index": i, "conditional": cond, "unconditional": unc})
# Successive-difference covariance (Holmes & Mergen 1993)
V = np.diff(X, axis=0)
S2 = V.T @ V / (2 * (m - 1))


# Ledoit–Wolf (2004) shrinkage, written from the paper's Lemmas 3.2–3.4
def ledoit_wolf(X):
    n, p = X.shape
    Xc = X - X.mean(axis=0)
    Sn = Xc.T @ Xc / n
    mu = np.trace(Sn) / p
    nrm = lambda M: np.sum(M * M) / p
    d2 = nrm(Sn - mu * np.eye(p))
    b2bar = sum(nrm(np.outer(x, x) - Sn) for x in Xc) / n ** 2
    b2 = min(b2bar, d2)
    return (b2 / d2) * mu * np.eye(p) + (1 - b2 / d2) * Sn, b2 / d2


LW, shrink = ledoit_wolf(X)
Xsmall = X[:5]  # m = 5 <= p + 1: only the shrinkage estimator applies
LWs, shrink_s = ledoit_wolf(Xsmall)
newX = rng.multivariate_normal(np.linspace(50, 30, p), cov, 8)
newX[3] += np.array([0.0, 0.0, 12.0, 0.0, -12.0])
fix["hotelling"] = {
    "X": [f(r) for r in X], "alpha": alpha, "mean": f(mean), "covariance": [f(r) for r in S],
    "t2": f(t2), "uclPhaseOne": float(ucl1), "uclPhaseTwo": float(ucl2),
    "signals": [int(i) for i in np.where(t2 > ucl1)[0]],
    "contributions": contrib,
    "successiveDifference": [f(r) for r in S2],
    "successiveDifferenceT2": f(t2_all(X, mean, S2)),
    "ledoitWolf": [f(r) for r in LW], "ledoitWolfShrinkage": float(shrink),
    "small": {"X": [f(r) for r in Xsmall], "ledoitWolf": [f(r) for r in LWs], "shrinkage": float(shrink_s),
              "t2": f(t2_all(Xsmall, Xsmall.mean(axis=0), LWs)), "chi2Ucl": float(stats.chi2.ppf(1 - alpha, p))},
    "phaseTwo": {"X": [f(r) for r in newX], "t2": f(t2_all(newX, mean, S))},
}

with open(OUT, "w") as fh:
    json.dump(fix, fh, indent=1)
print("wrote", OUT)
