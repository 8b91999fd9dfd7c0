"""Constrained least-squares minima (one parameter held) by an independent
multi-start in scipy, for `crates/plateau-core/tests/core/constrained.rs`.

Models (as Plateau writes them):
    logistic  y = K / (1 + exp(-r (t - t0)))
    gompertz  y = K exp(-exp(-r (t - t0)))

For every series, model and held parameter (K, r or t0 at several values)
the two free parameters are refitted by scipy.optimize.least_squares
(MINPACK 'lm', tolerances 1e-15) from a grid of starts: K, r in log form
(K = e^a, r = e^b, so that every start stays positive) and t0 as is, on
a 9 x 9 grid over the free pair (K: max(y) times 1.01 ... 1e4; r: 1e-4 to
1e2 per time span; t0: from the first time minus 50 spans to the last
time plus 50 spans, in units of 1/r where r is held). The best of all
starts is kept and polished once more in the model's own parameters.

`interior` says whether the best point is an ordinary interior minimum
(K below 100 max(y), r span in [0.01, 1000], t0 within 100 spans of the
data); where it is not, the constrained infimum is approached at infinity
(K beyond any bound) and only the RSS is compared.

Profiles (the open sides): on the early series, the profile RSS of the
Gompertz r (going down) and t0 (going up) and of the logistic t0 (going
up) is evaluated by the same multi-start at values out to where K is
still representable in double precision. Beyond them lies a limit:
as r -> 0 with u r (u = e^(r t0)) fixed, the Gompertz curve tends to an
exponential a e^(c t) (ln y = ln K - u + u r t - u r^2 t^2 / 2 + ...), and
as t0 -> infinity both curves do (the logistic's lower tail is
K e^(r (t - t0))). So the profile there tends to the RSS of the
exponential fit (`exponential_limit`, by curve_fit): a side is open when
the profile t statistic stays below t(0.975, n - 3) at every sampled
value and in that limit.

Series: `early` is the issue's 12-point early-growth series (t = 0, 2,
..., 20, 21); `late` is a logistic (K 1000, r 0.35, t0 10) observed to
t = 30 with Gaussian noise of sd 8, `noisy` a Gompertz (K 500, r 0.15,
t0 20) to t = 39 with noise of sd 25; both from numpy's default_rng(17)
and written into the JSON so the Rust test reads the same values.

Run: .venv/bin/python tests/reference/constrained.py > tests/reference/constrained.json
"""

import json

import numpy as np
from scipy import optimize, stats

NAMES = ["K", "r", "t0"]


def logistic(p, t):
    k, r, t0 = p
    return k / (1.0 + np.exp(-r * (t - t0)))


def gompertz(p, t):
    k, r, t0 = p
    return k * np.exp(-np.exp(-r * (t - t0)))


MODELS = {"logistic": logistic, "gompertz": gompertz}


def series():
    rng = np.random.default_rng(17)
    early_t = np.array([0, 2, 4, 6, 8, 10, 12, 14, 16, 18, 20, 21], dtype=float)
    early_y = np.array([42, 51, 59, 64, 76, 93, 106, 125, 149, 171, 199, 205], dtype=float)
    late_t = np.arange(0.0, 31.0)
    late_y = logistic((1000.0, 0.35, 10.0), late_t) + rng.normal(0.0, 8.0, late_t.size)
    noisy_t = np.arange(0.0, 40.0)
    noisy_y = gompertz((500.0, 0.15, 20.0), noisy_t) + rng.normal(0.0, 25.0, noisy_t.size)
    return {
        "early": (early_t, early_y),
        "late": (late_t, np.round(late_y, 6)),
        "noisy": (noisy_t, np.round(noisy_y, 6)),
    }


