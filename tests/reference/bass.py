"""Reference Bass diffusion fits with scipy.optimize.curve_fit.

Reproduce (from the workspace root):

    python3 -m venv .venv && .venv/bin/pip install -r tests/reference/requirements.txt && .venv/bin/python tests/reference/bass.py

Writes tests/reference/bass.json, which
crates/plateau-core/tests/core/bass.rs compares Plateau against.

Data: demo-data/lumen_cell_adoptions.csv (monthly new adopters), summed
into running totals N(t) as Plateau's --per-period does.

Fits: scipy.optimize.curve_fit(method="lm") (MINPACK lmder) with the
analytic Jacobian, ftol = xtol = gtol = 1e-15, started at the true
parameters from demo-data/README.md, unweighted, absolute_sigma=False, so
std_errors = sqrt(diag(pcov)), pcov = (J'J)^-1 * rss / (n - p). Two fits:
all four parameters free, and tau fixed at 0 (the launch date known).

Also the Bass (1969) regression n_t = a + b N_(t-1) + c N_(t-1)^2 by
numpy.linalg.lstsq, with m, p, q from its roots (the self-start).

Model: N(t) = m F(t - tau), F(s) = (1 - e^(-(p+q)s)) / (1 + (q/p) e^(-(p+q)s))
for s >= 0, else 0.
"""

import json
import platform
import sys
from pathlib import Path

import numpy as np
import scipy
from scipy.optimize import curve_fit

ROOT = Path(__file__).resolve().parents[2]
DATA = ROOT / "demo-data" / "lumen_cell_adoptions.csv"
OUT = ROOT / "tests" / "reference" / "bass.json"
TRUTH = {"m": 4000.0, "p": 0.012, "q": 0.38, "tau": 0.0}


def bass(t, m, p, q, tau):
    s = np.maximum(t - tau, 0.0)
    e = np.exp(-(p + q) * s)
    return m * (1.0 - e) / (1.0 + (q / p) * e)


def bass_jac(t, m, p, q, tau):
    on = (t - tau > 0.0).astype(float)
    s = np.maximum(t - tau, 0.0)
    e = np.exp(-(p + q) * s)
    c = q / p
    d = 1.0 + c * e
    f = (1.0 - e) / d
    k = (1.0 + c) * e / d**2
    w = (1.0 - e) * e / (p * d**2)
    return np.column_stack([f, m * (k * s + c * w), m * (k * s - w), -m * k * (p + q) * on])


def load():
    t, n = [], []
    for line in DATA.read_text().splitlines()[1:]:
        if line:
            a, b = line.split(",")
            t.append(float(a))
            n.append(float(b))
    return np.array(t), np.cumsum(np.array(n))


def fit(t, y, free):
    names = ["m", "p", "q", "tau"]
    fixed = {k: TRUTH[k] for k in names if k not in free}

    def full(args):
        v = dict(fixed)
        v.update(zip(free, args))
        return [v[k] for k in names]

    def f(t, *args):
        return bass(t, *full(args))

    def jac(t, *args):
        j = bass_jac(t, *full(args))
        return j[:, [names.index(k) for k in free]]

    p0 = [TRUTH[k] for k in free]
    popt, pcov = curve_fit(
        f, t, y, p0=p0, jac=jac, method="lm", ftol=1e-15, xtol=1e-15, gtol=1e-15, maxfev=100000
    )
    rss = float(np.sum((y - f(t, *popt)) ** 2))
    return {
        "free": free,
        "fixed": fixed,
        "params": dict(zip(free, map(float, popt))),
        "std_errors": dict(zip(free, map(float, np.sqrt(np.diag(pcov))))),
        "rss": rss,
    }


def ols(t, y):
    n_t = np.diff(y) / np.diff(t)
    big_n = y[:-1]
    x = np.column_stack([np.ones_like(big_n), big_n, big_n**2])
    (a, b, c), *_ = np.linalg.lstsq(x, n_t, rcond=None)
    m = (-b - np.sqrt(b * b - 4 * a * c)) / (2 * c)
    return {"a": float(a), "b": float(b), "c": float(c), "m": float(m), "p": float(a / m), "q": float(-c * m)}


def main():
    t, y = load()
    out = {
        "generator": "tests/reference/bass.py",
        "python": sys.version.split()[0],
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "platform": platform.platform(),
        "file": "demo-data/lumen_cell_adoptions.csv",
        "cumulative": True,
        "fits": [fit(t, y, ["m", "p", "q", "tau"]), fit(t, y, ["m", "p", "q"])],
        "bass_1969_regression": ols(t, y),
    }
    OUT.write_text(json.dumps(out, indent=2) + "\n")
    print(f"wrote {OUT}")


if __name__ == "__main__":
    main()
