"""Expected values for tests/fixtures/change_py.json, the reference of the average change per
time unit (core/src/trend/change.rs), computed with numpy and statsmodels, independently of
trajweave's core:

- the window: numpy.quantile(times, [(1 - central) / 2, (1 + central) / 2], method="linear")
  (type 7) for central 0.9, 0.5 and 1;
- the least-squares slope of response on time: numpy.polyfit(t, y, 1)[0];
- the estimate for LOWESS without robustness iterations (span 2/3, delta 0):
  statsmodels' lowess(y, t, frac=2/3, it=0, delta=0) at the sorted times, taken at the
  window's ends by numpy.interp (linear between fitted points), then
  (m(to) - m(from)) / (to - from).

The panel is generated here (fixed seed, continuous times so no two coincide) and written into
the fixture as input. Run from the repository root:

    .venv/bin/python tests/reference/change_py.py          # rewrite the fixture
    .venv/bin/python tests/reference/change_py.py --check  # fail if it would change
"""

import json
import sys
from pathlib import Path

import numpy as np
import statsmodels
from statsmodels.nonparametric.smoothers_lowess import lowess

FIXTURE = Path(__file__).resolve().parents[1] / "fixtures" / "change_py.json"
CENTRALS = [0.9, 0.5, 1.0]


def panel():
    rng = np.random.default_rng(20260317)
    subject, time, response = [], [], []
    for s in range(60):
        k = int(rng.integers(3, 10))
        t = np.sort(rng.uniform(0.0, 8.0, k))
        u = rng.normal(0.0, 6.0)
        y = 80.0 - 1.5 * t - 0.12 * t ** 2 + 4.0 * np.sin(t) + u + rng.normal(0.0, 3.0, k)
        subject += [s + 1] * k
        time += t.tolist()
        response += y.tolist()
    return subject, np.array(time), np.array(response)


def build():
    subject, t, y = panel()
    order = np.argsort(t, kind="stable")
    fit = lowess(y, t, frac=2.0 / 3.0, it=0, delta=0.0, return_sorted=True)
    cases = []
    for central in CENTRALS:
        lo, hi = np.quantile(t, [(1 - central) / 2, (1 + central) / 2], method="linear")
        m_lo, m_hi = np.interp([lo, hi], fit[:, 0], fit[:, 1])
        cases.append({"central": central, "from": float(lo), "to": float(hi),
                      "lowess_estimate": float((m_hi - m_lo) / (hi - lo))})
    assert np.all(np.diff(t[order]) > 0), "times must be distinct"
    return {
        "about": "average change per time unit: numpy quantile (type 7), numpy polyfit, "
                 f"statsmodels {statsmodels.__version__} lowess (it=0, delta=0, frac=2/3) + numpy interp; "
                 "written by tests/reference/change_py.py",
        "subject": subject, "time": t.tolist(), "response": y.tolist(),
        "ols_slope": float(np.polyfit(t, y, 1)[0]),
        "cases": cases,
    }


if __name__ == "__main__":
    text = json.dumps(build(), indent=None) + "\n"
    if "--check" in sys.argv:
        if FIXTURE.read_text() != text:
            sys.exit(f"{FIXTURE} is out of date: rerun {Path(__file__).name}")
    else:
        FIXTURE.write_text(text)
