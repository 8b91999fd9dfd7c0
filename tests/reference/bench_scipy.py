"""Time scipy.optimize.curve_fit on the data of Plateau's criterion bench.

Run by `cargo xtask bench-vs-scipy` (which also runs
`cargo bench -p plateau-core --bench fit` and prints the ratios), or alone:

    python3 -m venv .venv && .venv/bin/pip install -r tests/reference/requirements.txt && .venv/bin/python tests/reference/bench_scipy.py

Data, identical to crates/plateau-core/benches/fit.rs (deterministic, no RNG):
    t_i = 20 i / (n - 1),  i = 0 .. n-1
    y_i = curve(t_i) + 10 sin(1.7 i + 0.3)
with curve = logistic(K=1000, r=0.8, t0=10) for n = 50 and n = 1000, and
richards(K=1000, r=0.8, t0=10, nu=0.5) for n = 1000.

scipy is called the way a reasonable user would: method="lm" (MINPACK),
analytic Jacobian, default tolerances, starting values K = max(y), r = 1,
t0 = median(t) (and nu = 1). Plateau's bench uses its own self-start and
default options, so each side's time includes whatever it needs to converge.

Output: one JSON line per case {"case", "n", "median_us", "nfev", "rss"},
median_us being the median over repeats of the mean time per fit
(timeit, loop count chosen by autorange); then one line with versions.
"""

import json
import platform
import timeit

import numpy as np
import scipy
from scipy.optimize import curve_fit


def logistic(t, K, r, t0):
    return K / (1.0 + np.exp(-r * (t - t0)))


def logistic_jac(t, K, r, t0):
    s = 1.0 / (1.0 + np.exp(-r * (t - t0)))
    ds = s * (1.0 - s)
    return np.column_stack([s, K * ds * (t - t0), -K * ds * r])


def richards(t, K, r, t0, nu):
    return K * (1.0 + nu * np.exp(-r * (t - t0))) ** (-1.0 / nu)


def richards_jac(t, K, r, t0, nu):
    u = np.exp(-r * (t - t0))
    b = 1.0 + nu * u
    g = b ** (-1.0 / nu)
    y = K * g
    h = K * g / b * u
    return np.column_stack([g, h * (t - t0), -h * r, y * (np.log(b) / nu**2 - u / (nu * b))])


def data(n, curve, *p):
    i = np.arange(n, dtype=float)
    t = 20.0 * i / (n - 1)
    return t, curve(t, *p) + 10.0 * np.sin(1.7 * i + 0.3)


CASES = [
    ("logistic_n50", 50, logistic, logistic_jac, (1000.0, 0.8, 10.0)),
    ("logistic_n1000", 1000, logistic, logistic_jac, (1000.0, 0.8, 10.0)),
    ("richards_n1000", 1000, richards, richards_jac, (1000.0, 0.8, 10.0, 0.5)),
]

REPEATS = 15


def main():
    for case, n, f, jac, truth in CASES:
        t, y = data(n, f, *truth)
        p0 = [float(np.max(y)), 1.0, float(np.median(t))] + [1.0] * (len(truth) - 3)

        def run():
            return curve_fit(f, t, y, p0=p0, jac=jac, method="lm", full_output=True)

        popt, _, info, _, _ = run()
        resid = y - f(t, *popt)
        timer = timeit.Timer(run)
        number, _ = timer.autorange()
        number = max(number, 1)
        per_fit = sorted(x / number for x in timer.repeat(repeat=REPEATS, number=number))
        print(json.dumps({
            "case": case,
            "n": n,
            "median_us": per_fit[len(per_fit) // 2] * 1e6,
            "nfev": int(info["nfev"]),
            "rss": float(resid @ resid),
            "params": [float(p) for p in popt],
        }), flush=True)
    print(json.dumps({
        "scipy": scipy.__version__,
        "numpy": np.__version__,
        "python": platform.python_version(),
    }))


if __name__ == "__main__":
    main()
