"""Recomputes the expected describe values in tests/fixtures/describe_small.json with pandas
and numpy alone (an implementation independent of trajweave's core).

Quantiles: numpy.quantile's default "linear" method, which is Hyndman & Fan type 7, the
default of R's quantile(). Run from the repository root:

    .venv/bin/python tests/reference/describe_reference.py          # rewrite the fixture
    .venv/bin/python tests/reference/describe_reference.py --check  # fail if it would change
"""

import json
import math
import sys
from pathlib import Path

import numpy as np
import pandas as pd

FIXTURE = Path(__file__).resolve().parents[1] / "fixtures" / "describe_small.json"

# Inputs, chosen by hand to hold every oddity the policy calls legal: text ids out of order, a
# one-visit subject, a duplicated (subject, time) row, a missing response (dropped), a
# time-varying covariate, visits outside every window, late entry and dropout.
CASES = [
    {
        "name": "text ids on a schedule, one row dropped",
        "subject": ["c", "a", "b", "a", "c", "a", "b", "d", "c", "a", "e", "e", "e", "d"],
        "time": [0.0, 0.0, 0.1, 1.05, 1.0, 2.0, 2.0, 0.0, 1.0, 3.0, 1.0, 2.1, 2.6, 0.0],
        "response": [50.0, 61.0, 55.0, 60.0, "nan", 58.5, 52.0, 70.0, 48.0, 57.0, 40.0, 39.0, 38.0, 71.0],
        "covariates": {"age": [70, 55, 62, 55, 70, 55, 62, 48, 70, 55, 66, 66, 66, 48],
                       "dose": [1, 0, 2, 1, 1, 2, 2, 0, 1, 3, 0, 0, 0, 0]},
        "missing": "drop",
        "grid": {"schedule": [0.0, 1.0, 2.0, 3.0], "tolerance": 0.2},
    },
    {
        "name": "integer ids on bin edges",
        "subject": [10, 3, 10, 3, 3, 7, 10, 10],
        "time": [0.5, 0.0, 1.5, 0.9, 4.0, 2.0, 3.99, 4.0],
        "response": [1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0],
        "covariates": {},
        "missing": "error",
        "grid": {"edges": [0.0, 1.0, 2.0, 4.0]},
    },
]


def to_float(v):
    return float("nan") if v == "nan" else float(v)


def five(values):
    v = np.asarray(values, dtype=float)
    q = np.quantile(v, [0.25, 0.5, 0.75])
    return {"min": float(v.min()), "q1": float(q[0]), "median": float(q[1]), "q3": float(q[2]), "max": float(v.max())}


def bin_of(t, grid):
    if "edges" in grid:
        e = grid["edges"]
        if t < e[0] or t > e[-1]:
            return None
        for i in range(len(e) - 1):
            if e[i] <= t < e[i + 1] or (i == len(e) - 2 and t == e[-1]):
                return i
        return None
    best = None
    for i, s in enumerate(grid["schedule"]):
        d = abs(t - s)
        if d <= grid["tolerance"] and (best is None or d < best[1]):
            best = (i, d)
    return None if best is None else best[0]


def pattern(seen):
    k = sum(seen)
    if k == 0:
        return "unobserved"
    if k == len(seen):
        return "complete"
    if all(seen[:k]):
        return "monotone"
    return "intermittent"


def expected(case):
    df = pd.DataFrame({"s": case["subject"], "t": case["time"], "y": [to_float(v) for v in case["response"]]})
    for name, values in case["covariates"].items():
        df[name] = values
    rows_input = len(df)
    df = df[np.isfinite(df["y"])]
    df = df.sort_values(["s", "t"], kind="stable")
    g = df.groupby("s", sort=True)
    visits = g.size()
    follow = g["t"].max() - g["t"].min()
    gaps = df.groupby("s")["t"].diff().dropna()
    out = {
        "subjects": int(df["s"].nunique()),
        "observations": len(df),
        "rows_input": rows_input,
        "rows_dropped": rows_input - len(df),
        "time_range": [float(df["t"].min()), float(df["t"].max())],
        "visits_per_subject": five(visits),
        "follow_up": five(follow),
        "gaps": five(gaps),
        "gap_count": len(gaps),
        "single_visit_subjects": int((visits == 1).sum()),
        "duplicated_rows": int(df.duplicated(["s", "t"]).sum()),
        "per_subject": [{"subject": s if isinstance(s, str) else int(s), "visits": int(n),
                         "first": float(g["t"].min()[s]), "last": float(g["t"].max()[s])}
                        for s, n in visits.items()],
        "covariates": [{"name": name, "time_fixed": bool((g[name].nunique() == 1).all())}
                       for name in case["covariates"]],
    }
    grid = case["grid"]
    k = len(grid["edges"]) - 1 if "edges" in grid else len(grid["schedule"])
    df["bin"] = [bin_of(t, grid) for t in df["t"]]
    inside = df.dropna(subset=["bin"])
    per_subject = []
    counts = {"complete": 0, "monotone": 0, "intermittent": 0, "unobserved": 0}
    for s, rows in df.groupby("s", sort=True):
        seen = [b in set(rows["bin"].dropna().astype(int)) for b in range(k)]
        p = pattern(seen)
        counts[p] += 1
        per_subject.append({"subject": s if isinstance(s, str) else int(s), "pattern": p,
                            "seen": "".join("x" if x else "." for x in seen)})
    out["grid"] = {
        "bin_subjects": [int(inside[inside["bin"] == b]["s"].nunique()) for b in range(k)],
        "bin_observations": [int((inside["bin"] == b).sum()) for b in range(k)],
        "outside": int(df["bin"].isna().sum()),
        "patterns": counts,
        "per_subject": per_subject,
    }
    return out


def build():
    return {
        "about": "Inputs and expected describe values; expected values recomputed by "
        "tests/reference/describe_reference.py with pandas/numpy (quantiles: numpy linear = type 7). "
        "Response strings \"nan\" are NaN.",
        "cases": [dict(case, expected=expected(case)) for case in CASES],
    }


if __name__ == "__main__":
    text = json.dumps(build(), indent=1, sort_keys=False) + "\n"
    if "--check" in sys.argv:
        if FIXTURE.read_text() != text:
            sys.exit(f"{FIXTURE} is out of date: rerun {Path(__file__).name}")
    else:
        FIXTURE.write_text(text)
