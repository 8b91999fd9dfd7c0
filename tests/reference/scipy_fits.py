"""Reference fits of the demo data with scipy.optimize.curve_fit.

Reproduce (from the workspace root):

    python3 -m venv .venv && .venv/bin/pip install -r tests/reference/requirements.txt && .venv/bin/python tests/reference/scipy_fits.py

Writes tests/reference/scipy_fits.json, which
crates/plateau-core/tests/core/scipy.rs compares Plateau's self-started fits
against (estimates, standard errors, residual sum of squares).

Every fit: scipy.optimize.curve_fit(method="lm") (MINPACK lmder) with the
analytic Jacobian, ftol = xtol = gtol = 1e-15, a large maxfev, started at
the true parameters from demo-data/README.md, unweighted, absolute_sigma=False,
so std_errors = sqrt(diag(pcov)) with pcov = (J'J)^-1 * rss / (n - p).

Time axis: numeric first columns are used as they are. ISO dates (first
column YYYY-MM-DD) become the decimal year
    year + (day_of_year - 1) / days_in_year
(days_in_year 365 or 366), which is the axis Plateau's parser uses for ISO
dates and the one scipy.rs recomputes in Rust.
"""

import calendar
import datetime
import json
import platform
import sys
from pathlib import Path

import numpy as np
import scipy
from scipy.optimize import curve_fit

ROOT = Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "reference" / "scipy_fits.json"


# --- models (Plateau's parameter order) and analytic Jacobians -------------

def logistic(t, K, r, t0):
    return K / (1.0 + np.exp(-r * (t - t0)))


def logistic_jac(t, K, r, t0):
    s = 1.0 / (1.0 + np.exp(-r * (t - t0)))
    ds = s * (1.0 - s)
    return np.column_stack([s, K * ds * (t - t0), -K * ds * r])


def logistic4(t, K, r, t0, L):
    return L + (K - L) / (1.0 + np.exp(-r * (t - t0)))


def logistic4_jac(t, K, r, t0, L):
    s = 1.0 / (1.0 + np.exp(-r * (t - t0)))
    ds = s * (1.0 - s)
    return np.column_stack([s, (K - L) * ds * (t - t0), -(K - L) * ds * r, 1.0 - s])


def gompertz(t, K, r, t0):
    return K * np.exp(-np.exp(-r * (t - t0)))


def gompertz_jac(t, K, r, t0):
    e = np.exp(-r * (t - t0))
    g = np.exp(-e)
    return np.column_stack([g, K * g * e * (t - t0), -K * g * e * r])


def exponential(t, a, r):
    return a * np.exp(r * t)


def exponential_jac(t, a, r):
    e = np.exp(r * t)
    return np.column_stack([e, a * t * e])


MODELS = {
    "logistic": (logistic, logistic_jac, ["K", "r", "t0"]),
    "logistic4": (logistic4, logistic4_jac, ["K", "r", "t0", "L"]),
    "gompertz": (gompertz, gompertz_jac, ["K", "r", "t0"]),
    "exponential": (exponential, exponential_jac, ["a", "r"]),
}

# (case id, demo file, model, starting values = the file's true parameters)
CASES = [
    ("logistic_aldermoor", "aldermoor_subscribers.csv", "logistic", [12000.0, 0.25, 14.0]),
    ("gompertz_aldermoor", "aldermoor_subscribers.csv", "gompertz", [12000.0, 0.25, 14.0]),
    ("logistic_fenwick_vale", "fenwick_vale_subscribers.csv", "logistic", [8000.0, 0.2, 25.0]),
    ("gompertz_harrow_fields", "harrow_fields_capacity.csv", "gompertz", [850.0, 0.2, 9.0]),
    ("logistic4_tariff_share", "tariff_share_monthly.csv", "logistic4", [78.0, 1.6, 2021.25, 12.0]),
    ("exponential_saltmarsh", "saltmarsh_app_installs.csv", "exponential", [40.0, 0.09]),
]


def decimal_year(iso):
    d = datetime.date.fromisoformat(iso)
    days = 366 if calendar.isleap(d.year) else 365
    return d.year + (d.timetuple().tm_yday - 1) / days


def load(name):
    lines = (ROOT / "demo-data" / name).read_text().splitlines()
    t, y = [], []
    dates = False
    for line in lines[1:]:
        a, b = line.split(",")
        dates = "-" in a
        t.append(decimal_year(a) if dates else float(a))
        y.append(float(b))
    return np.array(t), np.array(y), dates


def fit(case_id, name, model, p0):
    f, jac, names = MODELS[model]
    t, y, dates = load(name)
    popt, pcov, info, msg, ier = curve_fit(
        f, t, y, p0=p0, jac=jac, method="lm", absolute_sigma=False,
        ftol=1e-15, xtol=1e-15, gtol=1e-15, maxfev=100000, full_output=True,
    )
    resid = y - f(t, *popt)
    return {
        "id": case_id,
        "file": f"demo-data/{name}",
        "model": model,
        "time_axis": "decimal_year" if dates else "numeric",
        "n": int(len(t)),
        "params": dict(zip(names, map(float, popt))),
        "std_errors": dict(zip(names, map(float, np.sqrt(np.diag(pcov))))),
        "rss": float(resid @ resid),
        "nfev": int(info["nfev"]),
        "minpack_ier": int(ier),
        "minpack_message": msg,
    }


def main():
    out = {
        "source": "scipy.optimize.curve_fit(method='lm', analytic jac, ftol=xtol=gtol=1e-15), "
                  "tests/reference/scipy_fits.py",
        "scipy": scipy.__version__,
        "numpy": np.__version__,
        "python": platform.python_version(),
        "cases": [fit(*c) for c in CASES],
    }
    OUT.write_text(json.dumps(out, indent=2) + "\n")
    for c in out["cases"]:
        print(c["id"], c["params"], "rss", c["rss"], "ier", c["minpack_ier"], file=sys.stderr)
    print(f"wrote {OUT.relative_to(ROOT)}", file=sys.stderr)


if __name__ == "__main__":
    main()
