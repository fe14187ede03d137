"""Reference values for src/stats/blandAltman.ts, src/stats/gaugeStudy.ts (test/reference/agreement.test.ts).

Run with Debian's system python: /usr/bin/python3 test/reference/agreement_reference.py
Versions used: python 3.11, numpy 1.24.2, scipy 1.10.1, pandas 1.5.3, statsmodels 0.13.5 (Debian 12 packages).

- Bland-Altman: the PEFR data of Bland & Altman (1986), Lancet 327:307, Table 1 (first reading by each
  meter); intervals from scipy.stats.t, the regression of difference on mean from scipy.stats.linregress.
- Gauge studies: balanced parts x operators x replicates drawn with numpy (seeded); sums of squares from
  statsmodels' anova_lm of the two-way model with interaction; variance components by REML from
  statsmodels' MixedLM with crossed variance components (for a balanced design REML equals the ANOVA
  estimates when none is negative), an estimate independent of the expected-mean-squares arithmetic.
"""
import json
import math
import os
import warnings

import numpy as np
import pandas as pd
import scipy
import scipy.stats as st
import statsmodels
import statsmodels.api as sm
import statsmodels.formula.api as smf

WRIGHT = [494, 395, 516, 434, 476, 557, 413, 442, 650, 433, 417, 656, 267, 478, 178, 423, 427]
MINI = [512, 430, 520, 428, 500, 600, 364, 380, 658, 445, 432, 626, 260, 477, 259, 350, 451]


def bland_altman(a, b, mult):
    a = np.array(a, float)
    b = np.array(b, float)
    d = a - b
    n = len(d)
    bias = d.mean()
    sd = d.std(ddof=1)
    t = st.t.ppf(0.975, n - 1)
    se = sd / math.sqrt(n)
    lse = math.sqrt(3 * sd * sd / n)
    lo, hi = bias - mult * sd, bias + mult * sd
    reg = st.linregress((a + b) / 2, d)
    return {
        "n": n, "bias": bias, "sd": sd, "biasLower": bias - t * se, "biasUpper": bias + t * se,
        "biasP": float(st.ttest_rel(a, b).pvalue),
        "lowerLimit": lo, "upperLimit": hi,
        "lowerLimitLower": lo - t * lse, "lowerLimitUpper": lo + t * lse,
        "upperLimitLower": hi - t * lse, "upperLimitUpper": hi + t * lse,
        "slope": reg.slope, "intercept": reg.intercept, "slopeSe": reg.stderr, "slopeP": reg.pvalue,
    }


def gauge_case(seed, parts, ops, reps, sd_part, sd_op, sd_po, sd_e, pooled=False):
    rng = np.random.default_rng(seed)
    part_eff = rng.normal(0, sd_part, parts)
    op_eff = rng.normal(0, sd_op, ops)
    po_eff = rng.normal(0, sd_po, (parts, ops))
    rows = []
    for i in range(parts):
        for j in range(ops):
            for k in range(reps):
                v = 40 + part_eff[i] + op_eff[j] + po_eff[i, j] + rng.normal(0, sd_e)
                rows.append({"part": f"P{i + 1}", "operator": f"O{j + 1}", "value": round(float(v), 2)})
    df = pd.DataFrame(rows)
    out = {"readings": rows}
    if ops > 1:
        fit = smf.ols("value ~ C(part) * C(operator)", data=df).fit()
        table = sm.stats.anova_lm(fit, typ=2)
        out["ss"] = {
            "part": float(table.loc["C(part)", "sum_sq"]),
            "operator": float(table.loc["C(operator)", "sum_sq"]),
            "interaction": float(table.loc["C(part):C(operator)", "sum_sq"]),
            "error": float(table.loc["Residual", "sum_sq"]),
        }
        # Interaction tested against the error: its F and p are the same in fixed and random models.
        out["interactionP"] = float(table.loc["C(part):C(operator)", "PR(>F)"])
        df["g"] = 1
        vc = {"part": "0 + C(part)", "operator": "0 + C(operator)"}
        if not pooled:
            vc["po"] = "0 + C(part):C(operator)"
        # Without the interaction term (pooled case) REML fits the additive model, as pooling does.
        m = sm.MixedLM.from_formula("value ~ 1", groups="g", vc_formula=vc, re_formula="0", data=df).fit(reml=True)
        names = m.model.exog_vc.names
        out["reml"] = {name: float(v) for name, v in zip(names, m.vcomp)}
        out["reml"]["error"] = float(m.scale)
    else:
        fit = smf.ols("value ~ C(part)", data=df).fit()
        table = sm.stats.anova_lm(fit, typ=2)
        out["ss"] = {"part": float(table.loc["C(part)", "sum_sq"]), "error": float(table.loc["Residual", "sum_sq"])}
        out["partP"] = float(table.loc["C(part)", "PR(>F)"])
    return out


