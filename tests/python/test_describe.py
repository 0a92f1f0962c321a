"""describe against tests/fixtures/describe_small.json (expected values from pandas/numpy in
tests/reference/describe_reference.py), and live against pandas on simulated data."""

import numpy as np
import pandas as pd
import pytest

import trajweave as tw
from conftest import load, numbers, subjects

CASES = load("describe_small.json")["cases"]
TOL = 1e-12  # sums and type-7 quantiles of a few decimals


def build(case):
    covariates = {k: numbers(v) for k, v in case["covariates"].items()}
    return tw.Panel(subjects(case), numbers(case["time"]), numbers(case["response"]),
                    covariates, missing=case["missing"])


@pytest.mark.parametrize("case", CASES, ids=lambda c: c["name"])
def test_fixture(case):
    d = build(case).describe(**case["grid"])
    got, want = d.to_dict(), case["expected"]
    for key in ["subjects", "observations", "rows_input", "rows_dropped", "gap_count",
                "single_visit_subjects", "duplicated_rows", "covariates", "per_subject"]:
        assert got[key] == want[key], key
    for key in ["visits_per_subject", "follow_up", "gaps"]:
        for q in ["min", "q1", "median", "q3", "max"]:
            assert got[key][q] == pytest.approx(want[key][q], abs=TOL), (key, q)
    grid = got["grid"]
    assert [b["subjects"] for b in grid["bins"]] == want["grid"]["bin_subjects"]
    assert [b["observations"] for b in grid["bins"]] == want["grid"]["bin_observations"]
    assert grid["outside"] == want["grid"]["outside"]
    assert grid["patterns"] == want["grid"]["patterns"]
    assert [{k: s[k] for k in ("subject", "pattern", "seen")} for s in grid["per_subject"]] == want["grid"]["per_subject"]


def test_live_against_pandas_on_simulated_data():
    df = tw.simulate(subjects=400, seed=12)
    d = tw.Panel.from_frame(df, "patient", "years", "egfr").describe()
    g = df.groupby("patient")
    visits = g.size().to_numpy()
    follow = (g["years"].max() - g["years"].min()).to_numpy()
    gaps = g["years"].diff().dropna().to_numpy()
    # numpy.quantile default ("linear") is Hyndman & Fan type 7.
    for got, values in [(d.visits_per_subject, visits), (d.follow_up, follow), (d.gaps, gaps)]:
        q = np.quantile(values, [0.0, 0.25, 0.5, 0.75, 1.0])
        np.testing.assert_allclose([got.min, got.q1, got.median, got.q3, got.max], q, rtol=0, atol=1e-12)
    assert d.single_visit_subjects == int((visits == 1).sum())
    assert d.observations == len(df)


def test_text_matches_attributes():
    d = tw.Panel([1, 1, 2], [0.0, 1.0, 0.0], [1.0, 2.0, 3.0]).describe()
    text = str(d)
    assert text.startswith("subjects               2\n")
    assert "one-visit subjects     1" in text
    with pytest.raises(AttributeError, match="no field 'nope'"):
        d.nope
    with pytest.raises(AttributeError):
        d.subjects = 3
