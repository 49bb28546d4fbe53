#!/usr/bin/python3
"""Writes chi2_quantiles.csv: chi-square quantiles from SciPy, the reference
for metrics' chi-square bounds.

Generated with Debian bookworm's python3-scipy 1.10.1-2 (scipy.stats.chi2.ppf).
Run from this directory: /usr/bin/python3 gen_chi2.py
"""
import scipy
from scipy.stats import chi2

DOFS = [1, 2, 2.5, 3, 5, 6, 10, 20, 50, 100, 1000, 5000, 100000, 400000]
PROBS = [0.001, 0.01, 0.025, 0.05, 0.5, 0.95, 0.975, 0.99, 0.999]

with open("chi2_quantiles.csv", "w") as f:
    f.write("# chi-square quantiles from scipy %s scipy.stats.chi2.ppf; see gen_chi2.py\n" % scipy.__version__)
    f.write("dof,p,quantile\n")
    for k in DOFS:
        for p in PROBS:
            f.write("%r,%r,%r\n" % (float(k), p, float(chi2.ppf(p, k))))
