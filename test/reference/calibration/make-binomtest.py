"""Exact two-sided binomial test p-values from scipy.stats.binomtest (default 'two-sided', the
minimum-likelihood method), for test/unit/stats/binomial.test.ts.
Run: python3 test/reference/calibration/make-binomtest.py > test/reference/calibration/binomtest.json"""
import json
import scipy
from scipy.stats import binomtest

cases = [(1, 500, 0.016), (2, 500, 0.016), (0, 500, 0.016), (8, 500, 0.016), (20, 500, 0.016), (3, 40, 0.1),
         (0, 10, 0.5), (10, 10, 0.5), (5, 10, 0.5), (7, 1000, 0.002), (1, 200000, 0.00004), (30, 100, 0.05),
         (0, 3, 0.3), (60, 10000, 0.004)]
print(json.dumps({"source": f"scipy {scipy.__version__} scipy.stats.binomtest(k, n, p).pvalue",
                  "cases": [{"k": k, "n": n, "p": p, "pvalue": binomtest(k, n, p).pvalue} for k, n, p in cases]}, indent=1))
