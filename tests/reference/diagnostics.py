"""Reference residual diagnostics of demo-data fits with statsmodels and scipy.

Reproduce (from the workspace root):

    python3 -m venv .venv && .venv/bin/pip install -r tests/reference/requirements.txt && .venv/bin/python tests/reference/diagnostics.py

Writes tests/reference/diagnostics.json, which
crates/plateau-core/tests/core/diagnostics.rs compares Plateau's
`diagnostics` module against.

Each case fits a model to a demo file with scipy.optimize.curve_fit
(method="lm", analytic Jacobian, tolerances 1e-15, started at the file's
true parameters; the helpers come from scipy_fits.py beside this file),
takes the residuals y - f(t) in time order, and computes:

- statsmodels.stats.stattools.durbin_watson(resid)
- statsmodels.sandbox.stats.runs.runstest_1samp(resid, cutoff=0, correction=True)
  -> (z, p); also the run count and signs, counted here with x >= 0 as
  statsmodels does
- statsmodels.tsa.stattools.acf(resid, nlags=1, fft=False)[1]
- scipy.stats.probplot(resid, dist="norm") -> theoretical quantiles,
  ordered residuals, least-squares slope, intercept and r
- statsmodels.stats.stattools.jarque_bera(resid) -> JB, p, skew, kurtosis

The residuals themselves are written out, so the Rust test feeds the same
numbers to Plateau and compares the statistics alone; Plateau's own fit
residuals are compared separately (they agree to the fit's precision).

Also, per logistic/Richards pair on one file, the likelihood-ratio statistic
n ln(RSS_logistic / RSS_richards) with scipy.stats.chi2.sf(LR, 1), and for the
Fisher-Pry curvature the statsmodels WLS fit of z = a + b u + c u^2
(u = standardised time, weights (y (K - y) / K)^2) with c's t statistic and
two-sided p, and the weighted straight line from numpy.polyfit.
"""

import json
import platform
import sys
from pathlib import Path

import numpy as np
import scipy
import statsmodels
import statsmodels.api as sm
from scipy import stats
from scipy.optimize import curve_fit
from statsmodels.sandbox.stats.runs import runstest_1samp
from statsmodels.stats.stattools import durbin_watson, jarque_bera
from statsmodels.tsa.stattools import acf

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
import scipy_fits as sf  # noqa: E402

ROOT = HERE.parents[1]
OUT = HERE / "diagnostics.json"


def richards(t, K, r, t0, nu):
    return K * (1.0 + nu * np.exp(-r * (t - t0))) ** (-1.0 / nu)


def richards_jac(t, K, r, t0, nu):
    e = np.exp(-r * (t - t0))
    b = 1.0 + nu * e
    f = K * b ** (-1.0 / nu)
    g = K * b ** (-1.0 / nu - 1.0) * e
    return np.column_stack([f / K, g * (t - t0), -g * r, f * (np.log(b) / nu**2 - e / (nu * b))])


MODELS = dict(sf.MODELS)
MODELS["richards"] = (richards, richards_jac, ["K", "r", "t0", "nu"])

# (case id, demo file, model, start)
CASES = [
    ("logistic_aldermoor", "aldermoor_subscribers.csv", "logistic", [12000.0, 0.25, 14.0]),
    ("logistic_fenwick_vale", "fenwick_vale_subscribers.csv", "logistic", [8000.0, 0.2, 25.0]),
    # A logistic on Gompertz data: the residuals should show the misfit.
    ("logistic_harrow_fields", "harrow_fields_capacity.csv", "logistic", [850.0, 0.2, 9.0]),
    ("gompertz_harrow_fields", "harrow_fields_capacity.csv", "gompertz", [850.0, 0.2, 9.0]),
    ("richards_harrow_fields", "harrow_fields_capacity.csv", "richards", [850.0, 0.2, 9.0, 0.1]),
    ("richards_aldermoor", "aldermoor_subscribers.csv", "richards", [12000.0, 0.25, 14.0, 1.0]),
    ("logistic4_tariff_share", "tariff_share_monthly.csv", "logistic4", [78.0, 1.6, 2021.25, 12.0]),
    ("exponential_saltmarsh", "saltmarsh_app_installs.csv", "exponential", [40.0, 0.09]),
]

# likelihood-ratio pairs (nested case id, general case id)
LR_PAIRS = [
    ("logistic_harrow_fields", "richards_harrow_fields"),
    ("logistic_aldermoor", "richards_aldermoor"),
]

