"""Shared helpers of the Python suite: the fixtures in tests/fixtures."""

import json
import math
from pathlib import Path

import numpy as np
import pytest

FIXTURES = Path(__file__).resolve().parents[1] / "fixtures"


def load(name):
    return json.loads((FIXTURES / name).read_text())


def number(v):
    return {"nan": math.nan, "inf": math.inf, "-inf": -math.inf}[v] if isinstance(v, str) else float(v)


def numbers(values):
    return np.array([number(v) for v in values], dtype=np.float64)


def subjects(case):
    """Subject ids typed as the fixture says: int (None = missing), float, or text."""
    raw = case["subject"]
    kind = case.get("subject_type") or ("text" if any(isinstance(v, str) for v in raw) else "int")
    if kind == "int":
        return raw if None in raw else np.array(raw, dtype=np.int64)
    if kind == "float":
        return numbers(raw)
    return np.array(raw, dtype=object)


@pytest.fixture
def fixture():
    return load
