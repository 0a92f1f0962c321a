"""Recomputes tests/fixtures/spline_scipy.json with scipy.interpolate.make_smoothing_spline
and with a dense textbook solve in numpy (both independent of trajweave's core).

Dense solve: Green & Silverman (1994) section 2.1, g = (W + lam Q R^-1 Q^T)^-1 W ybar on the
distinct x (ties pooled: w = count, ybar = mean), df = trace of that smoother, GCV =
N RSS / (N - df)^2 over all N observations; df targets by scipy.optimize.brentq and the GCV
minimum by scipy.optimize.minimize_scalar, both on log lam. It is run on the inputs of
tests/fixtures/spline_r.json (run spline_r.R first), at the df R reached, because R's
smooth.spline approximates the penalty integral (it reproduces R to 1e-12 only when the 1/3 in
the integral of products of linear second derivatives is replaced by 0.333).

scipy minimises sum_i w_i (y_i - f(x_i))^2 + lam * integral f''(u)^2 du on the x scale given,
the criterion trajweave's spline documents, so lam is passed through unchanged. scipy refuses
tied x, so the generated x are distinct (uneven spacing). Each case also records scipy's own
GCV choice (lam=None) for a loose comparison. Run from the repository root:

    .venv/bin/python tests/reference/spline_py.py          # rewrite the fixture
    .venv/bin/python tests/reference/spline_py.py --check  # fail if it would change
"""

import json
import sys
from pathlib import Path

import numpy as np
from scipy.interpolate import make_smoothing_spline
from scipy.optimize import brentq, minimize_scalar

FIXTURE = Path(__file__).resolve().parents[1] / "fixtures" / "spline_scipy.json"
R_FIXTURE = FIXTURE.parent / "spline_r.json"


class Dense:
    """The smoother matrix of Green & Silverman (1994) eq. 2.1-2.3, built densely."""

    def __init__(self, x, y):
        x, y = np.asarray(x, float), np.asarray(y, float)
        ux, inv, cnt = np.unique(x, return_inverse=True, return_counts=True)
        self.ux, self.n_obs = ux, len(x)
        self.w = cnt.astype(float)
        self.ybar = np.bincount(inv, weights=y) / self.w
        self.ssw = float(np.sum((y - self.ybar[inv]) ** 2))
        n, h = len(ux), np.diff(ux)
        q, r = np.zeros((n, n - 2)), np.zeros((n - 2, n - 2))
        for j in range(n - 2):
            q[j, j], q[j + 1, j], q[j + 2, j] = 1 / h[j], -1 / h[j] - 1 / h[j + 1], 1 / h[j + 1]
            r[j, j] = (h[j] + h[j + 1]) / 3
            if j + 1 < n - 2:
                r[j, j + 1] = r[j + 1, j] = h[j + 1] / 6
        self.k = q @ np.linalg.solve(r, q.T)

    def smoother(self, lam):
        W = np.diag(self.w)
        return np.linalg.solve(W + lam * self.k, W)

    def df(self, lam):
        return float(np.trace(self.smoother(lam)))

    def gcv(self, lam):
        s = self.smoother(lam)
        g = s @ self.ybar
        rss = float(np.sum(self.w * (self.ybar - g) ** 2)) + self.ssw
        return self.n_obs * rss / (self.n_obs - np.trace(s)) ** 2

    def at_df(self, df):
        u = brentq(lambda u: self.df(np.exp(u)) - df, -60, 60, xtol=1e-14, rtol=1e-15)
        return float(np.exp(u))

    def gcv_min(self):
        grid = np.linspace(-30, 30, 121)
        k = int(np.argmin([self.gcv(np.exp(u)) for u in grid]))
        lo, hi = grid[max(k - 1, 0)], grid[min(k + 1, len(grid) - 1)]
        res = minimize_scalar(lambda u: self.gcv(np.exp(u)), bounds=(lo, hi), method="bounded",
                              options={"xatol": 1e-10})
        return float(np.exp(res.x))

    def record(self, lam):
        return {"lam": lam, "df": self.df(lam), "gcv": float(self.gcv(lam)),
                "fitted": [float(v) for v in self.smoother(lam) @ self.ybar]}


def dataset(seed, lo, hi, n):
    rng = np.random.default_rng(seed)
    x = np.sort(rng.uniform(lo, hi, n))
    t = (x - lo) / (hi - lo) * 10.0
    y = np.sin(t) + 0.5 * np.cos(2.3 * t) + rng.normal(0.0, 0.3, n)
    return x, y


# Penalties chosen so the fits span df from about 3 to about n/2 (x range 10, and x range 3000,
# where the same shapes need lam scaled by 300^3).
CASES = [
    {"name": "uneven x on [0, 10]", "seed": 11, "lo": 0.0, "hi": 10.0, "n": 200,
     "lams": [100.0, 1.0, 1e-2, 1e-4, 1e-5]},
    {"name": "uneven x on [1000, 4000]", "seed": 12, "lo": 1000.0, "hi": 4000.0, "n": 180,
     "lams": [2.7e9, 2.7e7, 2.7e5, 2.7e3, 2.7e2]},
]


def build():
    cases = []
    for c in CASES:
        x, y = dataset(c["seed"], c["lo"], c["hi"], c["n"])
        fits = []
        for lam in c["lams"]:
            f = make_smoothing_spline(x, y, w=None, lam=lam)
            fits.append({"lam": lam, "fitted": [float(v) for v in f(x)]})
        g = make_smoothing_spline(x, y, w=None, lam=None)
        dense = Dense(x, y)
        cases.append({
            "name": c["name"],
            "x": [float(v) for v in x],
            "y": [float(v) for v in y],
            "fits": fits,
            "scipy_gcv_fitted": [float(v) for v in g(x)],
            "dense_gcv": dense.record(dense.gcv_min()),
        })
    r_cases = []
    for c in json.loads(R_FIXTURE.read_text())["cases"]:
        dense = Dense(c["x"], c["y"])
        r_cases.append({
            "name": c["name"],
            "dense_at_r_df": [dense.record(dense.at_df(f["df"])) for f in c["fits"]],
            "dense_gcv": dense.record(dense.gcv_min()),
        })
    return {
        "source": "scipy.interpolate.make_smoothing_spline(x, y, w=None, lam=lam), scipy "
                  + __import__("scipy").__version__ + "; scipy_gcv_fitted: lam=None; dense_*: "
                  "numpy dense solve of Green & Silverman's equations",
        "cases": cases,
        "r_cases": r_cases,
    }


if __name__ == "__main__":
    text = json.dumps(build(), indent=1) + "\n"
    if "--check" in sys.argv:
        if not FIXTURE.exists() or FIXTURE.read_text() != text:
            sys.exit(f"{FIXTURE} is out of date: rerun {Path(__file__).name}")
    else:
        FIXTURE.write_text(text)
