"""Panel construction from numpy, lists and pandas; sorting, row order and dropping."""

import numpy as np
import pandas as pd
import pytest

import trajweave as tw


def test_sorted_by_subject_then_time_and_back():
    rng = np.random.default_rng(5)
    n = 500
    subject = rng.integers(0, 40, n)
    time = rng.integers(0, 10, n).astype(float)  # ties on purpose
    response = rng.normal(size=n)
    p = tw.Panel(subject, time, response)
    # Reference: numpy's stable lexsort by (subject, time).
    order = np.lexsort((time, subject))
    np.testing.assert_array_equal(p.order, order)
    np.testing.assert_array_equal(p.response, response[order])
    np.testing.assert_array_equal(p.to_input_order(p.response), response)
    assert p.subject_ids == sorted(set(subject.tolist()))
    np.testing.assert_array_equal(np.diff(p.offsets), np.bincount(subject)[np.bincount(subject) > 0])


def test_permuting_rows_changes_no_description():
    rng = np.random.default_rng(9)
    df = tw.simulate(subjects=60, seed=4)
    shuffled = df.sample(frac=1.0, random_state=3)
    a = tw.Panel.from_frame(df, "patient", "years", "egfr", ["age"]).describe(edges=[0, 1, 2, 8])
    b = tw.Panel.from_frame(shuffled, "patient", "years", "egfr", ["age"]).describe(edges=[0, 1, 2, 8])
    assert a.to_dict() == b.to_dict()
    del rng


def test_id_types():
    t, y = [0.0, 1.0, 0.0], [1.0, 2.0, 3.0]
    assert tw.Panel(np.array([2.0, 2.0, 1.0]), t, y).subject_ids == [1, 2]
    assert tw.Panel(["b", "b", "a"], t, y).subject_ids == ["a", "b"]
    assert tw.Panel(pd.Series(["b", "b", "a"], dtype="category"), t, y).subject_ids == ["a", "b"]
    assert tw.Panel(pd.array([2, 2, 1], dtype="Int64"), t, y).subject_ids == [1, 2]
    with pytest.raises(tw.MissingValueError):
        tw.Panel(pd.array([2, None, 1], dtype="Int64"), t, y)
    # Strided views and integer times are accepted.
    big = np.arange(6.0)
    assert tw.Panel([1, 1, 2], big[::2].astype(int), big[1::2]).n_observations == 3


def test_drop_reports_rows():
    p = tw.Panel([1, 1, 2, 2], [0, 1, 0, 1], [1.0, np.nan, np.inf, 4.0], missing="drop")
    assert p.dropped_rows == [1, 2]
    assert p.n_rows == 4 and p.n_observations == 2
    back = p.to_input_order(p.response)
    assert back[0] == 1.0 and back[3] == 4.0 and np.isnan(back[1]) and np.isnan(back[2])
    assert "2 rows dropped" in repr(p)


def test_covariates_kept_in_sorted_order():
    df = pd.DataFrame({"id": [2, 1, 2], "t": [1.0, 0.0, 0.0], "y": [1.0, 2.0, 3.0], "dose": [5.0, 6.0, 7.0]})
    p = tw.Panel.from_frame(df, "id", "t", "y", covariates="dose")
    np.testing.assert_array_equal(p.covariate("dose"), [6.0, 7.0, 5.0])
    with pytest.raises(tw.InvalidOptionError):
        p.covariate("age")
