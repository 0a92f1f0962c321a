"""Times the variogram, the process variance and the binned correlation through the Python
and R bindings, beside hand-written versions with numpy, pandas and base R on the same data,
and prints the ratio ours / theirs; and the screening of all nine covariance candidates
(toeplitz and unstructured on the yearly schedule), which has no hand-written rival.

Data: `subjects` subjects x 10 visits (default 1e5), visit k at k + U(-0.15, 0.15) years,
residual = subject effect N(0, 2^2) + N(0, 1), numpy seed 1. "Unequal" drops each visit after
the first with probability 0.2 (the numpy reshape version needs equal counts, so it runs on
the equal data only). Each timing is the best of `--repeat` runs (default 3); building the
panel is not timed. Bins: 20 equal-width lag bins up to 10 years; 10 yearly time bins.

    .venv/bin/python scripts/bench_correlation.py [--subjects 100000] [--big 1000000] [--no-r]
"""

import argparse
import json
import os
import subprocess
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

import trajweave as tw

ROOT = Path(__file__).resolve().parents[1]
RLIB = os.environ.get("R_LIBS", str(ROOT / ".rlib"))
EDGES = np.linspace(0, 10, 21)


def best(fn, repeat):
    out, t = None, float("inf")
    for _ in range(repeat):
        start = time.perf_counter()
        out = fn()
        t = min(t, time.perf_counter() - start)
    return out, t


def data(subjects, unequal, seed=1):
    rng = np.random.default_rng(seed)
    ids = np.repeat(np.arange(subjects), 10)
    t = np.tile(np.arange(10.0), subjects) + rng.uniform(-0.15, 0.15, subjects * 10)
    r = np.repeat(rng.normal(0, 2, subjects), 10) + rng.normal(0, 1, subjects * 10)
    if unequal:
        keep = (rng.uniform(size=len(ids)) > 0.2) | (np.tile(np.arange(10), subjects) == 0)
        ids, t, r = ids[keep], t[keep], r[keep]
    return ids, t, r


def numpy_reshape_variogram(t, r, subjects):
    """Equal visit counts only: all pairs per subject by triu_indices on the (subjects, 10)
    arrays, then bincount by lag bin."""
    T, R = t.reshape(subjects, 10), r.reshape(subjects, 10)
    j, k = np.triu_indices(10, 1)
    u = np.abs(T[:, k] - T[:, j]).ravel()
    v = 0.5 * (R[:, k] - R[:, j]).ravel() ** 2
    b = np.clip(np.searchsorted(EDGES, u, side="right") - 1, 0, len(EDGES) - 2)
    keep = u <= EDGES[-1]
    n = np.bincount(b[keep], minlength=20)
    with np.errstate(invalid="ignore"):
        return np.bincount(b[keep], v[keep], minlength=20) / n


def pandas_merge_variogram(ids, t, r):
    """Any visit counts: a self-merge on subject, pairs with t_j < t_k, then group by bin."""
    df = pd.DataFrame(dict(s=ids, t=t, r=r))
    m = df.merge(df, on="s")
    m = m[m.t_x < m.t_y]
    u = m.t_y - m.t_x
    v = 0.5 * (m.r_y - m.r_x) ** 2
    b = pd.cut(u, EDGES, right=False, include_lowest=True, labels=False)
    return v.groupby(b).mean().reindex(range(20))


def numpy_process_variance(ids, r):
    """The closed form with bincount: (n sum (r - m)^2 - sum_s n_s sum (r - m_s)^2) / 2 / pairs."""
    n = len(r)
    ns = np.bincount(ids)
    ms = np.bincount(ids, r) / np.maximum(ns, 1)
    within = np.sum(ns * np.bincount(ids, (r - ms[ids]) ** 2))
    total = n * np.sum((r - r.mean()) ** 2)
    pairs = n * (n - 1) / 2 - np.sum(ns * (ns - 1) / 2)
    return (total - within) / (2 * pairs)


def numpy_binned_correlation(ids, t, r, subjects):
    """Bin by rounding to the nominal year, one value per subject and bin (visits are unique
    per bin here), then moment sums by bincount over the subjects x bins table."""
    b = np.rint(t).astype(int)
    W = np.full((subjects, 10), np.nan)
    W[ids, b] = r
    M = ~np.isnan(W)
    X = np.where(M, W, 0.0)
    n = M.T.astype(float) @ M
    sx = X.T @ M
    sxx = (X * X).T @ M
    sxy = X.T @ X
    cov = sxy - sx * sx.T / n
    vx = sxx - sx * sx / n
    return cov / np.sqrt(vx * vx.T)


def pandas_pivot_corr(ids, t, r):
    df = pd.DataFrame(dict(s=ids, b=np.rint(t).astype(int), r=r))
    return df.pivot(index="s", columns="b", values="r").corr(min_periods=3)


