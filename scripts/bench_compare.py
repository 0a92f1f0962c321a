"""Times trajweave's smoothers through the Python and R bindings side by side with the
reference implementations on the same data, and prints the ratio ours / theirs.

Data: x uniform on [0, 10] in random order, y = sin(x) + N(0, 0.3^2), numpy seed 1, written
once per size to a binary file that both Python and R read. Each timing is the best of
`--repeat` runs (default 1 at n >= 1e6, 3 below). A reference whose predicted time (from the
previous size, linear growth, quadratic for R's ksmooth) exceeds the per-run budget
(`--budget`, default 60 s) is skipped and the row says so.

    .venv/bin/python scripts/bench_compare.py [--sizes 1e4,1e5,1e6,1e7] [--budget 60]

Run by `make bench`. Needs the Python binding in the venv and the R package in .rlib.
"""

import argparse
import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
RLIB = os.environ.get("R_LIBS", str(ROOT / ".rlib"))


def best_of(fn, repeat):
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


R_CODE = r"""
suppressMessages(library(trajweave, lib.loc = "{rlib}"))
n <- {n}
x <- readBin("{xfile}", "double", n)
y <- readBin("{yfile}", "double", n)
skip <- jsonlite::fromJSON('{skip}')
timeit <- function(f, r = {repeat}) min(vapply(seq_len(r), function(i) system.time(f())[["elapsed"]], 0))
out <- list()
add <- function(name, value) out[[name]] <<- value
add("ours lowess", timeit(function() fit_smoother(smoother_lowess(), x, y)))
if (!("R lowess" %in% skip)) add("R lowess", timeit(function() stats::lowess(x, y)))
add("ours super", timeit(function() fit_smoother(smoother_super(), x, y)))
if (!("R supsmu" %in% skip)) add("R supsmu", timeit(function() stats::supsmu(x, y)))
add("ours spline df 10", timeit(function() fit_smoother(smoother_spline(df = 10), x, y)))
add("ours spline gcv", timeit(function() fit_smoother(smoother_spline(), x, y)))
if (!("R smooth.spline df 10" %in% skip)) {{
  add("R smooth.spline df 10", timeit(function() stats::smooth.spline(x, y, all.knots = TRUE, df = 10)))
  add("R smooth.spline df reached", stats::smooth.spline(x, y, all.knots = TRUE, df = 10)$df)
}}
if (!("R smooth.spline gcv" %in% skip)) add("R smooth.spline gcv", timeit(function() stats::smooth.spline(x, y, all.knots = TRUE)))
b <- 0.1 * 2 * sqrt(3)
add("ours kernel box", timeit(function() fit_smoother(smoother_kernel(bandwidth = 0.1, shape = "box"), x, y)))
add("ours kernel gaussian", timeit(function() fit_smoother(smoother_kernel(bandwidth = 0.1), x, y)))
if (!("R ksmooth box" %in% skip)) add("R ksmooth box", timeit(function() stats::ksmooth(x, y, "box", bandwidth = b, x.points = x), 1))
if (!("R ksmooth normal" %in% skip)) add("R ksmooth normal", timeit(function() stats::ksmooth(x, y, "normal", bandwidth = 0.1 / 0.3706506, x.points = x), 1))
cat(jsonlite::toJSON(out, auto_unbox = TRUE, digits = NA))
"""


def run_r(n, xfile, yfile, budget, skip, repeat):
    code = R_CODE.format(rlib=RLIB, n=n, xfile=xfile, yfile=yfile,
                         skip=json.dumps(sorted(skip)), repeat=repeat)
    out = subprocess.run(["Rscript", "-e", code], capture_output=True, text=True)
    if out.returncode != 0:
        sys.exit(f"R run failed at n = {n}:\n{out.stderr}")
    return json.loads(out.stdout)