# Houf & Berman (1988) thermal impedance gauge study, 10 parts x 3 operators x 3 readings: the data of
# Montgomery, Introduction to Statistical Quality Control, Example 8.7 (as printed in the SAS/STAT
# PROC VARCOMP documentation, Example 2 "Using the GRR Method"), part, operator, reading.
HOUF = """1 1 37 1 1 38 1 1 37 1 2 41 1 2 41 1 2 40 1 3 41 1 3 42 1 3 41
2 1 42 2 1 41 2 1 43 2 2 42 2 2 42 2 2 42 2 3 43 2 3 42 2 3 43
3 1 30 3 1 31 3 1 31 3 2 31 3 2 31 3 2 31 3 3 29 3 3 30 3 3 28
4 1 42 4 1 43 4 1 42 4 2 43 4 2 43 4 2 43 4 3 42 4 3 42 4 3 42
5 1 28 5 1 30 5 1 29 5 2 29 5 2 30 5 2 29 5 3 31 5 3 29 5 3 29
6 1 42 6 1 42 6 1 43 6 2 45 6 2 45 6 2 45 6 3 44 6 3 46 6 3 45
7 1 25 7 1 26 7 1 27 7 2 28 7 2 28 7 2 30 7 3 29 7 3 27 7 3 27
8 1 40 8 1 40 8 1 40 8 2 43 8 2 42 8 2 42 8 3 43 8 3 43 8 3 41
9 1 25 9 1 25 9 1 25 9 2 27 9 2 29 9 2 28 9 3 26 9 3 26 9 3 26
10 1 35 10 1 34 10 1 34 10 2 35 10 2 35 10 2 34 10 3 35 10 3 34 10 3 35"""


def houf_case():
    v = [int(x) for x in HOUF.split()]
    rows = [{"part": f"P{v[i]}", "operator": f"O{v[i + 1]}", "value": v[i + 2]} for i in range(0, len(v), 3)]
    df = pd.DataFrame(rows)
    table = sm.stats.anova_lm(smf.ols("value ~ C(part) * C(operator)", data=df).fit(), typ=2)
    ss = {k: float(table.loc[n, "sum_sq"]) for k, n in [("part", "C(part)"), ("operator", "C(operator)"), ("interaction", "C(part):C(operator)"), ("error", "Residual")]}
    return {"readings": rows, "ss": ss, "interactionP": float(table.loc["C(part):C(operator)", "PR(>F)"])}


def main():
    # MixedLM warns while it tries optimisers; the estimates are checked against the ANOVA identities in the test.
    warnings.simplefilter("ignore")
    ref = {
        "versions": {"numpy": np.__version__, "scipy": scipy.__version__, "pandas": pd.__version__, "statsmodels": statsmodels.__version__},
        "pefr": {"wright": WRIGHT, "mini": MINI, "twoSd": bland_altman(WRIGHT, MINI, 2.0), "z196": bland_altman(WRIGHT, MINI, 1.96)},
        "gauge": {
            # Real operator and interaction effects: the interaction stays in the model.
            "crossed": gauge_case(17001, 10, 3, 3, 3.0, 0.6, 0.5, 0.4),
            # No interaction: its p-value is large and the term is pooled.
            "pooled": gauge_case(17006, 10, 3, 2, 3.0, 0.5, 0.0, 0.4, pooled=True),
            # One laboratory, duplicate tests.
            "oneOperator": gauge_case(17003, 12, 1, 2, 2.5, 0.0, 0.0, 0.5),
            "houf": houf_case(),
        },
    }
    here = os.path.dirname(os.path.abspath(__file__))
    with open(os.path.join(here, "agreement.json"), "w") as f:
        json.dump(ref, f, indent=1)
        f.write("\n")
    print(json.dumps({k: v for k, v in ref["gauge"]["crossed"].items() if k != "readings"}, indent=1))
    print(json.dumps({k: v for k, v in ref["gauge"]["pooled"].items() if k != "readings"}, indent=1))
    print(ref["pefr"]["twoSd"])


if __name__ == "__main__":
    main()
