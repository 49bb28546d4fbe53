#!/usr/bin/python3
"""Reference Gauss-Hermite nodes and weights for the GHKF.

Run by hand (not in CI) with Debian's python3-numpy:

    /usr/bin/python3 filters/testdata/gen_hermite_fixtures.py

It writes filters/testdata/hermite_fixtures.csv beside this script: for each
order p = 2..30 the p nodes and weights of numpy.polynomial.hermite.hermgauss
(the physicists' rule, weight function exp(-x^2)), converted to the
probabilists' rule for the standard normal density that the filters use:

    xi = sqrt(2) * x,   w_normal = w / sqrt(pi),

since  int f(xi) phi(xi) dxi = (1/sqrt(pi)) int f(sqrt(2) x) exp(-x^2) dx.

numpy.polynomial.hermite_e.hermegauss gives the probabilists' rule directly
(weight exp(-x^2/2)); its weights divided by sqrt(2*pi) are written too, and
the script stops if the two conversions disagree. Values are written with
17 significant digits (round-trip float64).
"""
import math
import os

import numpy
from numpy.polynomial import hermite, hermite_e

out = os.path.join(os.path.dirname(os.path.abspath(__file__)), "hermite_fixtures.csv")
rows = []
for p in range(2, 31):
    x, w = hermite.hermgauss(p)
    xi = math.sqrt(2) * x
    wn = w / math.sqrt(math.pi)
    xe, we = hermite_e.hermegauss(p)
    we = we / math.sqrt(2 * math.pi)
    assert numpy.allclose(xi, xe, rtol=1e-13, atol=1e-13), p
    assert numpy.allclose(wn, we, rtol=1e-11, atol=1e-300), p
    assert abs(wn.sum() - 1) < 1e-13, p
    for i in range(p):
        rows.append("%d,%d,%.17g,%.17g" % (p, i, xi[i], wn[i]))

with open(out, "w") as f:
    f.write("# Gauss-Hermite rule for the standard normal density (nodes xi, weights w)\n")
    f.write("# from numpy.polynomial.hermite.hermgauss, numpy %s (Debian python3-numpy 1:1.24.2-1+deb12u1),\n" % numpy.__version__)
    f.write("# converted xi = sqrt(2) x, w = w_hermgauss / sqrt(pi); written by gen_hermite_fixtures.py\n")
    f.write("order,index,node,weight\n")
    f.write("\n".join(rows) + "\n")