def run_python(n, x, y, skip, repeat):
    import trajweave as tw
    from scipy.interpolate import make_smoothing_spline
    from statsmodels.nonparametric.smoothers_lowess import lowess as sm_lowess

    out = {}
    out["ours lowess"] = best_of(lambda: tw.lowess(x, y), repeat)
    if "statsmodels lowess" not in skip:
        delta = 0.01 * (x.max() - x.min())
        out["statsmodels lowess"] = best_of(lambda: sm_lowess(y, x, frac=2 / 3, it=3, delta=delta), repeat)
    out["ours spline df 10"] = best_of(lambda: tw.smoothing_spline(x, y, df=10), repeat)
    out["ours spline gcv"] = best_of(lambda: tw.smoothing_spline(x, y), repeat)
    order = np.argsort(x, kind="stable")
    xs, ys = x[order], y[order]
    if "scipy make_smoothing_spline gcv" not in skip:
        try:
            out["scipy make_smoothing_spline gcv"] = best_of(lambda: make_smoothing_spline(xs, ys), repeat)
        except Exception as e:  # scipy refuses some inputs; report what it said
            out["scipy make_smoothing_spline gcv"] = f"refused: {type(e).__name__}: {e}"
    out["ours kernel box"] = best_of(lambda: tw.kernel_smooth(x, y, bandwidth=0.1, shape="box"), repeat)
    out["ours kernel gaussian"] = best_of(lambda: tw.kernel_smooth(x, y, bandwidth=0.1), repeat)
    out["ours super"] = best_of(lambda: tw.super_smoother(x, y), repeat)
    return out


PAIRS = [
    ("lowess", "ours lowess", ["R lowess", "statsmodels lowess"]),
    ("super smoother", "ours super", ["R supsmu"]),
    ("spline, df 10", "ours spline df 10", ["R smooth.spline df 10"]),
    ("spline, GCV", "ours spline gcv", ["R smooth.spline gcv", "scipy make_smoothing_spline gcv"]),
    ("kernel box", "ours kernel box", ["R ksmooth box"]),
    ("kernel gaussian", "ours kernel gaussian", ["R ksmooth normal"]),
]
QUADRATIC = {"R ksmooth box", "R ksmooth normal"}


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--sizes", default="1e4,1e5,1e6,1e7")
    ap.add_argument("--budget", type=float, default=60.0)
    args = ap.parse_args()
    sizes = [int(float(s)) for s in args.sizes.split(",")]
    last = {}
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        for n in sizes:
            rng = np.random.default_rng(1)
            x = rng.uniform(0, 10, n)
            y = np.sin(x) + rng.normal(0, 0.3, n)
            xfile, yfile = Path(tmp) / "x.bin", Path(tmp) / "y.bin"
            x.tofile(xfile)
            y.tofile(yfile)
            skip = set()
            for name, (m, t) in last.items():
                grow = (n / m) ** (2 if name in QUADRATIC else 1)
                if isinstance(t, float) and t * grow > args.budget:
                    skip.add(name)
            repeat = 1 if n >= 1_000_000 else 3
            res_py = run_python(n, x, y, skip, repeat)
            res_r = run_r(n, xfile, yfile, args.budget, skip, repeat)
            for front, res in (("Python", res_py), ("R", res_r)):
                for label, ours, refs in PAIRS:
                    if ours not in res:
                        continue
                    for ref in refs:
                        if ref.startswith("R ") != (front == "R"):
                            continue
                        theirs = res.get(ref)
                        if ref in skip:
                            note = f"skipped: predicted over the {args.budget:g} s budget"
                            rows.append((label, n, front, res[ours], ref, note, ""))
                        elif isinstance(theirs, (int, float)):
                            rows.append((label, n, front, res[ours], ref, f"{theirs:.4g}", f"{res[ours] / theirs:.3g}"))
                            last[ref] = (n, float(theirs))
                        elif theirs is not None:
                            rows.append((label, n, front, res[ours], ref, str(theirs), ""))
            if "R smooth.spline df reached" in res_r:
                rows.append(("spline, df 10", n, "R", "", "R smooth.spline df reached",
                             f"{res_r['R smooth.spline df reached']:.6g}", ""))
            print(f"n = {n} done", file=sys.stderr)
    print("| smoother | n | front | ours (s) | reference | reference (s) | ours / theirs |")
    print("|---|---|---|---|---|---|---|")
    for label, n, front, ours, ref, theirs, ratio in rows:
        ours_s = f"{ours:.4g}" if isinstance(ours, float) else ours
        print(f"| {label} | {n:.0e} | {front} | {ours_s} | {ref} | {theirs} | {ratio} |")


if __name__ == "__main__":
    main()
