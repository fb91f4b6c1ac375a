"""Clipped IPS on a generated log, computed directly with numpy (Bottou et al. 2013, JMLR 14, section 4.5).

Writes clipped.json: the log's rows (weight, reward or null) and, per cap M, the direct values
  value = mean over rewarded rows of min(w, M) * r,  se = sample sd (ddof=1) / sqrt(n),
  clipped mass m = mean over rewarded rows of max(w - M, 0),  bias in [r_min m, r_max m],
  bias_bound = max(|r_min|, |r_max|) m,  ess = (sum min(w, M))^2 / sum min(w, M)^2 over every row.
Run: python3 test/reference/remedies/make-clipped.py > test/reference/remedies/clipped.json
"""
import json
import numpy as np

rng = np.random.default_rng(20261202)
n = 3000
p = np.exp(rng.uniform(np.log(0.004), np.log(0.9), n))      # logged propensities, heavy weights
q = rng.choice([0.0, 0.25, 0.6, 1.0], size=n, p=[0.2, 0.3, 0.3, 0.2])
w = q / p
r = rng.normal(2.0, 1.5, n)                                   # continuous rewards, some negative
missing = rng.random(n) < 0.05
r_min, r_max = float(r[~missing].min()), float(r[~missing].max())

rw = ~missing
caps = [1.5, 4.0, 10.0, 35.0, 120.0, float(w.max()) * 2]
out = []
for m in caps:
    c = np.minimum(w, m)
    x = c[rw] * r[rw]
    mass = np.maximum(w[rw] - m, 0).mean()
    out.append({
        "cap": m,
        "value": float(x.mean()),
        "se": float(x.std(ddof=1) / np.sqrt(rw.sum())),
        "clipped_mass": float(mass),
        "bias_low": float(min(r_min * mass, r_max * mass)),
        "bias_high": float(max(r_min * mass, r_max * mass)),
        "bias_bound": float(max(abs(r_min), abs(r_max)) * mass),
        "ess": float(c.sum() ** 2 / (c ** 2).sum()),
        "clipped_rows": int((w > m).sum()),
    })

rows = [{"w": float(wi), "r": None if mi else float(ri)} for wi, ri, mi in zip(w, r, missing)]
print(json.dumps({"source": "numpy " + np.__version__ + ", direct computation (make-clipped.py)", "reward_min": r_min, "reward_max": r_max, "rows": rows, "caps": out}))
