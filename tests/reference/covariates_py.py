"""Recomputes tests/fixtures/covariates_py.json, the outside reference for
core/tests/covariates_reference.rs:

- conditional trends: per covariate interval, the least-squares slope and intercept of
  response on time and the slope's cluster-robust standard error from statsmodels
  OLS(...).fit(cov_type="cluster", cov_kwds={"groups": subject}); statsmodels' default
  small-sample correction is use_correction=True, i.e. CR1: G/(G-1) * (N-1)/(N-K);
- the trajectory grid: a pandas pivot (groupby subject and bin, mean and size), rows ordered
  by (order_by, subject id), bins found with numpy.searchsorted.

The panel is generated here (numpy, fixed seed) and written into the fixture as input. It has
one-visit subjects, rows duplicated in (subject, time), rows in shuffled order, a time-fixed
covariate (age) and a time-varying one (dose). Run from the repository root:

    .venv/bin/python tests/reference/covariates_py.py          # rewrite the fixture
    .venv/bin/python tests/reference/covariates_py.py --check  # fail if it would change
"""

import json
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import statsmodels.api as sm

FIXTURE = Path(__file__).resolve().parents[1] / "fixtures" / "covariates_py.json"

BANDS = {
    "age": [[40.0, 58.0], [52.0, 66.0], [60.0, 90.0]],
    "dose": [[-0.5, 1.5], [0.5, 3.5], [2.5, 4.0]],
}
EDGES = [0.0, 2.0, 4.0, 6.0, 8.0, 10.0]


def panel():
    rng = np.random.default_rng(20240613)
    rows = []
    for s in range(80):
        visits = 1 if s % 17 == 0 else int(rng.integers(2, 9))
        age = float(np.round(rng.normal(60, 9)))
        effect = rng.normal(0, 3)
        times = np.round(np.sort(rng.uniform(0, 10, visits)), 1)
        if s % 11 == 0 and visits > 1:
            times[1] = times[0]  # a duplicated (subject, time)
        for t in times:
            dose = float(rng.integers(0, 5))
            y = 50 - 0.5 * t - 0.03 * (age - 60) * t + 0.4 * dose + effect + rng.normal(0, 1.5)
            rows.append((s + 100, float(t), float(np.round(y, 3)), age, dose))
    order = rng.permutation(len(rows))
    return pd.DataFrame([rows[i] for i in order], columns=["subject", "time", "y", "age", "dose"])


def trends(df):
    out = {}
    for name, bands in BANDS.items():
        cases = []
        for lo, hi in bands:
            d = df[(df[name] >= lo) & (df[name] <= hi)]
            fit = sm.OLS(d["y"].to_numpy(), sm.add_constant(d["time"].to_numpy())).fit(
                cov_type="cluster", cov_kwds={"groups": d["subject"].to_numpy()})
            cases.append({"lower": lo, "upper": hi, "subjects": int(d["subject"].nunique()),
                          "observations": len(d), "intercept": float(fit.params[0]),
                          "slope": float(fit.params[1]), "slope_se": float(fit.bse[1])})
        out[name] = cases
    return out


def grid(df):
    e = np.asarray(EDGES)
    b = np.searchsorted(e, df["time"].to_numpy(), side="right") - 1
    b[df["time"].to_numpy() == e[-1]] = len(e) - 2
    inside = (df["time"] >= e[0]) & (df["time"] <= e[-1])
    d = df.assign(bin=b)[inside.to_numpy()]
    follow = df.groupby("subject")["time"].agg(lambda t: t.max() - t.min())
    order_by = np.round(follow, 0)  # rounded so that ties occur
    order = sorted(order_by.index, key=lambda s: (order_by[s], s))
    k = len(e) - 1
    mean = d.pivot_table(index="subject", columns="bin", values="y", aggfunc="mean")
    size = d.pivot_table(index="subject", columns="bin", values="y", aggfunc="size")
    mean = mean.reindex(index=order, columns=range(k))
    size = size.reindex(index=order, columns=range(k)).fillna(0)
    return {
        "order_by_subjects": [int(s) for s in order_by.index],
        "order_by": [float(v) for v in order_by],
        "subjects": [int(s) for s in order],
        "values": ["nan" if np.isnan(v) else float(v) for v in mean.to_numpy().ravel()],
        "counts": [int(v) for v in size.to_numpy().ravel()],
    }


def build():
    df = panel()
    return {
        "about": "Generated panel (numpy seed 20240613) with statsmodels OLS cluster-robust "
        "(CR1, default use_correction=True) trends per covariate interval and a pandas pivot "
        "for the trajectory grid; written by tests/reference/covariates_py.py",
        "panel": {c: df[c].tolist() for c in df.columns},
        "trends": trends(df),
        "edges": EDGES,
        "grid": grid(df),
    }


if __name__ == "__main__":
    text = json.dumps(build(), indent=None) + "\n"
    if "--check" in sys.argv:
        if FIXTURE.read_text() != text:
            sys.exit(f"{FIXTURE} is out of date: rerun {Path(__file__).name}")
    else:
        FIXTURE.write_text(text)
