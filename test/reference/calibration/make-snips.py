"""SNIPS and its delta-method standard error for a fixed small log, computed with numpy's covariance
(the ratio estimator's linearised variance, Cochran, Sampling Techniques, 3rd ed., 1977, eq. 6.9, with
population moments: ddof = 0), for test/unit/stats/snips-reference.test.ts.
Run: python3 test/reference/calibration/make-snips.py > test/reference/calibration/snips.json"""
import json
import numpy as np

rng = np.random.default_rng(20261202)
n = 400
segments = rng.integers(0, 3, n)
actions = rng.integers(0, 4, n)
logging = np.array([[0.4, 0.3, 0.2, 0.1], [0.25, 0.25, 0.25, 0.25], [0.1, 0.2, 0.3, 0.4]])
target = np.array([[0.1, 0.2, 0.3, 0.4], [0.7, 0.1, 0.1, 0.1], [0.25, 0.25, 0.25, 0.25]])
p = logging[segments, actions]
q = target[segments, actions]
r = (rng.random(n) < 0.2 + 0.1 * actions).astype(float)
w = q / p
x, y = w, w * r
value = y.mean() / x.mean()
cov = np.cov(np.vstack([x, y]), ddof=0)
var = (cov[1, 1] - 2 * value * cov[0, 1] + value ** 2 * cov[0, 0]) / x.mean() ** 2 / n
print(json.dumps({"source": f"numpy {np.__version__}: ratio of means with its delta-method variance from np.cov(ddof=0)",
                  "rows": [{"segment": int(s), "action": int(a), "p": float(pp), "q": float(qq), "r": float(rr)} for s, a, pp, qq, rr in zip(segments, actions, p, q, r)],
                  "snips": float(value), "se": float(np.sqrt(var))}))
