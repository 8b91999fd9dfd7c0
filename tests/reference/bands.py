"""Reference confidence and prediction bands of logistic fits to demo data,
from scipy.

Reproduce (from the workspace root):

    python3 -m venv .venv && .venv/bin/pip install -r tests/reference/requirements.txt && .venv/bin/python tests/reference/bands.py

Writes tests/reference/bands.json, which
crates/plateau-core/tests/core/bands.rs compares Plateau's delta-method
bands against.

Fit: scipy.optimize.curve_fit(method="lm") (MINPACK lmder) with the
analytic Jacobian, ftol = xtol = gtol = 1e-15, started at the true
parameters from demo-data/README.md, unweighted, absolute_sigma=False, so
pcov = (J'J)^-1 * s^2 with s^2 = RSS / (n - p).

Bands (the textbook asymptotic ones, e.g. Seber & Wild 1989, Nonlinear
Regression, section 5.1), at each time t with g(t) the gradient of the
curve in the parameters at the estimate:

    mean:        f(t) +- t_{0.975, n-p} * sqrt(g' pcov g)
    prediction:  f(t) +- t_{0.975, n-p} * sqrt(g' pcov g + s^2)

with the Student-t quantile from scipy.stats.t.ppf. Times: every data time
and 30, 32, ..., 60 (a forecast past the data).
"""

import json
import platform
from pathlib import Path

import numpy as np
import scipy
from scipy.optimize import curve_fit
from scipy.stats import t as student_t

ROOT = Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "reference" / "bands.json"


def logistic(t, K, r, t0):
    return K / (1.0 + np.exp(-r * (t - t0)))


def logistic_jac(t, K, r, t0):
    s = 1.0 / (1.0 + np.exp(-r * (t - t0)))
    ds = s * (1.0 - s)
    return np.column_stack([s, K * ds * (t - t0), -K * ds * r])


CASES = [
    ("logistic_aldermoor", "aldermoor_subscribers.csv", [12000.0, 0.25, 14.0]),
    ("logistic_fenwick_vale", "fenwick_vale_subscribers.csv", [8000.0, 0.2, 25.0]),
]


def load(name):
    lines = (ROOT / "demo-data" / name).read_text().splitlines()
    t, y = [], []
    for line in lines[1:]:
        a, b = line.split(",")
        t.append(float(a))
        y.append(float(b))
    return np.array(t), np.array(y)


def case(case_id, name, p0):
    t, y = load(name)
    popt, pcov = curve_fit(
        logistic, t, y, p0=p0, jac=logistic_jac, method="lm", absolute_sigma=False,
        ftol=1e-15, xtol=1e-15, gtol=1e-15, maxfev=100000,
    )
    n, p = len(t), len(popt)
    resid = y - logistic(t, *popt)
    s2 = float(resid @ resid) / (n - p)
    q = float(student_t.ppf(0.975, n - p))
    times = np.concatenate([t, np.arange(30.0, 61.0, 2.0)])
    g = logistic_jac(times, *popt)
    var = np.einsum("ij,jk,ik->i", g, pcov, g)
    f = logistic(times, *popt)
    half_c = q * np.sqrt(var)
    half_p = q * np.sqrt(var + s2)
    return {
        "id": case_id,
        "file": f"demo-data/{name}",
        "model": "logistic",
        "params": dict(zip(["K", "r", "t0"], map(float, popt))),
        "sigma": float(np.sqrt(s2)),
        "t_quantile": q,
        "points": [
            {
                "t": float(ti),
                "fit": float(fi),
                "confidence95": [float(fi - c), float(fi + c)],
                "prediction95": [float(fi - pp), float(fi + pp)],
            }
            for ti, fi, c, pp in zip(times, f, half_c, half_p)
        ],
    }


def main():
    out = {
        "source": "scipy.optimize.curve_fit(method='lm') + delta-method bands with "
                  "scipy.stats.t.ppf, tests/reference/bands.py",
        "scipy": scipy.__version__,
        "numpy": np.__version__,
        "python": platform.python_version(),
        "cases": [case(*c) for c in CASES],
    }
    OUT.write_text(json.dumps(out, indent=2) + "\n")
    print(f"wrote {OUT.relative_to(ROOT)}")


if __name__ == "__main__":
    main()
