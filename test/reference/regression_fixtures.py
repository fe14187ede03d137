#!/usr/bin/python3
"""Reference values for test/reference/regression.test.ts.

Run with Debian's Python:  /usr/bin/python3 test/reference/regression_fixtures.py
Writes test/reference/regression-fixtures.json.

The data set is our own: 200 invented heats with 8 composition predictors and an HRC response, drawn with
a fixed numpy seed. OLS results come from statsmodels (OLS, OLSInfluence, variance_inflation_factor,
get_prediction). The ridge fit is the closed form  b = (ZᵀZ + λI)⁻¹ Zᵀ(y − ȳ)  in plain numpy on standardised
predictors (Hoerl & Kennard 1970), with GCV(λ) = n·RSS / (n − tr H)² (Golub, Heath & Wahba 1979), the GCV
minimum found by scipy.optimize.minimize_scalar on log λ.
"""
import json
import os
import platform

import numpy as np
import scipy
import scipy.optimize
import statsmodels
import statsmodels.api as sm
from statsmodels.stats.outliers_influence import OLSInfluence, variance_inflation_factor

SEED = 20240611
rng = np.random.default_rng(SEED)
n = 200
names = ["C", "Mn", "Si", "Ni", "Cr", "Mo", "Cu", "GrainSize"]

# Invented chemistry (wt%) around a carburising grade, with Mn and Cr correlated as in practice.
C = rng.normal(0.20, 0.015, n)
Mn = rng.normal(0.80, 0.05, n)
Si = rng.normal(0.25, 0.04, n)
Ni = rng.normal(0.55, 0.06, n)
Cr = 0.50 + 0.6 * (Mn - 0.80) + rng.normal(0, 0.02, n)
Mo = rng.normal(0.20, 0.02, n)
Cu = rng.normal(0.15, 0.05, n)
G = rng.normal(7.5, 0.7, n)
X = np.column_stack([C, Mn, Si, Ni, Cr, Mo, Cu, G])
# A few unusual heats so leverage and Cook's distance have something to find.
X[7] = [0.245, 0.95, 0.40, 0.72, 0.62, 0.26, 0.30, 9.2]
X[101] = [0.160, 0.66, 0.12, 0.40, 0.36, 0.15, 0.02, 5.6]
beta = np.array([95.0, 9.0, 4.0, 6.0, 14.0, 22.0, 2.0, -0.6])
y = 8.0 + X @ beta + rng.normal(0, 1.2, n)
y[55] += 6.0  # an outlying certificate

exog = sm.add_constant(X)
res = sm.OLS(y, exog).fit()
infl = OLSInfluence(res)

new_rows = np.array([
    [0.20, 0.80, 0.25, 0.55, 0.50, 0.20, 0.15, 7.5],
    [0.23, 0.88, 0.30, 0.62, 0.55, 0.23, 0.20, 8.5],
    [0.17, 0.70, 0.18, 0.45, 0.42, 0.17, 0.05, 6.0],
])
predictions = {}
for level in (0.95, 0.90):
    frame = res.get_prediction(sm.add_constant(new_rows, has_constant="add")).summary_frame(alpha=1 - level)
    predictions[str(level)] = {
        "mean": frame["mean"].tolist(),
        "meanSe": frame["mean_se"].tolist(),
        "confidenceLower": frame["mean_ci_lower"].tolist(),
        "confidenceUpper": frame["mean_ci_upper"].tolist(),
        "predictionLower": frame["obs_ci_lower"].tolist(),
        "predictionUpper": frame["obs_ci_upper"].tolist(),
    }

res0 = sm.OLS(y, X).fit()  # no intercept: statsmodels uses uncentred R² and F about zero

# Ridge, standardised predictors (centred, divided by the population SD, divisor n), intercept unpenalised.
mean = X.mean(axis=0)
sd = X.std(axis=0)  # ddof=0
Z = (X - mean) / sd
yc = y - y.mean()


def ridge(lam):
    A = Z.T @ Z + lam * np.eye(Z.shape[1])
    b = np.linalg.solve(A, Z.T @ yc)
    H = Z @ np.linalg.solve(A, Z.T)
    edf = 1.0 + np.trace(H)  # + 1 for the intercept
    resid = yc - Z @ b
    rss = float(resid @ resid)
    gcv = n * rss / (n - edf) ** 2
    coef = b / sd
    intercept = y.mean() - coef @ mean
    return {
        "lambda": lam,
        "standardizedCoefficients": b.tolist(),
        "intercept": float(intercept),
        "coefficients": coef.tolist(),
        "effectiveDf": float(edf),
        "rss": rss,
        "gcv": float(gcv),
    }


fixed = ridge(5.0)
opt = scipy.optimize.minimize_scalar(lambda t: ridge(float(np.exp(t)))["gcv"], bounds=(np.log(1e-6), np.log(1e6)),
                                     method="bounded", options={"xatol": 1e-10})
gcv_best = ridge(float(np.exp(opt.x)))

out = {
    "generator": "test/reference/regression_fixtures.py",
    "versions": {
        "python": platform.python_version(),
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "statsmodels": statsmodels.__version__,
    },
    "seed": SEED,
    "names": names,
    "X": X.tolist(),
    "y": y.tolist(),
    "ols": {
        "params": res.params.tolist(),
        "bse": res.bse.tolist(),
        "tvalues": res.tvalues.tolist(),
        "pvalues": res.pvalues.tolist(),
        "rsquared": res.rsquared,
        "rsquaredAdj": res.rsquared_adj,
        "sigma": float(np.sqrt(res.scale)),
        "fvalue": res.fvalue,
        "fPvalue": res.f_pvalue,
        "dfResid": res.df_resid,
        "dfModel": res.df_model,
        "normalizedCov": res.normalized_cov_params.tolist(),
        "vif": [variance_inflation_factor(exog, j) for j in range(1, exog.shape[1])],
        "leverage": infl.hat_matrix_diag.tolist(),
        "cooksDistance": infl.cooks_distance[0].tolist(),
        "studentizedExternal": infl.resid_studentized_external.tolist(),
        "pressResiduals": infl.resid_press.tolist(),
    },
    "olsNoIntercept": {
        "params": res0.params.tolist(),
        "bse": res0.bse.tolist(),
        "rsquared": res0.rsquared,
        "rsquaredAdj": res0.rsquared_adj,
        "fvalue": res0.fvalue,
        "fPvalue": res0.f_pvalue,
        "vif": [variance_inflation_factor(X, j) for j in range(X.shape[1])],
    },
    "newRows": new_rows.tolist(),
    "predictions": predictions,
    "ridgeFixed": fixed,
    "ridgeGcv": gcv_best,
}
path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "regression-fixtures.json")
with open(path, "w") as f:
    json.dump(out, f, indent=1)
print("wrote", path, out["versions"])
print("R2", res.rsquared, "max leverage", infl.hat_matrix_diag.max(), "gcv lambda", gcv_best["lambda"])