R_CODE = r"""
suppressMessages(library(trajweave, lib.loc = "{rlib}"))
d <- read.csv("{file}")
p <- panel(d$s, d$t, d$r)
timeit <- function(f, k = {repeat}) min(vapply(seq_len(k), function(i) system.time(f())[["elapsed"]], 0))
edges <- seq(0, 10, length.out = 21)
hand <- function() {{
  # All within-subject pairs with outer() per subject, then tabulate by lag bin.
  sp <- split(seq_len(nrow(d)), d$s)
  parts <- lapply(sp, function(i) {{
    tt <- d$t[i]; rr <- d$r[i]
    if (length(i) < 2) return(NULL)
    up <- upper.tri(diag(length(i)))
    cbind(abs(outer(tt, tt, "-"))[up], 0.5 * outer(rr, rr, "-")[up]^2)
  }})
  m <- do.call(rbind, parts)
  b <- findInterval(m[, 1], edges, rightmost.closed = TRUE)
  tapply(m[, 2], b, mean)
}}
out <- list(
  ours = timeit(function() variogram(p, d$r, lag_edges = edges)),
  hand = timeit(hand, 1)
)
if ({screen}) out$screen <- timeit(function() screen_structures(p, d$r, schedule = 0:9, tolerance = 0.5), 1)
cat(jsonlite::toJSON(out, auto_unbox = TRUE, digits = NA))
"""


def r_rows(ids, t, r, repeat, screen=False):
    with tempfile.TemporaryDirectory() as tmp:
        f = Path(tmp) / "d.csv"
        pd.DataFrame(dict(s=ids, t=t, r=r)).to_csv(f, index=False)
        out = subprocess.run(["Rscript", "-e", R_CODE.format(rlib=RLIB, file=f, repeat=repeat, screen="TRUE" if screen else "FALSE")],
                             capture_output=True, text=True)
        if out.returncode != 0:
            raise SystemExit(out.stderr)
        return json.loads(out.stdout)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--subjects", type=float, default=1e5)
    ap.add_argument("--big", type=float, default=1e6)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--no-r", action="store_true")
    a = ap.parse_args()
    s = int(a.subjects)
    rows = []

    def row(step, n, ours, ref, theirs):
        rows.append((step, n, ours, ref, theirs))

    for unequal in (False, True):
        ids, t, r = data(s, unequal)
        p = tw.Panel(ids, t, r)
        label = "unequal" if unequal else "equal"
        vg, ours = best(lambda: tw.variogram(p, r, lag_edges=EDGES), a.repeat)
        if not unequal:
            ref, theirs = best(lambda: numpy_reshape_variogram(t, r, s), a.repeat)
            assert np.allclose(ref, vg.column("classical"), rtol=1e-9, equal_nan=True)
            row(f"variogram ({label})", s, ours, "numpy reshape + triu", theirs)
        ref, theirs = best(lambda: pandas_merge_variogram(ids, t, r), 1)
        assert np.allclose(ref.to_numpy(), vg.column("classical"), rtol=1e-9, equal_nan=True)
        row(f"variogram ({label})", s, ours, "pandas self-merge", theirs)
        pv, ours = best(lambda: tw.process_variance(p, r), a.repeat)
        ref, theirs = best(lambda: numpy_process_variance(ids, r), a.repeat)
        assert abs(pv - ref) <= 1e-9 * abs(ref)
        row(f"process variance ({label})", s, ours, "numpy bincount closed form", theirs)
        c, ours = best(lambda: tw.binned_correlation(p, r, schedule=range(10), tolerance=0.5), a.repeat)
        ref, theirs = best(lambda: numpy_binned_correlation(ids, t, r, s), a.repeat)
        assert np.nanmax(np.abs(ref - c.matrix())) < 1e-9
        row(f"binned correlation ({label})", s, ours, "numpy moment sums", theirs)
        ref, theirs = best(lambda: pandas_pivot_corr(ids, t, r), a.repeat)
        row(f"binned correlation ({label})", s, ours, "pandas pivot + corr", theirs)
        if not unequal:
            _, ours = best(lambda: tw.screen_structures(p, r, schedule=range(10), tolerance=0.5), 1)
            row("screening, 9 candidates (equal)", s, ours, "-", None)
        if not a.no_r:
            out = r_rows(ids, t, r, a.repeat, screen=not unequal)
            row(f"variogram ({label}), R", s, out["ours"], "R outer() per subject", out["hand"])
            if "screen" in out:
                row("screening, 9 candidates (equal), R", s, out["screen"], "-", None)
    big = int(a.big)
    ids, t, r = data(big, True)
    p = tw.Panel(ids, t, r)
    _, ours = best(lambda: tw.variogram(p, r, lag_edges=EDGES), a.repeat)
    row("variogram (unequal)", big, ours, "-", None)
    _, ours = best(lambda: tw.process_variance(p, r), a.repeat)
    ref, theirs = best(lambda: numpy_process_variance(ids, r), a.repeat)
    row("process variance (unequal)", big, ours, "numpy bincount closed form", theirs)
    print("| step | subjects | ours (s) | reference | reference (s) | ours / theirs |")
    print("|---|---|---|---|---|---|")
    for step, n, ours, ref, theirs in rows:
        ratio = "-" if theirs is None else f"{ours / theirs:.3f}"
        theirs = "-" if theirs is None else f"{theirs:.4f}"
        print(f"| {step} | {n:.0e} | {ours:.4f} | {ref} | {theirs} | {ratio} |")


if __name__ == "__main__":
    main()
