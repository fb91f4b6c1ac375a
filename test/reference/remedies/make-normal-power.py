"""One-sample z-test sample sizes from scipy: the root (scipy.optimize.brentq) of the power equation
Phi(sqrt(n) d / s - z) [+ Phi(-sqrt(n) d / s - z) when strict] = power, z = norm.ppf(1 - alpha / 2).
Run: python3 test/reference/remedies/make-normal-power.py > test/reference/remedies/normal-power.json
"""
import json
import scipy
from scipy.optimize import brentq
from scipy.stats import norm

cases = [(0.002, 0.456, 0.05, 0.8), (0.01, 1.0, 0.05, 0.9), (0.5, 2.0, 0.01, 0.8), (1.0, 3.0, 0.1, 0.95), (0.05, 0.3, 0.2, 0.6), (0.2, 0.25, 0.05, 0.8)]
out = []
for d, s, a, pw in cases:
    z = norm.ppf(1 - a / 2)
    loose = lambda n: norm.cdf(n ** 0.5 * d / s - z) - pw
    strict = lambda n: norm.cdf(n ** 0.5 * d / s - z) + norm.cdf(-(n ** 0.5) * d / s - z) - pw
    hi = 1e12
    out.append({"delta": d, "sd": s, "alpha": a, "power": pw,
                "n": brentq(loose, 1e-9, hi, xtol=1e-14, rtol=1e-15, maxiter=1000),
                "n_strict": brentq(strict, 1e-9, hi, xtol=1e-14, rtol=1e-15, maxiter=1000),
                "power_at_100": float(norm.cdf(10 * d / s - z) + norm.cdf(-10 * d / s - z))})
print(json.dumps({"source": "scipy " + scipy.__version__ + " (norm.cdf, norm.ppf, optimize.brentq)", "cases": out}))
