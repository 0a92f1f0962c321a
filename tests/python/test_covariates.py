"""Equal-count bands, conditional trends, group and dropout curves and the trajectory grid
through the Python binding, live against statsmodels, pandas and the committed output of
R's co.intervals."""

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm

import trajweave as tw

FIXTURES = Path(__file__).resolve().parents[1] / "fixtures"


@pytest.fixture(scope="module")
def data():
    df = tw.simulate(subjects=200, seed=9)
    return df, tw.Panel.from_frame(df, "patient", "years", "egfr", ["acr", "diabetes"])


def test_bands_equal_r_co_intervals():
    # R's graphics::co.intervals on quakes$depth and tied data, committed by bands_r.R.
    f = json.loads((FIXTURES / "bands_r.json").read_text())
    for data in f["datasets"]:
        for case in data["cases"]:
            b = tw.equal_count_bands(data["x"], case["number"], case["overlap"])
            assert [x["lower"] for x in b.bands] == case["lower"], data["name"]
            assert [x["upper"] for x in b.bands] == case["upper"], data["name"]
            assert [x["count"] for x in b.bands] == case["count"], data["name"]


def test_conditional_slopes_vs_statsmodels_cluster(data):
    df, p = data
    bands = tw.covariate_bands(p, "acr", number=3, overlap=0.3)
    t = tw.conditional_trends(p, "acr", bands, tw.Lowess(span=0.5))
    for band, trend in zip(bands.bands, t.trends):
        rows = df[(df["acr"] >= band["lower"]) & (df["acr"] <= band["upper"])]
        X = sm.add_constant(rows["years"].to_numpy())
        fit = sm.OLS(rows["egfr"].to_numpy(), X).fit(cov_type="cluster", cov_kwds={"groups": rows["patient"].to_numpy()})
        assert trend["slope"] == pytest.approx(fit.params[1], rel=1e-10)
        assert trend["slope_se"] == pytest.approx(fit.bse[1], rel=1e-10)
        assert trend["subjects"] == rows["patient"].nunique()


def test_group_curves_are_fits_of_each_group(data):
    df, p = data
    g = tw.group_curves(p, "diabetes", tw.Kernel(bandwidth=0.8))
    for group in g.groups:
        rows = df[df["diabetes"] == group["level"]]
        c = tw.Kernel(bandwidth=0.8).fit(rows["years"], rows["egfr"])
        np.testing.assert_array_equal(group["curve"]["fitted"], c.fitted)
        assert group["subjects"] == rows["patient"].nunique()


def test_dropout_cohorts_by_last_visit(data):
    df, p = data
    edges = [0, 2, 4, 6, 8]
    d = tw.dropout_curves(p, tw.Kernel(bandwidth=0.8), edges=edges)
    last = df.groupby("patient")["years"].max()
    bins = np.clip(np.searchsorted(edges, last.to_numpy(), side="right") - 1, 0, len(edges) - 2)
    counts = pd.Series(bins).value_counts().sort_index()
    assert [grp["subjects"] for grp in d.groups] == counts.tolist()


def test_trajectory_grid_vs_pandas_pivot(data):
    df, p = data
    edges = [0, 1, 2, 4, 8]
    order = np.arange(p.n_subjects, dtype=float)[::-1].copy()  # reverse id order
    g = tw.trajectory_grid(p, df["egfr"].to_numpy(), order, edges=edges)
    b = np.clip(np.searchsorted(edges, df["years"].to_numpy(), side="right") - 1, 0, len(edges) - 2)
    piv = df.assign(bin=b).pivot_table(index="patient", columns="bin", values="egfr", aggfunc="mean")
    piv = piv.reindex(columns=range(len(edges) - 1)).loc[g.subjects]
    np.testing.assert_allclose(g.values, piv.to_numpy(), rtol=1e-13, equal_nan=True)
    assert g.subjects == sorted(p.subject_ids, reverse=True)
