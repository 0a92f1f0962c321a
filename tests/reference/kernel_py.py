"""Expected kernel-smoother values for tests/fixtures/kernel_reference.json, computed by the
definition with numpy (an O(n^2) evaluation independent of trajweave's core), plus R's
stats::ksmooth box and normal fits (run through Rscript) with the bandwidth conversion of
docs/methods.md: our h is the kernel's standard deviation; R's box is ours with
h = b / (2 sqrt 3), R's normal ours with h = 0.3706506 b truncated at 4 h.

The box window is closed (|x - t| <= b / 2), as in R's ksmooth. Section "cars": R's `cars`
data (integer speeds, many ties) through R's ksmooth box at several bandwidths, at the
distinct speeds and on a grid of step 0.25 (binary fractions: every distance is exact, so
points on the window's edge are unambiguous and R's closed comparison includes them).
Section "cars_decimal": speed / 10 (0.4, 0.7, ...: decimal values that are not exact
doubles) against the closed-window mean computed exactly in whole tenths with numpy integer
arithmetic; R's own comparison of x with t - b/2 includes or leaves out edge points there
depending on the rounding, so R is not the reference for that section: the number of points
where R departs from the exact closed window is recorded ("r_departures") for the docs.

    .venv/bin/python tests/reference/kernel_py.py          # rewrite the fixture
    .venv/bin/python tests/reference/kernel_py.py --check  # fail if it would change
"""

import json
import subprocess
import sys
from pathlib import Path

import numpy as np

FIXTURE = Path(__file__).resolve().parents[1] / "fixtures" / "kernel_reference.json"
SQRT3 = np.sqrt(3.0)


def data():
    rng = np.random.default_rng(20261201)
    x = np.round(np.sort(rng.gamma(2.0, 1.5, 240)), 2)  # uneven spacing, some ties
    rng.shuffle(x)
    y = np.sin(x) + 0.1 * x + rng.normal(0, 0.3, x.size)
    return x, y


def direct(x, y, at, h, shape, degree, cut=np.inf):
    out = []
    for t in at:
        d = x - t
        if shape == "box":
            w = (np.abs(d) <= SQRT3 * h).astype(float)
        else:
            w = np.where(np.abs(d) <= cut, np.exp(-0.5 * (d / h) ** 2), 0.0)
        s0, s1, s2 = w.sum(), (w * d).sum(), (w * d * d).sum()
        t0, t1 = (w * y).sum(), (w * d * y).sum()
        det = s0 * s2 - s1 * s1
        out.append((s2 * t0 - s1 * t1) / det if degree == 1 and det > 1e-12 * s0 * s2 else t0 / s0)
    return out


def ksmooth(x, y, kind, b, at):
    code = f"""
x <- c({','.join(repr(float(v)) for v in x)})
y <- c({','.join(repr(float(v)) for v in y)})
at <- c({','.join(repr(float(v)) for v in at)})
r <- ksmooth(x, y, kernel = "{kind}", bandwidth = {b!r}, x.points = at)
cat(sprintf("%.17g", r$y), sep = "\\n")
"""
    out = subprocess.run(["Rscript", "-e", code], capture_output=True, text=True, check=True)
    # An empty window is NA in R; the fixture writes it as the string "nan".
    return ["nan" if v == "NA" else float(v) for v in out.stdout.split()]


def r_cars():
    out = subprocess.run(["Rscript", "-e", 'cat(cars$speed, "\\n"); cat(cars$dist, "\\n")'],
                         capture_output=True, text=True, check=True)
    speed, dist = out.stdout.strip().split("\n")
    return [float(v) for v in speed.split()], [float(v) for v in dist.split()]


def cars_cases():
    speed, dist = r_cars()
    distinct = sorted(set(speed))
    grid = [4.0 + 0.25 * k for k in range(int((25.0 - 4.0) / 0.25) + 1)]
    cases = []
    for b in (1.0, 2.0, 3.0, 5.0):
        for name, at in (("data", distinct), ("grid", grid)):
            cases.append({"source": "R stats::ksmooth box", "r_bandwidth": b, "bandwidth": b / (2 * SQRT3),
                          "points": name, "at": at, "fitted": ksmooth(speed, dist, "box", b, at)})
    decimal = []
    tenths = np.array(speed, dtype=np.int64)  # speed / 10 in whole tenths
    x10 = tenths / 10.0
    at_tenths = np.unique(tenths)
    y = np.array(dist)
    for half in (1, 2, 3):  # half-width in tenths: b = 0.2, 0.4, 0.6
        b = 2 * half / 10.0
        exact = [float(y[np.abs(tenths - t) <= half].mean()) for t in at_tenths]
        r = ksmooth(x10, y, "box", b, at_tenths / 10.0)
        departures = int(np.sum(np.abs(np.array(r) - np.array(exact)) > 1e-9))
        decimal.append({"source": "numpy integer arithmetic (closed window in whole tenths)",
                        "r_bandwidth": b, "bandwidth": b / (2 * SQRT3), "at": (at_tenths / 10.0).tolist(),
                        "fitted": exact, "r_departures": departures})
    return {"speed": speed, "dist": dist, "cases": cases,
            "decimal": {"x": x10.tolist(), "cases": decimal}}


def build():
    x, y = data()
    at = np.unique(x)
    cases = []
    for shape, h in [("gaussian", 0.4), ("gaussian", 1.1), ("box", 0.37)]:
        for degree in (0, 1):
            cases.append({"source": "numpy direct (definition)", "shape": shape, "bandwidth": h,
                          "degree": degree, "truncation": 40.0,
                          "fitted": direct(x, y, at, h, shape, degree)})
    b = 1.2345
    cases.append({"source": "R stats::ksmooth box", "shape": "box", "bandwidth": b / (2 * SQRT3),
                  "degree": 0, "truncation": 8.0, "fitted": ksmooth(x, y, "box", b, at)})
    cases.append({"source": "R stats::ksmooth normal", "shape": "gaussian", "bandwidth": 0.3706506 * b,
                  "degree": 0, "truncation": 4.0, "fitted": ksmooth(x, y, "normal", b, at)})
    return {"about": "Kernel smoother reference values (tests/reference/kernel_py.py); evaluation exact; "
                     "fitted at the distinct x in increasing order.",
            "x": x.tolist(), "y": y.tolist(), "sd_y": float(np.std(y, ddof=1)), "cases": cases,
            "cars": cars_cases()}


if __name__ == "__main__":
    text = json.dumps(build(), indent=None) + "\n"
    if "--check" in sys.argv:
        if FIXTURE.read_text() != text:
            sys.exit(f"{FIXTURE} is out of date: rerun {Path(__file__).name}")
    else:
        FIXTURE.write_text(text)
