"""The plain scipy script that `plateau fit` is timed against, whole process.

Run by `cargo xtask bench-whole-process` (which writes the data, times this
script and `plateau fit` side by side and prints the median ratio), or alone
from the workspace root:

    .venv/bin/python tests/reference/whole_process_scipy.py target/bench-whole-process/logistic_100000.csv

What a reasonable user would write: numpy `loadtxt` of the CSV (a header
row, then time,value rows), `scipy.optimize.curve_fit(method="lm")` of the
logistic K / (1 + exp(-r (t - t0))) with its analytic Jacobian, starting
values K = max(y), r = 4 / (time span), t0 = median(t), default tolerances;
then the estimates printed, one per line. Timed from process start to exit
(interpreter start and imports included, as `plateau fit` is).
"""

import sys

import numpy as np
from scipy.optimize import curve_fit


def logistic(t, K, r, t0):
    return K / (1.0 + np.exp(-r * (t - t0)))


def logistic_jac(t, K, r, t0):
    s = 1.0 / (1.0 + np.exp(-r * (t - t0)))
    ds = s * (1.0 - s)
    return np.column_stack([s, K * ds * (t - t0), -K * ds * r])


def main():
    data = np.loadtxt(sys.argv[1], delimiter=",", skiprows=1)
    t, y = data[:, 0], data[:, 1]
    p0 = [y.max(), 4.0 / (t.max() - t.min()), float(np.median(t))]
    p, cov = curve_fit(logistic, t, y, p0=p0, jac=logistic_jac, method="lm")
    se = np.sqrt(np.diag(cov))
    for name, v, s in zip(["K", "r", "t0"], p, se):
        print(f"{name} {v:.10g} {s:.6g}")


if __name__ == "__main__":
    main()