def constrained(f, t, y, held, value):
    """Best (rss, params) over a grid of starts with parameter `held` at `value`."""
    free = [j for j in range(3) if j != held]
    span = t.max() - t.min()
    ymax = y.max()

    def full(x):
        p = [0.0, 0.0, 0.0]
        p[held] = value
        for j, v in zip(free, x):
            p[j] = np.exp(v) if j < 2 else v
        return p

    def res(x):
        with np.errstate(all="ignore"):
            r = y - f(full(x), t)
        return np.where(np.isfinite(r), r, 1e150)

    grids = {
        0: np.log(ymax * np.array([1.01, 1.1, 1.5, 2.5, 5, 15, 50, 300, 1e4])),
        1: np.log(np.logspace(-4, 2, 9) / span),
        2: None,
    }
    if held == 1:
        # t0 in units of 1/r around the data.
        grids[2] = t.mean() + np.linspace(-12.0, 12.0, 9) / value
    else:
        grids[2] = np.linspace(t.min() - 50 * span, t.max() + 50 * span, 9)
        grids[2] = np.concatenate([grids[2], np.linspace(t.min(), t.max(), 5)])
    best = None
    for a in grids[free[0]]:
        for b in grids[free[1]]:
            try:
                out = optimize.least_squares(
                    res, [a, b], method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15, max_nfev=4000
                )
            except Exception:
                continue
            rss = float(np.sum(out.fun**2))
            if np.isfinite(rss) and (best is None or rss < best[0]):
                best = (rss, full(out.x))
    rss, p = best
    # Polish in the model's own parameters.
    x0 = [p[j] for j in free]

    def res2(x):
        q = list(p)
        for j, v in zip(free, x):
            q[j] = v
        with np.errstate(all="ignore"):
            r = y - f(q, t)
        return np.where(np.isfinite(r), r, 1e150)

    out = optimize.least_squares(res2, x0, method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15)
    rss2 = float(np.sum(out.fun**2))
    if rss2 <= rss:
        q = list(p)
        for j, v in zip(free, out.x):
            q[j] = float(v)
        rss, p = rss2, q
    interior = bool(
        p[0] < 100 * ymax and p[1] * span > 1e-2 and p[1] * span < 1e3 and abs(p[2] - t.mean()) < 100 * span
    )
    return rss, [float(v) for v in p], interior


def unconstrained(f, t, y):
    best = None
    span = t.max() - t.min()
    for k in y.max() * np.array([1.01, 1.2, 2, 5, 20, 100, 1e3]):
        for r in np.logspace(-3, 1.5, 7) / span * 10:
            for t0 in np.linspace(t.min() - span, t.max() + 5 * span, 7):
                def res(x):
                    with np.errstate(all="ignore"):
                        v = y - f([np.exp(x[0]), np.exp(x[1]), x[2]], t)
                    return np.where(np.isfinite(v), v, 1e150)

                out = optimize.least_squares(
                    res, [np.log(k), np.log(r), t0], method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15
                )
                rss = float(np.sum(out.fun**2))
                if best is None or rss < best[0]:
                    best = (rss, [float(np.exp(out.x[0])), float(np.exp(out.x[1])), float(out.x[2])])
    return best


def main():
    out = {"series": {}, "cases": [], "profiles": []}
    data = series()
    for name, (t, y) in data.items():
        out["series"][name] = {"t": t.tolist(), "y": y.tolist()}
    for sname, (t, y) in data.items():
        span = t.max() - t.min()
        for mname, f in MODELS.items():
            rss_hat, p_hat = unconstrained(f, t, y)
            held_values = {
                0: [1.05 * y.max(), 1.5 * y.max(), 3 * y.max(), 20 * y.max()],
                1: [0.0015, 0.03, 0.1, 0.5, 2.0 / span],
                2: [t.min(), t.mean(), t.max() + span, 400.0],
            }
            for held, values in held_values.items():
                for v in values:
                    rss, p, interior = constrained(f, t, y, held, float(v))
                    out["cases"].append(
                        {
                            "series": sname,
                            "model": mname,
                            "held": NAMES[held],
                            "value": float(v),
                            "rss": rss,
                            "params": dict(zip(NAMES, p)),
                            "interior": interior,
                            "unconstrained_rss": rss_hat,
                        }
                    )
    # Open profile sides on the early series (Gompertz r below, t0 above;
    # logistic t0 above).
    t, y = data["early"]
    n = len(t)
    tq = float(stats.t.ppf(0.975, n - 3))
    ex, _ = optimize.curve_fit(
        lambda t, a, c: a * np.exp(c * t), t, y, p0=[40.0, 0.07], method="lm", xtol=1e-15, ftol=1e-15
    )
    ex_rss = float(np.sum((y - ex[0] * np.exp(ex[1] * t)) ** 2))
    out["exponential_limit"] = {"series": "early", "a": float(ex[0]), "c": float(ex[1]), "rss": ex_rss}
    for mname, held, values in [
        ("gompertz", 1, [3e-3, 2e-3, 1e-3, 5e-4]),
        ("gompertz", 2, [1e3, 3e3, 1e4]),
        ("logistic", 2, [200.0, 1e3, 3e3]),
    ]:
        f = MODELS[mname]
        rss_hat, p_hat = unconstrained(f, t, y)
        s = np.sqrt(rss_hat / (n - 3))
        for v in values + ["limit"]:
            rss = ex_rss if v == "limit" else constrained(f, t, y, held, v)[0]
            tau = float(np.sqrt(max(rss - rss_hat, 0.0)) / s)
            out["profiles"].append(
                {
                    "series": "early",
                    "model": mname,
                    "param": NAMES[held],
                    "value": v,
                    "rss": rss,
                    "unconstrained_rss": rss_hat,
                    "unconstrained": dict(zip(NAMES, p_hat)),
                    "tau": tau,
                    "t_crit": tq,
                    "inside": tau < tq,
                }
            )
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()
