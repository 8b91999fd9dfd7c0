"""A Richards fit with nu < 0 by scipy, for
`crates/plateau-core/tests/core/richards.rs`.

Model (as Plateau writes it): y = K (1 + nu exp(-r (t - t0)))^(-1/nu),
defined where 1 + nu exp(-r (t - t0)) > 0, i.e. t > t0 + ln(-nu) / r for
nu < 0. The series: K 100, r 0.3, t0 12, nu -0.5 (defined from
t = 12 + ln(0.5) / 0.3 = 9.69) observed at t = 10, 11, ..., 45 with
Gaussian noise of sd 1.5 from numpy's default_rng(17), rounded to 6
decimals and written into the JSON. scipy.optimize.curve_fit ('lm',
tolerances 1e-15) from several starts (nu in -0.8 ... 0.5); the best kept.

Run: .venv/bin/python tests/reference/richards_negative.py > tests/reference/richards_negative.json
"""

import json

import numpy as np
from scipy import optimize


def richards(t, k, r, t0, nu):
    b = 1.0 + nu * np.exp(-r * (t - t0))
    with np.errstate(all="ignore"):
        return k * np.where(b > 0, b, np.nan) ** (-1.0 / nu)


def main():
    rng = np.random.default_rng(17)
    t = np.arange(10.0, 46.0)
    y = np.round(richards(t, 100.0, 0.3, 12.0, -0.5) + rng.normal(0.0, 1.5, t.size), 6)
    best = None
    for nu in [-0.8, -0.5, -0.3, -0.1, 0.2, 0.5]:
        for r in [0.1, 0.3, 0.6]:
            try:
                p, _ = optimize.curve_fit(
                    richards, t, y, p0=[y.max(), r, 12.0, nu], method="lm",
                    xtol=1e-15, ftol=1e-15, gtol=1e-15, maxfev=20000,
                )
            except (RuntimeError, ValueError):
                continue
            res = y - richards(t, *p)
            rss = float(np.sum(res**2))
            if np.isfinite(rss) and (best is None or rss < best[0]):
                best = (rss, p)
    rss, p = best
    print(json.dumps({
        "truth": {"K": 100.0, "r": 0.3, "t0": 12.0, "nu": -0.5},
        "t": t.tolist(),
        "y": y.tolist(),
        "rss": rss,
        "params": dict(zip(["K", "r", "t0", "nu"], [float(v) for v in p])),
    }, indent=1))


if __name__ == "__main__":
    main()
