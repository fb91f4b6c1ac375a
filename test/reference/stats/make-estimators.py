"""Two-pass numpy references for the IPS, SNIPS and doubly robust estimates and standard errors
(test/core/centred-estimators.test.ts and test/unit/stats/dr-reference.test.ts).

Run from the repository root:  python3 test/reference/stats/make-estimators.py
Writes estimators.json next to this script.

Each estimate is computed row by row from its definition, then its mean and sample SD in two passes:
  IPS   x_i = w_i r_i, w_i = pi(a_i|s_i) / p_i                          (Horvitz & Thompson 1952)
  SNIPS V = sum(w r) / sum(w), SE = sqrt(sum(w^2 (r - V)^2)) / sum(w)   (delta method; Swaminathan & Joachims 2015)
  DR    DR_i = D_-i(s_i) + w_i (r_i - rhat_-i(s_i, a_i)), D_-i(s) = sum_a pi(a|s) rhat_-i(s, a), with rhat_-i the
        mean reward of the other rows of the row's (segment, action) cell; a cell with fewer than 2 rows uses the
        action's mean over the other segments (else every other row's mean), an unlogged cell the action's mean
        (else the log's); SE = sample SD of DR_i / sqrt(n)  (Dudik, Langford & Li 2011, eq. 2, leave-one-out model)

"large": n = 10^6 rows built by the same IEEE operations the test runs in DuckDB, row i = 0 .. n - 1:
  segment = i % 3, action = ((i * 2246822519) mod 2^32) // 2^30 (0..3), p = 0.25,
  reward = 1e5 + (u_i - 0.5) * sqrt(12) + 0.5 * action, u_i = ((i * 2654435761) mod 2^32) / 2^32
  (mean/sd about 1e5), targets uniform (w = 1 on every row) and always:a0.
"small": 600 seeded rows over 5 segments x 4 actions with uneven propensities, a (segment, action) cell of one
  row and one never logged, a target table, and a 0/1 and a continuous reward.
"""
import json
import math
import pathlib

import numpy as np

HERE = pathlib.Path(__file__).parent


def two_pass(x):
    m = float(np.mean(x))
    return m, math.sqrt(float(np.sum((x - m) ** 2)) / (len(x) - 1) / len(x))


def ips(w, r):
    return two_pass(w * r)


def snips(w, r):
    v = float(np.sum(w * r) / np.sum(w))
    return v, math.sqrt(float(np.sum(w ** 2 * (r - v) ** 2))) / float(np.sum(w))


def dr(seg, act, p, r, pi, n_seg, n_act):
    """pi[s, a]: target probabilities; rows' segments and actions as integer codes."""
    n = len(r)
    cell = seg * n_act + act
    cn = np.bincount(cell, minlength=n_seg * n_act).astype(float)
    cs = np.bincount(cell, weights=r, minlength=n_seg * n_act)
    an = np.bincount(act, minlength=n_act).astype(float)
    asum = np.bincount(act, weights=r, minlength=n_act)
    total = float(np.sum(r))
    model = np.zeros(n_seg * n_act)
    for k in range(n_seg * n_act):
        a = k % n_act
        if cn[k] >= 2:
            model[k] = cs[k] / cn[k]
        elif cn[k] == 1:
            model[k] = (asum[a] - cs[k]) / (an[a] - cn[k]) if an[a] > cn[k] else (total - cs[k]) / (n - cn[k])
        else:
            model[k] = asum[a] / an[a] if an[a] > 0 else total / n
    model = model.reshape(n_seg, n_act)
    direct = np.sum(pi * model, axis=1)
    q = pi[seg, act]
    w = q / p
    own = model[seg, act]
    loo = np.where(cn[cell] >= 2, (cs[cell] - r) / np.maximum(cn[cell] - 1, 1), own)
    x = direct[seg] - q * own + q * loo + w * (r - loo)
    return two_pass(x)


def result(pair):
    return {"value": pair[0], "se": pair[1]}


# large
n = 1_000_000
i = np.arange(n, dtype=np.int64)
u = ((i * 2654435761) % 4294967296).astype(np.float64) / 4294967296.0
seg = (i % 3).astype(np.int64)
act = (((i * 2246822519) % 4294967296) // 1073741824).astype(np.int64)
r = 1e5 + (u - 0.5) * math.sqrt(12) + 0.5 * act.astype(np.float64)
p = np.full(n, 0.25)
large = {"n": n}
for name, pi in [("uniform", np.full((3, 4), 0.25)), ("always:a0", np.tile([1.0, 0.0, 0.0, 0.0], (3, 1)))]:
    w = pi[seg, act] / p
    large[name] = {"ips": result(ips(w, r)), "snips": result(snips(w, r)), "dr": result(dr(seg, act, p, r, pi, 3, 4))}

# small
rng = np.random.default_rng(20261203)
logging = np.array([[0.4, 0.3, 0.2, 0.1], [0.25, 0.25, 0.25, 0.25], [0.1, 0.2, 0.3, 0.4], [0.7, 0.1, 0.1, 0.1], [0.05, 0.05, 0.45, 0.45]])
target = np.array([[0.1, 0.2, 0.3, 0.4], [0.7, 0.1, 0.1, 0.1], [0.25, 0.25, 0.25, 0.25], [0.0, 0.5, 0.5, 0.0], [0.4, 0.3, 0.2, 0.1]])
m = 600
sseg = rng.integers(0, 5, m)
sact = np.array([rng.choice(4, p=logging[s]) for s in sseg])
# one cell with a single row, one never logged: segment 4 logs action 0 once and action 1 never
in4 = np.flatnonzero(sseg == 4)
sact[in4] = rng.choice([2, 3], size=len(in4))
sact[in4[0]] = 0
sp = logging[sseg, sact]
binary = (rng.random(m) < 0.15 + 0.1 * sact + 0.05 * sseg).astype(float)
continuous = np.round(20 + 5 * sact + 3 * rng.standard_normal(m), 6)
small = {"rows": [{"segment": int(s), "action": int(a), "p": float(pp), "binary": float(b), "continuous": float(c)} for s, a, pp, b, c in zip(sseg, sact, sp, binary, continuous)],
         "target": target.tolist()}
for name, rr in [("binary", binary), ("continuous", continuous)]:
    w = target[sseg, sact] / sp
    small[name] = {"ips": result(ips(w, rr)), "snips": result(snips(w, rr)), "dr": result(dr(sseg, sact, sp, rr, target, 5, 4))}

out = {"source": f"numpy {np.__version__}, row-by-row definitions, two-pass mean and SD", "large": large, "small": small}
(HERE / "estimators.json").write_text(json.dumps(out, indent=1) + "\n")
print(json.dumps({"large": large, "small": {k: small[k] for k in ("binary", "continuous")}}, indent=1))
