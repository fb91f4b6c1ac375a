"""Reference values for app/core/stats/two-sample-z.ts from scipy on this machine.

Run from the repository root:  python3 test/reference/stats/make-two-sample-z.py
Two independent estimates with standard errors se1, se2: z = (b - a) / sqrt(se1^2 + se2^2), two-sided p.
The statistic is Welch's t (Welch 1947, Biometrika 34:28) computed by scipy.stats.ttest_ind_from_stats with
equal_var=False from std = se * sqrt(n); the p-value is 2 * scipy.stats.norm.sf(|z|) (the large-sample limit).
"""

import json
import math
import pathlib

import scipy
from scipy import stats

HERE = pathlib.Path(__file__).parent
CASES = [
    # (estimate a, se a, estimate b, se b)
    (0.12764735076008696, 0.0014794450730632536, 0.1341, 0.0016),
    (0.5, 0.01, 0.5, 0.02),
    (10.0, 2.0, 4.0, 1.5),
    (0.2, 0.001, 0.1975, 0.0012),
    (-3.0, 0.4, 1.0, 0.3),
    (0.0301, 0.0002, 0.0305, 0.0002),
]
N = 1_000_000
rows = []
for a, sa, b, sb in CASES:
    welch = stats.ttest_ind_from_stats(b, sb * math.sqrt(N), N, a, sa * math.sqrt(N), N, equal_var=False)
    z = float(welch.statistic)
    rows.append({"a": a, "se_a": sa, "b": b, "se_b": sb, "z": z, "p": float(2 * stats.norm.sf(abs(z)))})
(HERE / "two-sample-z.json").write_text(json.dumps({"source": f"scipy {scipy.__version__}: ttest_ind_from_stats(equal_var=False) statistic, 2*norm.sf(|z|)", "cases": rows}, indent=1) + "\n")
