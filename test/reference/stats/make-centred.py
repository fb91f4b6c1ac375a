"""Two-pass reference for the centred reward sums (test/core/centred-sums.test.ts).

r_i = 1e5 + (u_i - 0.5) * sqrt(12), u_i = ((i * 2654435761) mod 2^32) / 2^32, i = 0 .. 10^7 - 1:
mean about 1e5, sd about 1 (mean/sd = 1e5). The test builds the same values in DuckDB with the same
IEEE operations. numpy computes the mean and the sample variance in two passes (mean first, then the
squared deviations from it), the textbook stable form.
"""
import json
import math
import numpy as np

n = 10_000_000
i = np.arange(n, dtype=np.int64)
u = ((i * 2654435761) % 4294967296).astype(np.float64) / 4294967296.0
r = 1e5 + (u - 0.5) * math.sqrt(12)
mean = float(np.mean(r))
var = float(np.sum((r - mean) ** 2) / (n - 1))
out = {"source": "numpy " + np.__version__ + ", two-pass mean and variance", "n": n, "mean": mean, "variance": var, "se_of_mean": math.sqrt(var / n)}
with open(__file__.replace("make-centred.py", "centred-variance.json"), "w") as f:
    json.dump(out, f, indent=2)
print(out)
