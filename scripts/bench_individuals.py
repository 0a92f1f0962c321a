"""Times residuals (polynomial degree 1), the ranking of subjects by median residual, picks
at five quantiles and the trajectory grid (10 yearly bins) through the Python binding, beside
the same steps written with numpy and pandas group-bys, on the same data.

Data: `subjects` subjects x 10 visits (default 1e6 x 10), visit k at k + U(0, 0.5) years,
y = 60 - 1.5 t + subject effect + noise, numpy seed 1, rows in random order. Building the
panel is timed separately (it sorts the rows once and serves every later step). Each step is
the best of `--repeat` runs (default 3) on both sides.

    .venv/bin/python scripts/bench_individuals.py [--subjects 1000000]
"""

import argparse
import time

import numpy as np
import pandas as pd

import trajweave as tw


REPEAT = 3


def timed(fn, repeat=None):
    """The result and the best time of `repeat` runs (both sides get the same treatment)."""
    best = float("inf")
    for _ in range(repeat or REPEAT):
        t = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t)
    return out, best


def _with_ids(ranking):
    ranking.subjects
    return ranking


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--subjects", type=int, default=1_000_000)
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    global REPEAT
    REPEAT = args.repeat
    s, v = args.subjects, 10
    rng = np.random.default_rng(1)
    subject = np.repeat(np.arange(s), v)
    t = np.tile(np.arange(v, dtype=float), s) + rng.uniform(0, 0.5, s * v)
    y = 60 - 1.5 * t + np.repeat(rng.normal(0, 10, s), v) + rng.normal(0, 3, s * v)
    perm = rng.permutation(s * v)
    subject, t, y = subject[perm], t[perm], y[perm]
    edges = list(range(v + 1))
    quantiles = [0.05, 0.25, 0.5, 0.75, 0.95]

    panel, t_panel = timed(lambda: tw.Panel(subject, t, y), 1)
    ours = {}
    r, ours["residuals"] = timed(lambda: tw.residuals(panel, tw.Polynomial(1)))
    # The ranking's subject ids are part of its cost: ask for them inside the timing.
    ranking, ours["ranking"] = timed(lambda: _with_ids(tw.rank_subjects(panel, r, "median")))
    _, ours["picks"] = timed(lambda: tw.pick_subjects(panel, r, ranking, quantiles))
    order = np.asarray(ranking.values)[np.argsort(ranking.subjects)]  # per subject, id order
    _, ours["grid"] = timed(lambda: tw.trajectory_grid(panel, r, order, edges=edges))

    theirs = {}
    df, t_frame = timed(lambda: pd.DataFrame({"s": subject, "t": t, "y": y}), 1)

    def residuals():
        X = np.column_stack([np.ones_like(t), t])
        coef, *_ = np.linalg.lstsq(X, y, rcond=None)
        return y - X @ coef

    rn, theirs["residuals"] = timed(residuals)
    df["r"] = rn

    def ranking_pd():
        med = df.groupby("s", sort=True)["r"].median()
        return med.sort_values(kind="stable")

    ranked, theirs["ranking"] = timed(ranking_pd)

    def picks_pd():
        m = len(ranked)
        chosen = [ranked.index[int(np.floor(q * (m - 1) + 0.5))] for q in quantiles]
        sub = df[df["s"].isin(chosen)].sort_values(["s", "t"])
        return {k: g for k, g in sub.groupby("s")}

    _, theirs["picks"] = timed(picks_pd)

    def grid_pd():
        b = np.clip(np.searchsorted(edges, df["t"].to_numpy(), side="right") - 1, 0, len(edges) - 2)
        piv = df.assign(b=b).pivot_table(index="s", columns="b", values="r", aggfunc="mean")
        return piv.loc[ranked.index]

    _, theirs["grid"] = timed(grid_pd)

    print(f"{s} subjects x {v} visits; panel built in {t_panel:.3f} s (pandas frame {t_frame:.3f} s)")
    print("| step | trajweave (s) | numpy/pandas (s) | ratio |")
    print("|---|---|---|---|")
    for k in ours:
        print(f"| {k} | {ours[k]:.3f} | {theirs[k]:.3f} | {ours[k] / theirs[k]:.3g} |")
    print(f"| together | {sum(ours.values()):.3f} | {sum(theirs.values()):.3f} | "
          f"{sum(ours.values()) / sum(theirs.values()):.3g} |")


if __name__ == "__main__":
    main()
