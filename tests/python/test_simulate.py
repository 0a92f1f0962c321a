"""simulate: seeded, sorted, and the same as the core's defaults say."""

import numpy as np
import pandas as pd
import pytest

import trajweave as tw


def test_same_seed_same_panel():
    a = tw.simulate(subjects=50, seed=8)
    b = tw.simulate(subjects=50, seed=8)
    pd.testing.assert_frame_equal(a, b)
    c = tw.simulate(subjects=50, seed=9)
    assert not np.array_equal(a["egfr"].to_numpy()[:5], c["egfr"].to_numpy()[:5])


def test_sorted_and_shaped():
    df = tw.simulate(subjects=30, seed=1)
    assert list(df.columns) == ["patient", "years", "egfr", "age", "female", "diabetes", "acr"]
    assert sorted(df["patient"].unique()) == list(range(1, 31))
    keys = list(zip(df["patient"], df["years"]))
    assert keys == sorted(keys)
    assert (df.groupby("patient")["years"].min() == 0).all()
    assert df["years"].max() <= 8.0
    for col in ["age", "female", "diabetes", "acr"]:
        assert (df.groupby("patient")[col].nunique() == 1).all()


def test_as_dict_and_options():
    cols = tw.simulate(subjects=10, seed=2, as_frame=False, noise_sd=0.0)
    assert set(cols) == {"patient", "years", "egfr", "age", "female", "diabetes", "acr"}
    assert cols["patient"].dtype == np.int64
    with pytest.raises(tw.InvalidOptionError, match="`seed` = 'x' is not allowed"):
        tw.simulate(seed="x")
