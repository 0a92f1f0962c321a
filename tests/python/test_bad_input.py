"""Every case of the bad-input policy (tests/fixtures/bad_input.json, shared with the Rust
and R suites): the exception class for the kind, and the exact message."""

import pytest

import trajweave as tw
from conftest import load, number, numbers, subjects

BAD = load("bad_input.json")
CLASSES = {
    "length_mismatch": tw.LengthMismatchError,
    "non_finite": tw.NonFiniteError,
    "missing": tw.MissingValueError,
    "invalid_value": tw.InvalidValueError,
    "invalid_option": tw.InvalidOptionError,
    "empty": tw.EmptyInputError,
    "too_few": tw.TooFewError,
}


def check(excinfo, case):
    assert type(excinfo.value) is CLASSES[case["kind"]]
    assert excinfo.value.kind == case["kind"]
    assert isinstance(excinfo.value, ValueError)
    assert str(excinfo.value) == case["message"]


@pytest.mark.parametrize("case", BAD["panel_cases"], ids=lambda c: c["name"])
def test_panel_cases(case):
    covariates = {k: numbers(v) for k, v in case.get("covariates", {}).items()}
    with pytest.raises(tw.TrajweaveError) as excinfo:
        tw.Panel(subjects(case), numbers(case["time"]), numbers(case["response"]),
                 covariates, missing=case.get("missing", "error"))
    check(excinfo, case)


@pytest.mark.parametrize("case", BAD["describe_cases"], ids=lambda c: c["name"])
def test_describe_cases(case):
    panel = tw.Panel([1], [0.0], [1.0])
    grid = case["grid"]
    with pytest.raises(tw.TrajweaveError) as excinfo:
        tw.describe(panel, edges=grid.get("edges"), schedule=grid.get("schedule"),
                    tolerance=grid.get("tolerance"))
    check(excinfo, case)


@pytest.mark.parametrize("case", BAD["simulate_cases"], ids=lambda c: c["name"])
def test_simulate_cases(case):
    with pytest.raises(tw.TrajweaveError) as excinfo:
        tw.simulate(**{k: number(v) for k, v in case["options"].items()})
    check(excinfo, case)


def test_python_only_cases():
    import pandas as pd

    df = pd.DataFrame({"id": [1, 2], "t": [0.0, 1.0], "y": [1.0, 2.0]})
    with pytest.raises(tw.InvalidOptionError) as e:
        tw.Panel.from_frame(df, subject="patient", time="t", response="y")
    assert str(e.value) == "`subject` = 'patient' is not allowed: no such column; the columns are id, t, y"
    with pytest.raises(tw.InvalidValueError, match="mixes numbers and text"):
        tw.Panel(pd.Series([1, "a"], dtype=object), [0.0, 0.0], [1.0, 2.0])
    with pytest.raises(tw.InvalidValueError, match="`time` holds values that are not numbers"):
        tw.Panel([1, 2], ["x", "y"], [1.0, 2.0])
    with pytest.raises(tw.InvalidOptionError, match="one-dimensional"):
        tw.Panel([[1, 2]], [[0.0, 1.0]], [[1.0, 2.0]])


def test_no_panic_escapes_on_odd_input():
    # A Rust panic would surface as pyo3's PanicException (a BaseException): every odd input
    # must instead raise an ordinary exception of ours.
    import numpy as np

    for args in [([], [], []), ([1], [np.nan], [np.nan]), ([np.inf], [0.0], [1.0])]:
        with pytest.raises(tw.TrajweaveError):
            tw.Panel(*args, missing="drop")
