"""Recomputes tests/fixtures/residuals_py.json: polynomial least squares on the panels of
tests/fixtures/residuals_r.json (run tests/reference/residuals_r.R first) by two methods
independent of trajweave's core:

- numpy.linalg.lstsq on the raw design [1, t, ..., t^d] (SVD; rcond=None), and on the design
  in centred time t - mean(t) (the same residuals in exact arithmetic, well conditioned);
- the exact least-squares solution in rational arithmetic (fractions.Fraction; every double is
  a rational number, so the normal equations X'X b = X'y are solved with no rounding at all),
  then rounded once to double: exact coefficients on the original time scale, intercept first,
  and exact residuals.

Run from the repository root:

    .venv/bin/python tests/reference/residuals_py.py          # rewrite the fixture
    .venv/bin/python tests/reference/residuals_py.py --check  # fail if it would change
"""

import json
import sys
from fractions import Fraction
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1] / "fixtures"
SOURCE = ROOT / "residuals_r.json"
FIXTURE = ROOT / "residuals_py.json"


def exact_ls(t, y, d):
    """Coefficients of the least-squares polynomial of degree d, as Fractions."""
    tf = [Fraction(v) for v in t]
    yf = [Fraction(v) for v in y]
    p = d + 1
    powers = [[v**k for k in range(2 * d + 1)] for v in tf]
    a = [[sum(row[i + j] for row in powers) for j in range(p)] for i in range(p)]
    b = [sum(row[i] * yv for row, yv in zip(powers, yf)) for i in range(p)]
    # Gauss-Jordan elimination, exact.
    for c in range(p):
        piv = next(r for r in range(c, p) if a[r][c] != 0)
        a[c], a[piv] = a[piv], a[c]
        b[c], b[piv] = b[piv], b[c]
        for r in range(p):
            if r != c and a[r][c] != 0:
                f = a[r][c] / a[c][c]
                a[r] = [x - f * z for x, z in zip(a[r], a[c])]
                b[r] -= f * b[c]
    coef = [b[i] / a[i][i] for i in range(p)]
    resid = [yv - sum(c * tv**k for k, c in enumerate(coef)) for tv, yv in zip(tf, yf)]
    return coef, resid


def main():
    src = json.loads(SOURCE.read_text())
    panels = []
    for panel in src["polynomial"]:
        t = np.array(panel["time"], dtype=float)
        y = np.array(panel["y"], dtype=float)
        cases = []
        for d in range(4):
            x = np.vander(t, d + 1, increasing=True)
            beta = np.linalg.lstsq(x, y, rcond=None)[0]
            xc = np.vander(t - t.mean(), d + 1, increasing=True)
            beta_c = np.linalg.lstsq(xc, y, rcond=None)[0]
            coef, resid = exact_ls(panel["time"], panel["y"], d)
            cases.append({
                "degree": d,
                "lstsq_residuals": [float(v) for v in y - x @ beta],
                "lstsq_centred_residuals": [float(v) for v in y - xc @ beta_c],
                "exact_coefficients": [float(c) for c in coef],
                "exact_residuals": [float(r) for r in resid],
            })
        panels.append({"name": panel["name"], "cases": cases})
    out = {
        "source": f"numpy {np.__version__} linalg.lstsq and exact rational least squares "
        "(fractions), written by tests/reference/residuals_py.py from the inputs of residuals_r.json",
        "polynomial": panels,
    }
    text = json.dumps(out, indent=1) + "\n"
    if "--check" in sys.argv:
        if not FIXTURE.exists() or FIXTURE.read_text() != text:
            sys.exit(f"{FIXTURE} differs from what tests/reference/residuals_py.py would write")
        print(f"{FIXTURE} is up to date")
    else:
        FIXTURE.write_text(text)


if __name__ == "__main__":
    main()
