"""Reference bi-logistic fit with scipy.optimize.curve_fit.

Reproduce (from the workspace root):

    python3 -m venv .venv && .venv/bin/pip install -r tests/reference/requirements.txt && .venv/bin/python tests/reference/bilogistic.py

Writes tests/reference/bilogistic.json, which
crates/plateau-core/tests/core/bilogistic.rs compares Plateau against.

Data: demo-data/wrenlow_two_waves.csv (month, cumulative subscribers).

Fit: scipy.optimize.curve_fit(method="lm") (MINPACK lmder) with the
analytic Jacobian, ftol = xtol = gtol = 1e-15, started at the true
parameters from demo-data/README.md, unweighted, absolute_sigma=False, so
std_errors = sqrt(diag(pcov)), pcov = (J'J)^-1 * rss / (n - p). The
start has the earlier pulse first (t01 <= t02), the order Plateau reports.

Model: y = K1 / (1 + e^(-r1 (t - t01))) + K2 / (1 + e^(-r2 (t - t02))).
"""

import json
import platform
import sys
from pathlib import Path

import numpy as np
import scipy
from scipy.optimize import curve_fit

ROOT = Path(__file__).resolve().parents[2]
DATA = ROOT / "demo-data" / "wrenlow_two_waves.csv"
OUT = ROOT / "tests" / "reference" / "bilogistic.json"
NAMES = ["K1", "r1", "t01", "K2", "r2", "t02"]
TRUTH = [3000.0, 0.35, 10.0, 2500.0, 0.3, 32.0]


def pulse(t, k, r, t0):
    return k / (1.0 + np.exp(-r * (t - t0)))


def bilogistic(t, k1, r1, t01, k2, r2, t02):
    return pulse(t, k1, r1, t01) + pulse(t, k2, r2, t02)


def pulse_jac(t, k, r, t0):
    s = 1.0 / (1.0 + np.exp(-r * (t - t0)))
    ds = s * (1.0 - s)
    return [s, k * ds * (t - t0), -k * ds * r]


def bilogistic_jac(t, k1, r1, t01, k2, r2, t02):
    return np.column_stack(pulse_jac(t, k1, r1, t01) + pulse_jac(t, k2, r2, t02))


def load():
    t, y = [], []
    for line in DATA.read_text().splitlines()[1:]:
        if line:
            a, b = line.split(",")
            t.append(float(a))
            y.append(float(b))
    return np.array(t), np.array(y)


def main():
    t, y = load()
    popt, pcov = curve_fit(
        bilogistic, t, y, p0=TRUTH, jac=bilogistic_jac, method="lm",
        ftol=1e-15, xtol=1e-15, gtol=1e-15, maxfev=100000,
    )
    rss = float(np.sum((y - bilogistic(t, *popt)) ** 2))
    out = {
        "generator": "tests/reference/bilogistic.py",
        "python": sys.version.split()[0],
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "platform": platform.platform(),
        "file": "demo-data/wrenlow_two_waves.csv",
        "params": dict(zip(NAMES, map(float, popt))),
        "std_errors": dict(zip(NAMES, map(float, np.sqrt(np.diag(pcov))))),
        "rss": rss,
        "n": int(len(t)),
    }
    OUT.write_text(json.dumps(out, indent=2) + "\n")
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
