"""Reference quantiles for the family-wise prediction-residual thresholds, the bias-corrected published
prediction interval and the T² limits after phase I exclusion, from scipy.stats.

  Sidak (1967):     z* = norm.isf((1 - (1 - alpha)**(1/m)) / 2)
  Bonferroni:       z* = norm.isf(alpha / (2 m))
  t quantile:       t.ppf(0.975, df)  (95 % prediction interval on df = n - 1)
  T² phase I UCL:   ((m-1)^2/m) * beta.ppf(1 - alpha, p/2, (m-p-1)/2)   (Tracy, Young & Mason 1992)
  T² phase II UCL:  p(m+1)(m-1)/(m^2 - m p) * f.ppf(1 - alpha, p, m - p)  (NIST e-Handbook 6.5.4.3.4)
Run with Debian's /usr/bin/python3:  /usr/bin/python3 test/reference/multiplicity_reference.py
"""
import json
import sys

import numpy
import scipy
from scipy.stats import beta, f, norm, t

out = {
    "versions": {"python": sys.version.split()[0], "scipy": scipy.__version__, "numpy": numpy.__version__},
    "familyWise": [],
    "t975": {},
    "t2": [],
}
for m in (1, 4, 5, 13):
    for alpha in (0.05, 0.001):
        out["familyWise"].append({
            "m": m,
            "alpha": alpha,
            "sidakZ": float(norm.isf((1 - (1 - alpha) ** (1 / m)) / 2)),
            "bonferroniZ": float(norm.isf(alpha / (2 * m))),
        })
for df in (9, 11, 19):
    out["t975"][str(df)] = float(t.ppf(0.975, df))
for m, p, alpha in ((30, 3, 0.0027), (27, 3, 0.0027)):
    out["t2"].append({
        "m": m,
        "p": p,
        "alpha": alpha,
        "phaseOneUcl": float((m - 1) ** 2 / m * beta.ppf(1 - alpha, p / 2, (m - p - 1) / 2)),
        "phaseTwoUcl": float(p * (m + 1) * (m - 1) / (m * m - m * p) * f.ppf(1 - alpha, p, m - p)),
    })

if __name__ == "__main__":
    with open("test/reference/multiplicity.json", "w") as fh:
        json.dump(out, fh, indent=2)
        fh.write("\n")