# Fisher-Pry curvature: (file, K, error model of the fit)
FISHER_PRY = [
    ("aldermoor_subscribers.csv", 12000.0, "additive"),
    ("aldermoor_subscribers.csv", 14000.0, "additive"),
    ("harrow_fields_capacity.csv", 850.0, "additive"),
    ("aldermoor_subscribers.csv", 12000.0, "relative"),
    ("harrow_fields_capacity.csv", 850.0, "count"),
]


def case(case_id, name, model, p0):
    f, jac, names = MODELS[model]
    t, y, _ = sf.load(name)
    popt, _pcov = curve_fit(
        f, t, y, p0=p0, jac=jac, method="lm",
        ftol=1e-15, xtol=1e-15, gtol=1e-15, maxfev=100000,
    )
    order = np.argsort(t, kind="stable")
    resid = (y - f(t, *popt))[order]
    z, p = runstest_1samp(resid, cutoff=0, correction=True)
    pos = resid >= 0
    runs = 1 + int(np.sum(pos[1:] != pos[:-1]))
    (osm, osr), (slope, intercept, r) = stats.probplot(resid, dist="norm")
    jb, jbp, skew, kurt = jarque_bera(resid)
    return {
        "id": case_id,
        "file": f"demo-data/{name}",
        "model": model,
        "n": int(len(t)),
        "params": dict(zip(names, map(float, popt))),
        "rss": float(resid @ resid),
        "residuals": [float(v) for v in resid],
        "durbin_watson": float(durbin_watson(resid)),
        "runs": {"n_positive": int(pos.sum()), "n_negative": int((~pos).sum()),
                 "runs": runs, "z": float(z), "p_value": float(p)},
        "acf1": float(acf(resid, nlags=1, fft=False)[1]),
        "probplot": {"theoretical": [float(v) for v in osm], "ordered": [float(v) for v in osr],
                     "slope": float(slope), "intercept": float(intercept), "r": float(r)},
        "jarque_bera": {"statistic": float(jb), "p_value": float(jbp),
                        "skewness": float(skew), "kurtosis": float(kurt)},
    }


def fisher_pry(name, k, errors):
    t, y, _ = sf.load(name)
    keep = (y > 0) & (y < k)
    t, y = t[keep], y[keep]
    z = np.log(y / (k - y))
    u = (t - t.mean()) / t.std()
    X = np.column_stack([np.ones_like(u), u, u * u])
    # Delta-method weights 1 / var z, var z ~ var(y) (K / (y (K - y)))^2, with
    # var(y) constant (additive), ~ y^2 (relative, log) or ~ y (count).
    w = (y * (k - y) / k) ** 2 / {"additive": 1.0, "relative": y**2, "log": y**2, "count": y}[errors]
    res = sm.WLS(z, X, weights=w).fit()
    line = np.polyfit(t, z, 1, w=np.sqrt(w))
    return {"file": f"demo-data/{name}", "k": k, "errors": errors, "n": int(len(t)),
            "slope": float(line[0]), "intercept": float(line[1]),
            "curvature": float(res.params[2]), "curvature_t": float(res.tvalues[2]),
            "curvature_p": float(res.pvalues[2])}


def main():
    cases = [case(*c) for c in CASES]
    by_id = {c["id"]: c for c in cases}
    lr = []
    for a, b in LR_PAIRS:
        n = by_id[a]["n"]
        stat = n * np.log(by_id[a]["rss"] / by_id[b]["rss"])
        lr.append({"nested": a, "general": b, "n": n, "rss_nested": by_id[a]["rss"],
                   "rss_general": by_id[b]["rss"], "statistic": float(stat),
                   "p_value": float(stats.chi2.sf(stat, 1))})
    out = {
        "source": "statsmodels durbin_watson, runstest_1samp(cutoff=0, correction=True), "
                  "acf(nlags=1), jarque_bera, WLS; scipy probplot, chi2.sf; "
                  "tests/reference/diagnostics.py",
        "statsmodels": statsmodels.__version__,
        "scipy": scipy.__version__,
        "numpy": np.__version__,
        "python": platform.python_version(),
        "cases": cases,
        "likelihood_ratio": lr,
        "fisher_pry": [fisher_pry(*c) for c in FISHER_PRY],
    }
    OUT.write_text(json.dumps(out, indent=1) + "\n")
    for c in cases:
        print(c["id"], "dw", round(c["durbin_watson"], 3), "runs", c["runs"], file=sys.stderr)
    print(f"wrote {OUT.relative_to(ROOT)}", file=sys.stderr)


if __name__ == "__main__":
    main()
