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


def test_drop_any_column_matches_pandas_dropna():
    rng = np.random.default_rng(12)
    n = 300
    df = pd.DataFrame({
        "id": pd.array(rng.integers(0, 40, n), dtype="Int64"),
        "t": rng.uniform(0, 5, n),
        "y": rng.normal(size=n),
        "age": rng.normal(60, 5, n),
        "bmi": pd.array(rng.normal(27, 3, n), dtype="Float64"),
    })
    for col, share in [("id", 0.03), ("t", 0.05), ("y", 0.1), ("age", 0.07), ("bmi", 0.04)]:
        df.loc[rng.random(n) < share, col] = pd.NA if col in ("id", "bmi") else np.nan
    p = tw.Panel.from_frame(df, "id", "t", "y", ["age", "bmi"], missing="drop")
    # Reference: pandas dropna over the columns used, and isna().sum() per column.
    kept = df.dropna(subset=["id", "t", "y", "age", "bmi"])
    assert p.dropped_rows == sorted(set(range(n)) - set(kept.index))
    assert p.n_observations == len(kept)
    assert p.subject_ids == sorted(kept["id"].unique().tolist())
    nas = df.isna().sum()
    names = {"id": "subject", "t": "time", "y": "response", "age": "age", "bmi": "bmi"}
    expected = [{"column": names[c], "rows": int(nas[c])} for c in names if nas[c] > 0]
    d = p.describe()
    assert [dict(c) for c in d.to_dict()["dropped_by_column"]] == expected
    assert d.rows_dropped == n - len(kept)
    assert p.dropped_by_column == {e["column"]: e["rows"] for e in expected}
    # Under "error" the first missing cell in row order is named, with its column and row
    # (pandas: the first row with any missing value among the columns used).
    first = int(np.flatnonzero(df[list(names)].isna().any(axis=1).to_numpy())[0])
    column = names[df[list(names)].iloc[first].isna().idxmax()]
    with pytest.raises(tw.MissingValueError) as e:
        tw.Panel.from_frame(df, "id", "t", "y", ["age", "bmi"])
    assert str(e.value) == (f"`{column}` is missing at row {first + 1}: "
                            'pass missing = "drop" to drop such rows, or fill them in')


def test_missing_text_ids_are_never_a_subject_called_na():
    p = tw.Panel(pd.Series(["a", None, "b", np.nan], dtype=object), [0.0, 0.0, 0.0, 1.0],
                 [1.0, 2.0, 3.0, 4.0], missing="drop")
    # Reference: pandas drops None and NaN alike (isna).
    assert p.subject_ids == ["a", "b"]
    assert p.dropped_by_column == {"subject": 2}


def test_subject_id_rule():
    t, y = [0.0, 1.0, 0.0], [1.0, 2.0, 3.0]
    # Reference: pandas nunique on the same column (numbers compare numerically, text exactly).
    numeric = pd.Series([1, 1.0, 2])
    text = pd.Series(["007", "7", "007"])
    assert tw.Panel(numeric, t, y).n_subjects == numeric.nunique() == 2
    assert tw.Panel(text, t, y).n_subjects == text.nunique() == 2
    assert tw.Panel(text, t, y).subject_ids == ["007", "7"]


def test_covariates_kept_in_sorted_order():
    df = pd.DataFrame({"id": [2, 1, 2], "t": [1.0, 0.0, 0.0], "y": [1.0, 2.0, 3.0], "dose": [5.0, 6.0, 7.0]})
    p = tw.Panel.from_frame(df, "id", "t", "y", covariates="dose")
    np.testing.assert_array_equal(p.covariate("dose"), [6.0, 7.0, 5.0])
    with pytest.raises(tw.InvalidOptionError):
        p.covariate("age")
