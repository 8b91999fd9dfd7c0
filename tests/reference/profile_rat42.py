"""Profile-likelihood 95% intervals for NIST StRD Rat42, computed
independently of Plateau with scipy, for `tests/core/profile.rs`.

Model y = K / (1 + exp(-r (x - t0))) (Rat42's b1 / (1 + exp(b2 - b3 x))
with K = b1, r = b3, t0 = b2 / b3). For each parameter the others are
refitted by scipy.optimize.least_squares (MINPACK lm) at fixed values,
each refit started from the certified values (no warm starts), and the
crossings of the profile t statistic (Bates & Watts 1988, §6.1)
    tau = sign(theta - theta_hat) sqrt(S(theta) - S_hat) / s
with +-t(0.975, n - 3) are found by scipy.optimize.brentq.

Run: .venv/bin/python tests/reference/profile_rat42.py > tests/reference/profile_rat42.json
"""

import json
import os

import numpy as np
from scipy import optimize, stats

HERE = os.path.dirname(os.path.abspath(__file__))


def load():
    xs, ys = [], []
    data = False
    with open(os.path.join(HERE, "nist", "Rat42.dat")) as f:
        for line in f:
            w = line.split()
            if data and len(w) == 2:
                ys.append(float(w[0]))
                xs.append(float(w[1]))
            elif line.startswith("Data:") and len(w) > 1 and w[1] == "y":
                data = True
    return np.array(xs), np.array(ys)


def model(p, x):
    k, r, t0 = p
    return k / (1.0 + np.exp(-r * (x - t0)))


def main():
    x, y = load()
    names = ["K", "r", "t0"]
    # Certified values (NIST): b1 = 72.462237576, b2 = 2.6180768402, b3 = 0.067359200066.
    cert = np.array([72.462237576, 0.067359200066, 2.6180768402 / 0.067359200066])
    full = optimize.least_squares(
        lambda p: y - model(p, x), cert, method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15
    )
    p_hat = full.x
    s_hat = float(np.sum(full.fun**2))
    n, p = len(x), 3
    dof = n - p
    s = np.sqrt(s_hat / dof)
    tq = stats.t.ppf(0.975, dof)

    def profile_rss(j, value):
        others = [i for i in range(3) if i != j]

        def res(q):
            v = p_hat.copy()
            v[j] = value
            v[others] = q
            return y - model(v, x)

        out = optimize.least_squares(
            res, cert[others], method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15
        )
        return float(np.sum(out.fun**2))

    def tau(j, value):
        d = max(profile_rss(j, value) - s_hat, 0.0)
        return np.sign(value - p_hat[j]) * np.sqrt(d) / s

    out = {"source": "NIST StRD Rat42; scipy profile (least_squares lm + brentq)",
           "scipy": __import__("scipy").__version__, "numpy": np.__version__,
           "dof": dof, "t_quantile": tq, "estimate": dict(zip(names, p_hat.tolist())),
           "rss": s_hat, "profile95": {}}
    for j, name in enumerate(names):
        # Bracket each side by stepping out in multiples of the estimate's
        # size until |tau| passes the quantile.
        bounds = []
        for sign in (-1.0, 1.0):
            step = 0.01 * abs(p_hat[j])
            b = p_hat[j] + sign * step
            while sign * tau(j, b) < tq:
                step *= 1.5
                b = p_hat[j] + sign * step
            a = p_hat[j]
            root = optimize.brentq(lambda v: tau(j, v) - sign * tq, min(a, b), max(a, b),
                                   xtol=1e-14, rtol=1e-14)
            bounds.append(root)
        out["profile95"][name] = bounds
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
