"""Reference values for the terminal-digit and smoothness checks.

- Pearson chi-square goodness of fit: scipy.stats.chisquare on last-digit counts (10 cells) and on
  even/odd counts (2 cells), for integer HRC readings generated here.
- Quadratic residual sum of squares: numpy.polyfit(deg=2, full=True) on small windows.
- Lower-tail chi-square probability: scipy.stats.chi2.cdf.
Run with Debian's /usr/bin/python3:  /usr/bin/python3 test/reference/data_quality_reference.py
"""
import json
import sys

import numpy as np
import scipy
from scipy import stats


def digit_case(name, values):
    v = np.asarray(values, dtype=int)
    last = np.bincount(v % 10, minlength=10)
    eo = np.array([np.sum(v % 2 == 0), np.sum(v % 2 == 1)])
    c1 = stats.chisquare(last)
    c2 = stats.chisquare(eo)
    return {"name": name, "values": v.tolist(),
            "lastDigit": {"chiSquare": float(c1.statistic), "pValue": float(c1.pvalue)},
            "evenOdd": {"chiSquare": float(c2.statistic), "pValue": float(c2.pvalue)}}


def main():
    rng = np.random.default_rng(7)
    honest = np.rint(rng.normal(35, 8, 300)).astype(int)
    # A reader who rounds a third of the readings to an even number.
    biased = honest.copy()
    idx = rng.choice(len(biased), 150, replace=False)
    biased[idx] = 2 * np.round(biased[idx] / 2).astype(int)
    # Digit preference for 0 and 5.
    fives = honest.copy()
    idx = rng.choice(len(fives), 90, replace=False)
    fives[idx] = 5 * np.round(fives[idx] / 5).astype(int)
    digits = [digit_case("honest", honest), digit_case("even_bias", biased), digit_case("zero_five", fives)]

    windows = []
    for xs, ys in [([1.5, 3, 5, 7, 9], [47, 46, 44, 41, 36]),
                   ([11, 13, 15, 20, 25], [33, 31, 30, 28, 26]),
                   ([30, 35, 40, 45], [25, 25, 24, 24])]:
        _, res, *_ = np.polyfit(xs, ys, 2, full=True)
        windows.append({"x": xs, "y": ys, "rss": float(res[0]) if len(res) else 0.0})

    chi2_lower = [{"x": x, "df": df, "cdf": float(stats.chi2.cdf(x, df))} for x, df in [(20.0, 60), (55.0, 60), (3.0, 12)]]
    out = {
        "generator": "test/reference/data_quality_reference.py",
        "versions": {"python": sys.version.split()[0], "numpy": np.__version__, "scipy": scipy.__version__},
        "digits": digits,
        "quadraticWindows": windows,
        "chi2Lower": chi2_lower,
    }
    with open("test/reference/data_quality.json", "w") as fh:
        json.dump(out, fh)


if __name__ == "__main__":
    main()
