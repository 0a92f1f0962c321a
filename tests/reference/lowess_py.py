"""Recomputes tests/fixtures/lowess_statsmodels.json with
statsmodels.nonparametric.smoothers_lowess.lowess, a second implementation independent of
trajweave's core. The inputs and settings are those of tests/fixtures/lowess_r.json (written by
tests/reference/lowess_r.R: R's cars data, generated data with ties, heavy ties), so run that
first. Run from the repository root:

    .venv/bin/python tests/reference/lowess_py.py          # rewrite the fixture
    .venv/bin/python tests/reference/lowess_py.py --check  # fail if it would change

Cases with heavy ties or span < 0.2 are left out (see build()). statsmodels returns the sorted x with duplicates; the Rust test collapses ties.
"""

import json
import sys
from pathlib import Path

import numpy as np
import statsmodels
from statsmodels.nonparametric.smoothers_lowess import lowess

FIXTURES = Path(__file__).resolve().parents[1] / "fixtures"
SOURCE = FIXTURES / "lowess_r.json"
FIXTURE = FIXTURES / "lowess_statsmodels.json"


def build():
    source = json.loads(SOURCE.read_text())
    cases = []
    for case in source["cases"]:
        # statsmodels departs from Cleveland's (and R's) window where a tie group is larger
        # than the neighbourhood (radius 0: it divides by zero) or meets its edge at small
        # spans, so those cases are compared with R only.
        if case["data"] == "ties" or case["span"] < 0.2:
            continue
        data = source["inputs"][case["data"]]
        x = np.asarray(data["x"], dtype=float)
        y = np.asarray(data["y"], dtype=float)
        out = lowess(y, x, frac=case["span"], it=case["iterations"], delta=case["delta"])
        cases.append({
            "name": case["name"],
            "data": case["data"],
            "span": case["span"],
            "iterations": case["iterations"],
            "delta": case["delta"],
            "expected_x": [float(v) for v in out[:, 0]],
            "expected": [float(v) for v in out[:, 1]],
        })
    return {
        "about": "statsmodels.nonparametric.smoothers_lowess.lowess(y, x, frac, it, delta) "
        f"(statsmodels {statsmodels.__version__}) on the inputs of lowess_r.json; "
        "written by tests/reference/lowess_py.py",
        "cases": cases,
    }


if __name__ == "__main__":
    # json writes floats with repr, the shortest text that round-trips exactly.
    text = json.dumps(build(), indent=None, separators=(",", ":")).replace('{"name"', '\n{"name"') + "\n"
    if "--check" in sys.argv:
        if FIXTURE.read_text() != text:
            sys.exit(f"{FIXTURE} is out of date: rerun {Path(__file__).name}")
    else:
        FIXTURE.write_text(text)
