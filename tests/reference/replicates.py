"""Reference fits of series with replicate measurements (several values at
one time), computed independently of Plateau with scipy and statsmodels,
for crates/plateau-core/tests/core/replicates.rs.

Reproduce (from the workspace root):

    python3 -m venv .venv && .venv/bin/pip install -r tests/reference/requirements.txt && .venv/bin/python tests/reference/replicates.py

Writes tests/reference/replicates.json.

Data (invented, generated here from a fixed seed and written into the
JSON, so the Rust test reads the very same numbers):

* "logistic_3x": logistic K = 100, r = 0.6, t0 = 10 at t = 0, 1, ..., 20,
  three replicates per time, Gaussian noise sd 2.5
  (numpy.random.default_rng(20240517)); rows in time order.
* "gompertz_unbalanced": Gompertz K = 50, r = 0.35, t0 = 8 at
  t = 0, 2, ..., 24 with 1 to 4 replicates per time (drawn from the same
  generator), noise sd 1.2, rows shuffled (so replicates are not next to
  each other in the input).

Fit: every row is one observation, fitted as given:
scipy.optimize.curve_fit(method="lm") (MINPACK lmder) with the analytic
Jacobian, ftol = xtol = gtol = 1e-15, started at the true parameters,
unweighted, absolute_sigma=False, so pcov = (J'J)^-1 * RSS / (n - p) and
the standard errors are sqrt(diag(pcov)).

Residual checks that need one value per time (the rule Plateau
documents): the mean residual per distinct time, in time order; on that
sequence statsmodels' durbin_watson and acf (lag 1, not bias-adjusted),
and the number of sign runs counted here.
"""

import json
import platform
from pathlib import Path

import numpy as np
import scipy
import statsmodels
from scipy.optimize import curve_fit
from statsmodels.stats.stattools import durbin_watson
from statsmodels.tsa.stattools import acf

ROOT = Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "reference" / "replicates.json"


def logistic(t, K, r, t0):
    return K / (1.0 + np.exp(-r * (t - t0)))


def logistic_jac(t, K, r, t0):
    s = 1.0 / (1.0 + np.exp(-r * (t - t0)))
    ds = s * (1.0 - s)
    return np.column_stack([s, K * ds * (t - t0), -K * ds * r])


def gompertz(t, K, r, t0):
    return K * np.exp(-np.exp(-r * (t - t0)))


def gompertz_jac(t, K, r, t0):
    e = np.exp(-r * (t - t0))
    g = np.exp(-e)
    return np.column_stack([g, K * g * e * (t - t0), -K * g * e * r])


def data():
    rng = np.random.default_rng(20240517)
    t1 = np.repeat(np.arange(0.0, 21.0), 3)
    y1 = logistic(t1, 100.0, 0.6, 10.0) + rng.normal(0.0, 2.5, t1.size)
    times = np.arange(0.0, 25.0, 2.0)
    counts = rng.integers(1, 5, times.size)
    t2 = np.repeat(times, counts)
    y2 = gompertz(t2, 50.0, 0.35, 8.0) + rng.normal(0.0, 1.2, t2.size)
    perm = rng.permutation(t2.size)
    return [
        ("logistic_3x", "logistic", t1, y1, [100.0, 0.6, 10.0]),
        ("gompertz_unbalanced", "gompertz", t2[perm], y2[perm], [50.0, 0.35, 8.0]),
    ]


def per_time_means(t, res):
    distinct = np.unique(t)  # sorted
    return distinct, np.array([res[t == u].mean() for u in distinct])


def runs(x):
    signs = [v > 0 for v in x if v != 0]
    return 1 + sum(1 for a, b in zip(signs, signs[1:]) if a != b)


def main():
    cases = {}
    for name, model, t, y, p0 in data():
        f, jac = (logistic, logistic_jac) if model == "logistic" else (gompertz, gompertz_jac)
        p, cov = curve_fit(
            f, t, y, p0=p0, jac=jac, method="lm", ftol=1e-15, xtol=1e-15, gtol=1e-15
        )
        res = y - f(t, *p)
        distinct, means = per_time_means(t, res)
        cases[name] = {
            "model": model,
            "t": t.tolist(),
            "y": y.tolist(),
            "n": int(t.size),
            "distinct_times": int(distinct.size),
            "params": p.tolist(),
            "std_errors": np.sqrt(np.diag(cov)).tolist(),
            "rss": float(res @ res),
            "per_time_mean_residuals": means.tolist(),
            "durbin_watson_of_means": float(durbin_watson(means)),
            "lag1_of_means": float(acf(means, nlags=1, adjusted=False, fft=False)[1]),
            "runs_of_means": runs(means),
        }
    out = {
        "generated_by": "tests/reference/replicates.py",
        "versions": {
            "python": platform.python_version(),
            "numpy": np.__version__,
            "scipy": scipy.__version__,
            "statsmodels": statsmodels.__version__,
        },
        "cases": cases,
    }
    OUT.write_text(json.dumps(out, indent=1) + "\n")


if __name__ == "__main__":
    main()
