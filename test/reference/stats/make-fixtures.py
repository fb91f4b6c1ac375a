"""Reference values for app/core/stats from scipy and numpy on this machine.

Run from the repository root:  python3 test/reference/stats/make-fixtures.py
Writes distributions.json, bh.json, chisq.json, anova.json and psi.json next to this script.
Python's json module prints floats with repr, which round-trips IEEE doubles exactly.
"""

import json
import pathlib

import numpy as np
import scipy
from scipy import stats

HERE = pathlib.Path(__file__).parent
SOURCE = f"scipy {scipy.__version__}, numpy {np.__version__}"


def write(name, payload):
    payload = {"source": SOURCE, **payload}
    (HERE / name).write_text(json.dumps(payload, indent=1) + "\n")


# Distributions: include far tails, where 1 - cdf would round to 0.
write("distributions.json", {
    "normalCdf": [[x, stats.norm.cdf(x)] for x in [-36.0, -20.0, -8.5, -3.0, -1.96, -0.5, 0.0, 0.25, 1.0, 2.5, 6.0]],
    "normalSf": [[x, stats.norm.sf(x)] for x in [-3.0, 0.0, 1.0, 1.959963984540054, 5.0, 9.0, 20.0, 37.0]],
    "normalQuantile": [[p, stats.norm.ppf(p)] for p in [1e-300, 1e-20, 1e-9, 0.001, 0.025, 0.2, 0.5, 0.8, 0.975, 0.999999]],
    "chiSquareSf": [[x, df, stats.chi2.sf(x, df)] for x, df in [
        (0.5, 1), (3.841458820694124, 1), (2.7777777777777777, 2), (10.0, 3), (30.0, 12), (150.0, 2),
        (300.0, 2), (500.0, 40), (1e-3, 5), (80.0, 100), (2000.0, 300)]],
    "fSf": [[x, d1, d2, stats.f.sf(x, d1, d2)] for x, d1, d2 in [
        (0.2, 3, 10), (1.0, 5, 5), (3.5, 2, 27), (4.0, 1, 1000), (25.0, 4, 200), (80.0, 9, 5000),
        (400.0, 3, 90), (1e-4, 2, 2), (2.0, 40, 1.5)]],
})

# Benjamini-Hochberg: the 1995 paper's 15 p-values, and random p-values with ties.
bh_paper = [0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459,
            0.3240, 0.4262, 0.5719, 0.6528, 0.7590, 1.000]
rng = np.random.default_rng(20240201)
bh_random = np.concatenate([rng.uniform(0, 1, 150), rng.beta(0.2, 8, 40), np.full(10, 0.003)])
rng.shuffle(bh_random)
write("bh.json", {
    "method": "scipy.stats.false_discovery_control(p, method='bh')",
    "cases": [
        {"name": "benjamini-hochberg-1995", "p": bh_paper,
         "adjusted": stats.false_discovery_control(bh_paper, method="bh").tolist()},
        {"name": "random-with-ties", "p": bh_random.tolist(),
         "adjusted": stats.false_discovery_control(bh_random, method="bh").tolist()},
    ],
})


# Chi-square homogeneity: scipy's documented example, then random tables. scipy refuses zero expected
# counts, so for tables with all-zero rows/columns it is run on the table with those removed.
def chisq_case(name, table):
    table = np.asarray(table)
    kept = table[table.sum(axis=1) > 0][:, table.sum(axis=0) > 0]
    res = stats.chi2_contingency(kept, correction=False)
    return {"name": name, "table": table.tolist(), "statistic": float(res.statistic),
            "df": int(res.dof), "pValue": float(res.pvalue)}


rng = np.random.default_rng(20240202)
chisq_cases = [chisq_case("scipy-docs-2x3", [[10, 10, 20], [20, 20, 20]])]
for i, (r, c) in enumerate([(2, 2), (3, 5), (6, 4), (8, 8), (12, 3)]):
    probs = rng.dirichlet(np.ones(c), size=r) if i % 2 else np.tile(rng.dirichlet(np.ones(c)), (r, 1))
    sizes = rng.integers(20, 400, size=r)
    table = np.array([rng.multinomial(n, p) for n, p in zip(sizes, probs)])
    chisq_cases.append(chisq_case(f"random-{r}x{c}", table))
strong = np.array([[900, 100, 0, 40], [0, 0, 0, 0], [300, 700, 0, 60], [500, 500, 0, 45]])
chisq_cases.append(chisq_case("zero-row-and-column-tiny-p", strong))
write("chisq.json", {"method": "scipy.stats.chi2_contingency(table, correction=False)", "cases": chisq_cases})

# One-way ANOVA on raw data.
rng = np.random.default_rng(20240203)
anova_sets = {
    "three-equal-means": [rng.normal(0.3, 1.0, n) for n in (40, 55, 61)],
    "five-shifted": [rng.normal(mu, 2.0, n) for mu, n in zip([1.0, 1.2, 1.1, 2.0, 0.9], (30, 31, 80, 45, 12))],
    "binary-rewards-by-bucket": [rng.binomial(1, p, n).astype(float) for p, n in zip([0.10, 0.11, 0.12, 0.16], (900, 800, 1000, 700))],
    "large-offset": [1e6 + rng.normal(mu, 1.0, 50) for mu in (0.0, 0.5, 0.2)],
    "tiny-p": [rng.normal(mu, 1.0, 400) for mu in (0.0, 1.0, 2.0)],
}
write("anova.json", {
    "method": "scipy.stats.f_oneway(*groups)",
    "cases": [
        {"name": name, "groups": [g.tolist() for g in groups],
         "F": float(stats.f_oneway(*groups).statistic), "pValue": float(stats.f_oneway(*groups).pvalue)}
        for name, groups in anova_sets.items()
    ],
})


# PSI = sum((a - e) * ln(a / e)), proportions floored at 1e-4 (numpy).
def psi_numpy(expected, actual, floor=1e-4):
    e = np.maximum(np.asarray(expected, float) / np.sum(expected), floor)
    a = np.maximum(np.asarray(actual, float) / np.sum(actual), floor)
    return float(np.sum((a - e) * np.log(a / e)))


rng = np.random.default_rng(20240204)
psi_cases = []
for name, k, shift in [("perturbed-10-bins", 10, 0.0), ("shifted-6-bins", 6, 1.5), ("with-empty-bins", 8, 0.8)]:
    base = rng.dirichlet(np.ones(k))
    moved = rng.dirichlet(np.ones(k) * 50 * base + shift)
    expected = rng.multinomial(5000, base)
    actual = rng.multinomial(3000, moved)
    if name == "with-empty-bins":
        expected[2] = 0
        actual[5] = 0
    psi_cases.append({"name": name, "expected": expected.tolist(), "actual": actual.tolist(),
                      "psi": psi_numpy(expected, actual)})
write("psi.json", {"method": "numpy: sum((a - e) * log(a / e)), a, e proportions floored at 1e-4", "cases": psi_cases})
print("wrote", ", ".join(p.name for p in sorted(HERE.glob("*.json"))))
