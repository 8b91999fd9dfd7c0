"""Reference fits under each error model, computed independently of
Plateau with scipy, for crates/plateau-core/tests/core/error_models.rs.

Data: demo-data/weekly_signups.csv (weekly new sign-ups), summed into
running totals (as Plateau's --per-period does); model logistic
K / (1 + exp(-r (t - t0))).

For each error model and for the totals ("cumulative") and their weekly
differences ("increments", the model's f(t_i) - f(t_{i-1}) against
Y_i - Y_{i-1}):

* additive: scipy.optimize.least_squares(method="lm") on y - f.
* log: least_squares on ln y - ln f.
* relative / count: iteratively reweighted least squares, weights
  1/f^2 and 1/f from the previous fit, until the parameters change by
  less than 1e-12 relative (each step a least_squares fit with the
  weights held fixed).

Log-likelihood at the MLE of sigma (sigma^2 = S/n, S the weighted or
log-scale sum of squares), summed with scipy.stats densities of the data
as given:
* additive / relative / count: norm.logpdf(y, f, sigma / sqrt(w)).
* log: lognorm.logpdf(y, s=sigma, scale=f) (includes the -ln y Jacobian).
k = 3 curve parameters + sigma; AICc = -2 lnL + 2k + 2k(k+1)/(n-k-1).

Run: .venv/bin/python tests/reference/error_models.py > tests/reference/error_models.json
"""

import json
from pathlib import Path

import numpy as np
import scipy
from scipy import optimize, stats

ROOT = Path(__file__).resolve().parents[2]


def load():
    rows = [l.split(",") for l in (ROOT / "demo-data" / "weekly_signups.csv").read_text().splitlines()[1:] if l.strip()]
    t = np.array([float(r[0]) for r in rows])
    counts = np.array([float(r[1]) for r in rows])
    return t, np.cumsum(counts)


def logistic(p, t):
    k, r, t0 = p
    return k / (1.0 + np.exp(-r * (t - t0)))


def on_scale(p, t, increments):
    f = logistic(p, t)
    return np.diff(f) if increments else f


def fit(t, y_total, model, increments, start):
    y = np.diff(y_total) if increments else y_total
    tol = dict(method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15, max_nfev=100000)
    if model == "log":
        res = optimize.least_squares(lambda p: np.log(y) - np.log(on_scale(p, t, increments)), start, **tol)
        p = res.x
        w = np.ones_like(y)
        s = float(np.sum(res.fun**2))
    else:
        w = np.ones_like(y)
        p = np.array(start, dtype=float)
        for _ in range(200):
            sw = np.sqrt(w)
            res = optimize.least_squares(lambda q: sw * (y - on_scale(q, t, increments)), p, **tol)
            change = np.max(np.abs(res.x - p) / np.abs(p))
            p = res.x
            if model == "additive":
                break
            f = on_scale(p, t, increments)
            w_new = 1.0 / f**2 if model == "relative" else 1.0 / f
            if change < 1e-12 and np.allclose(w_new, w, rtol=1e-12, atol=0):
                break
            w = w_new
        sw = np.sqrt(w)
        s = float(np.sum((sw * (y - on_scale(p, t, increments))) ** 2))
    n = len(y)
    sigma_mle = np.sqrt(s / n)
    f = on_scale(p, t, increments)
    if model == "log":
        loglik = float(np.sum(stats.lognorm.logpdf(y, s=sigma_mle, scale=f)))
    else:
        loglik = float(np.sum(stats.norm.logpdf(y, loc=f, scale=sigma_mle / np.sqrt(w))))
    k = 4
    aicc = -2 * loglik + 2 * k + 2 * k * (k + 1) / (n - k - 1)
    return {"params": p.tolist(), "rss": s, "n": n, "log_likelihood": loglik, "aicc": aicc}


def main():
    t, y = load()
    start = [6000.0, 0.15, 24.0]
    out = {"source": "demo-data/weekly_signups.csv summed; scipy least_squares (lm), IRLS, scipy.stats densities",
           "scipy": scipy.__version__, "numpy": np.__version__, "fits": {}}
    for increments in (False, True):
        for model in ("additive", "relative", "log", "count"):
            key = f"{model}{'_increments' if increments else ''}"
            out["fits"][key] = fit(t, y, model, increments, start)
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
