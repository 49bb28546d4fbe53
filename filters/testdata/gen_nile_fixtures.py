#!/usr/bin/python3
"""Reference Kalman filter output for the local level model on the Nile data.

Run by hand (not in CI) from anywhere, with Debian's python3-statsmodels:

    /usr/bin/python3 filters/testdata/gen_nile_fixtures.py [path/to/nile.csv]

It reads the annual Nile flow series (default: ../shared/datasets/nile/nile.csv
relative to the project root), runs statsmodels' local level model

    y_t = a_t + eps_t,      eps_t ~ N(0, sigma2_eps),  sigma2_eps = 15099
    a_{t+1} = a_t + eta_t,  eta_t ~ N(0, sigma2_eta),  sigma2_eta = 1469.1

(the maximum likelihood estimates of Durbin & Koopman 2012, "Time Series
Analysis by State Space Methods", 2nd ed., ch. 2) with the KNOWN
initialisation a_1 = 0, P_1 = 1e7 (the large-variance approximation of a
diffuse prior that Durbin & Koopman use for their illustrations), and writes
filters/testdata/nile_fixtures.csv beside this script.

The fixture holds, for t = 1..100: the predicted state mean a_t and variance
P_t (given y_1..y_{t-1}), the filtered mean and variance (given y_1..y_t), the
variance F_t of the innovation v_t = y_t - a_t, and the log-likelihood term of
y_t. The header comment gives the total log-likelihood over all 100
observations (no burn-in), the statsmodels version, the initialisation and the
sha256 of the input file. The data values themselves (and so the innovations) are not written; the test
reads them from the shared dataset.

The same quantities are computed a second time by a plain MLEModel subclass
and by the textbook recursions (Durbin & Koopman 2012 eq. 2.15) in numpy, and
the script stops if the three disagree.
"""

import hashlib
import math
import os
import sys

import numpy as np
import statsmodels
import statsmodels.api as sm

SIGMA2_EPS = 15099.0
SIGMA2_ETA = 1469.1
A1 = 0.0
P1 = 1e7


def read_nile(path):
    years, flow = [], []
    with open(path, newline="") as f:
        header = f.readline().strip()
        if header != "year,flow":
            sys.exit(f"{path}: unexpected header {header!r}")
        for line in f:
            y, v = line.strip().split(",")
            years.append(int(y))
            flow.append(float(v))
    return np.array(years), np.array(flow)


class LocalLevel(sm.tsa.statespace.MLEModel):
    """The local level model written out directly, for the cross-check."""

    def __init__(self, y):
        super().__init__(y, k_states=1, loglikelihood_burn=0)
        self["design", 0, 0] = 1.0
        self["transition", 0, 0] = 1.0
        self["selection", 0, 0] = 1.0
        self.ssm.initialize_known(np.array([A1]), np.array([[P1]]))

    @property
    def param_names(self):
        return ["sigma2.irregular", "sigma2.level"]

    def update(self, params, **kwargs):
        params = super().update(params, **kwargs)
        self["obs_cov", 0, 0] = params[0]
        self["state_cov", 0, 0] = params[1]


def textbook(y):
    """Durbin & Koopman 2012 eq. (2.15): v = y - a, F = P + s_eps,
    filtered a + P v / F, P (1 - P / F); a' = filtered, P' = filtered + s_eta."""
    n = len(y)
    out = np.zeros((n, 6))
    a, p = A1, P1
    for t in range(n):
        v = y[t] - a
        f = p + SIGMA2_EPS
        af = a + p * v / f
        pf = p * (1 - p / f)
        ll = -0.5 * (math.log(2 * math.pi) + math.log(f) + v * v / f)
        out[t] = (a, p, af, pf, f, ll)
        a, p = af, pf + SIGMA2_ETA
    return out


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    root = os.path.dirname(os.path.dirname(here))
    path = sys.argv[1] if len(sys.argv) > 1 else os.path.join(root, "..", "shared", "datasets", "nile", "nile.csv")
    with open(path, "rb") as f:
        digest = hashlib.sha256(f.read()).hexdigest()
    years, y = read_nile(path)

    mod = sm.tsa.UnobservedComponents(y, "llevel")
    mod.ssm.initialize_known(np.array([A1]), np.array([[P1]]))
    mod.ssm.loglikelihood_burn = 0  # count every observation, as the Go filter does
    res = mod.filter([SIGMA2_EPS, SIGMA2_ETA])
    fr = res.filter_results
    n = len(y)
    cols = np.column_stack([
        fr.predicted_state[0, :n],
        fr.predicted_state_cov[0, 0, :n],
        fr.filtered_state[0, :],
        fr.filtered_state_cov[0, 0, :],
        fr.forecasts_error_cov[0, 0, :],
        res.llf_obs,
    ])
    llf = float(res.llf)

    res2 = LocalLevel(y).filter([SIGMA2_EPS, SIGMA2_ETA])
    fr2 = res2.filter_results
    cols2 = np.column_stack([
        fr2.predicted_state[0, :n], fr2.predicted_state_cov[0, 0, :n],
        fr2.filtered_state[0, :], fr2.filtered_state_cov[0, 0, :],
        fr2.forecasts_error_cov[0, 0, :], res2.llf_obs,
    ])
    cols3 = textbook(y)
    for other, name in ((cols2, "MLEModel"), (cols3, "textbook recursions")):
        if not np.allclose(cols, other, rtol=1e-10, atol=1e-8):
            sys.exit(f"UnobservedComponents and {name} disagree")
    if not math.isclose(llf, float(np.sum(res.llf_obs)), rel_tol=1e-13):
        sys.exit("llf is not the sum of llf_obs: burn-in still set?")
    if not math.isclose(llf, float(res2.llf), rel_tol=1e-12):
        sys.exit("UnobservedComponents and MLEModel log-likelihoods disagree")

    out = os.path.join(here, "nile_fixtures.csv")
    tmp = out + ".tmp"
    with open(tmp, "w", newline="\n") as f:
        f.write("# Local level model on the Nile flow series; generated by gen_nile_fixtures.py\n")
        f.write(f"# statsmodels: {statsmodels.__version__} (Debian python3-statsmodels), numpy: {np.__version__}\n")
        f.write("# model: sm.tsa.UnobservedComponents(y, 'llevel'), sigma2.irregular = 15099, sigma2.level = 1469.1\n")
        f.write("# init: known, a_1 = 0, P_1 = 1e7 (predicted state of t = 1); loglikelihood_burn = 0\n")
        f.write(f"# input: nile.csv sha256 {digest}\n")
        f.write(f"# loglik: {llf!r}\n")
        f.write("t,year,pred_mean,pred_var,filt_mean,filt_var,innov_var,loglik_t\n")
        for t in range(n):
            row = [str(t + 1), str(years[t])] + [repr(float(v)) for v in cols[t]]
            f.write(",".join(row) + "\n")
    os.replace(tmp, out)
    print(f"wrote {out}: {n} rows, loglik {llf!r}")


if __name__ == "__main__":
    main()
