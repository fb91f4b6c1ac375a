"""Reference values for app/core/stats/balance-bias.ts (missRateWithBias) from scipy on this machine.

Run from the repository root:  python3 test/reference/stats/make-bias.py
The chance that a nominal two-sided 95% normal interval misses when the estimate has a bias of b standard
errors: norm.cdf(-z - b) + norm.cdf(-z + b), z = norm.ppf(0.975) (Cochran 1977, Sampling Techniques, §1.8).
"""

import json
import pathlib

import scipy
from scipy import stats

HERE = pathlib.Path(__file__).parent
z = stats.norm.ppf(0.975)
rows = [[b, stats.norm.cdf(-z - b) + stats.norm.cdf(-z + b)] for b in [0.0, 0.02, 0.1, 0.2, 0.4, 0.5, 0.6, 0.8, 1.0, 1.5, 3.0]]
(HERE / "bias.json").write_text(json.dumps({"source": f"scipy {scipy.__version__}", "miss_rate": rows}, indent=1) + "\n")
