"""Reference fits on the data's own calendar: the demo's first-of-month
tariff series fitted on the integer month index, the axis Plateau's parser
gives month data.

Reproduce (from the workspace root):

    python3 -m venv .venv && .venv/bin/pip install -r tests/reference/requirements.txt && .venv/bin/python tests/reference/calendar_fits.py

Writes tests/reference/calendar_fits.json, which
crates/plateau-core/tests/core/calendar.rs compares Plateau's parse-and-fit
against (estimates, standard errors, residual sum of squares).

Time axis: month index = 12 * (year - 2000) + (month - 1), computed here
from the ISO date with Python's datetime (independent of Plateau's parser).
Each fit is scipy.optimize.curve_fit(method="lm") (MINPACK) with the
analytic Jacobian, ftol = xtol = gtol = 1e-15, started from the README's
true parameters converted to months (r / 12, t0 = 12 (t0 - 2000)).
"""

import datetime
import json
import platform
from pathlib import Path

import numpy as np
import scipy
from scipy.optimize import curve_fit

ROOT = Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "reference" / "calendar_fits.json"


def logistic4(t, K, r, t0, L):
    return L + (K - L) / (1.0 + np.exp(-r * (t - t0)))


def logistic4_jac(t, K, r, t0, L):
    s = 1.0 / (1.0 + np.exp(-r * (t - t0)))
    ds = s * (1.0 - s)
    return np.column_stack([s, (K - L) * ds * (t - t0), -(K - L) * ds * r, 1.0 - s])


def logistic(t, K, r, t0):
    return K / (1.0 + np.exp(-r * (t - t0)))


def logistic_jac(t, K, r, t0):
    s = 1.0 / (1.0 + np.exp(-r * (t - t0)))
    ds = s * (1.0 - s)
    return np.column_stack([s, K * ds * (t - t0), -K * ds * r])


MODELS = {
    "logistic4": (logistic4, logistic4_jac, ["K", "r", "t0", "L"]),
    "logistic": (logistic, logistic_jac, ["K", "r", "t0"]),
}

# (case id, demo file, model, start: the README's truth in months)
CASES = [
    ("logistic4_tariff_months", "tariff_share_monthly.csv", "logistic4",
     [78.0, 1.6 / 12, 12 * 21.25, 12.0]),
    ("logistic_tariff_months", "tariff_share_monthly.csv", "logistic",
     [90.0, 1.0 / 12, 12 * 21.0]),
]


def month_index(iso):
    d = datetime.date.fromisoformat(iso)
    return 12 * (d.year - 2000) + (d.month - 1)


def load(name):
    lines = (ROOT / "demo-data" / name).read_text().splitlines()
    t, y = [], []
    for line in lines[1:]:
        a, b = line.split(",")
        t.append(float(month_index(a)))
        y.append(float(b))
    return np.array(t), np.array(y)


def fit(case_id, name, model, p0):
    f, jac, names = MODELS[model]
    t, y = load(name)
    popt, pcov, info, msg, ier = curve_fit(
        f, t, y, p0=p0, jac=jac, method="lm", absolute_sigma=False,
        ftol=1e-15, xtol=1e-15, gtol=1e-15, maxfev=100000, full_output=True,
    )
    resid = y - f(t, *popt)
    return {
        "id": case_id,
        "file": f"demo-data/{name}",
        "model": model,
        "time_axis": "month_index_since_2000_01",
        "n": int(len(t)),
        "first_t": float(t[0]),
        "params": dict(zip(names, map(float, popt))),
        "std_errors": dict(zip(names, map(float, np.sqrt(np.diag(pcov))))),
        "rss": float(resid @ resid),
        "minpack_ier": int(ier),
    }


def main():
    out = {
        "source": "scipy.optimize.curve_fit(method='lm', analytic jac, ftol=xtol=gtol=1e-15) "
                  "on the month index 12*(year-2000)+(month-1)",
        "versions": {
            "python": platform.python_version(),
            "numpy": np.__version__,
            "scipy": scipy.__version__,
        },
        "cases": [fit(*c) for c in CASES],
    }
    OUT.write_text(json.dumps(out, indent=2) + "\n")
    print(f"wrote {OUT}")


if __name__ == "__main__":
    main()
