"""Reference fits for weighted isotonic regression, computed WITHOUT pool-adjacent-violators.

The monotone least-squares problem is solved as a bound-constrained linear least-squares problem
with scipy.optimize.lsq_linear (bounded-variable least squares, Stark & Parker 1995):
a non-decreasing fit is f = A @ theta with f_i = theta_0 + sum_{k=1..i} theta_k, theta_k >= 0 for
k >= 1; rows are scaled by sqrt(w_i). A non-increasing fit uses the negated data.
Run with Debian's /usr/bin/python3:  /usr/bin/python3 test/reference/isotonic_reference.py
"""
import json
import sys

import numpy as np
import scipy
from scipy.optimize import lsq_linear


def fit(y, w, direction):
    y = np.asarray(y, dtype=float)
    w = np.asarray(w, dtype=float)
    s = -1.0 if direction == "non-increasing" else 1.0
    n = len(y)
    a = np.tril(np.ones((n, n)))  # column 0 = intercept, column k = step at k
    sw = np.sqrt(w)
    lb = np.full(n, 0.0)
    lb[0] = -np.inf
    res = lsq_linear(a * sw[:, None], s * y * sw, bounds=(lb, np.full(n, np.inf)),
                     method="bvls", tol=1e-14, max_iter=10000)
    f = s * (a @ res.x)
    return f.tolist(), float(np.sum(w * (y - f) ** 2))


def main():
    rng = np.random.default_rng(20240611)
    cases = []
    # A shallow end-quench-like curve with measurement noise (HRC at successive distances).
    base = [44, 42, 38, 33, 29, 27, 25, 24, 23, 22, 22, 21, 21]
    for direction in ("non-increasing", "non-decreasing"):
        for weighted in (False, True):
            for size in (5, 13, 40):
                if size == 13 and direction == "non-increasing":
                    y = (np.array(base, dtype=float) + rng.normal(0, 1.5, 13)).round(1)
                else:
                    y = (rng.normal(0, 1, size) + (np.arange(size) * (0.2 if direction == "non-decreasing" else -0.2))).round(3)
                w = rng.uniform(0.2, 3.0, size).round(3) if weighted else np.ones(size)
                f, sse = fit(y, w, direction)
                cases.append({"direction": direction, "y": y.tolist(), "w": w.tolist(),
                              "fitted": f, "weightedSse": sse})
    out = {
        "generator": "test/reference/isotonic_reference.py",
        "method": "scipy.optimize.lsq_linear (bvls) on the cumulative-step parametrisation",
        "versions": {"python": sys.version.split()[0], "numpy": np.__version__, "scipy": scipy.__version__},
        "cases": cases,
    }
    with open("test/reference/isotonic.json", "w") as fh:
        json.dump(out, fh, indent=1)


if __name__ == "__main__":
    main()
