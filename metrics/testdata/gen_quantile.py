#!/usr/bin/python3
"""Writes quantiles.csv: sample quantiles from NumPy's default ("linear",
Hyndman & Fan 1996 definition 7) numpy.percentile, the reference for
metrics.Quantile and metrics.Median.

Generated with Debian bookworm's python3-numpy 1:1.24.2-1+deb12u1.
Run from this directory: /usr/bin/python3 gen_quantile.py
Each line: p, the quantile, then the sample (space-separated, unsorted).
"""
import numpy as np

rng = np.random.default_rng(20240601)
samples = [
    [3.0],
    [2.0, 1.0],
    [5.0, 1.0, 4.0, 2.0, 3.0],
    [7.5, -1.25, 3.0, 3.0, 10.0, 0.5],
    list(rng.normal(size=17)),
    list(rng.exponential(size=40)),
]
probs = [0.0, 0.025, 0.1, 0.25, 0.5, 0.75, 0.9, 0.975, 1.0]

with open("quantiles.csv", "w") as f:
    f.write("# numpy %s numpy.percentile (method='linear'); see gen_quantile.py\n" % np.__version__)
    for x in samples:
        for p in probs:
            q = float(np.percentile(np.array(x), 100 * p, method="linear"))
            f.write("%r,%r,%s\n" % (p, q, " ".join(repr(float(v)) for v in x)))
