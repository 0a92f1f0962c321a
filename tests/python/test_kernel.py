"""Kernel smoother through the Python binding, live against the definition evaluated with
numpy (O(n^2), independent of the core) on fresh data; tolerance 1e-10 x sd(y) for exact
evaluation, 1e-3 x sd(y) for the binned evaluation (its stated bound, docs/methods.md)."""

import numpy as np
import pytest

import trajweave as tw

SQRT3 = np.sqrt(3.0)


def direct(x, y, at, h, shape, degree):
    out = []
    for t in at:
        d = x - t
        w = (np.abs(d) <= SQRT3 * h).astype(float) if shape == "box" else np.exp(-0.5 * (d / h) ** 2)
        s0, s1, s2, t0, t1 = w.sum(), (w * d).sum(), (w * d * d).sum(), (w * y).sum(), (w * d * y).sum()
        det = s0 * s2 - s1 * s1
        out.append((s2 * t0 - s1 * t1) / det if degree == 1 and det > 1e-12 * s0 * s2 else t0 / s0)
    return np.array(out)


@pytest.fixture(scope="module")
def data():
    rng = np.random.default_rng(7)
    x = rng.uniform(0, 20, 600) ** 1.3 / 10
    y = np.cos(x) + rng.normal(0, 0.5, x.size)
    return x, y


@pytest.mark.parametrize("shape", ["gaussian", "box"])
@pytest.mark.parametrize("degree", [0, 1])
def test_exact_matches_definition(data, shape, degree):
    x, y = data
    c = tw.Kernel(bandwidth=0.3, shape=shape, degree=degree, truncation=40, evaluation="exact").fit(x, y)
    np.testing.assert_array_equal(c.x, np.unique(x))
    want = direct(x, y, c.x, 0.3, shape, degree)
    assert np.max(np.abs(c.fitted - want)) <= 1e-10 * np.std(y, ddof=1)
    assert c.diagnostics.bandwidth == 0.3


def test_binned_within_bound_and_auto_reports_choice(data):
    x, y = data
    exact = tw.Kernel(bandwidth=0.3, evaluation="exact").fit(x, y)
    binned = tw.Kernel(bandwidth=0.3, evaluation="binned").fit(x, y)
    assert np.max(np.abs(exact.fitted - binned.fitted)) <= 1e-3 * np.std(y, ddof=1)
    assert binned.settings["evaluation"] == "binned"
    assert tw.Kernel().fit(x, y).settings["evaluation"] in ("exact", "binned")


def test_at_points_and_default_bandwidth(data):
    x, y = data
    c = tw.Kernel(bandwidth=0.3, evaluation="exact").fit(x, y)
    # Rule of thumb (common practice): 0.9 min(sd, IQR / 1.349) n^(-1/5).
    q1, q3 = np.quantile(x, [0.25, 0.75])
    h = 0.9 * min(np.std(x, ddof=1), (q3 - q1) / 1.349) * len(x) ** -0.2
    assert tw.Kernel().fit(x, y).diagnostics.bandwidth == pytest.approx(h, rel=1e-12)
    mid = (c.x[:-1] + c.x[1:]) / 2
    np.testing.assert_allclose(c.predict(mid), np.interp(mid, c.x, c.fitted), rtol=0, atol=1e-12)


def test_option_errors():
    with pytest.raises(tw.InvalidOptionError) as e:
        tw.Kernel(shape="triangle")
    assert str(e.value) == '`shape` = "triangle" is not allowed: "box" or "gaussian"'
    with pytest.raises(tw.InvalidOptionError, match="`degree` = 2 is not allowed"):
        tw.Kernel(degree=2)
    with pytest.raises(tw.LengthMismatchError):
        tw.Kernel().fit([1.0, 2.0], [1.0])
    with pytest.raises(tw.NonFiniteError, match="`x` is not finite at row 2"):
        tw.Kernel().fit([1.0, np.nan], [1.0, 2.0])


def test_box_window_is_closed_on_cars():
    # Reference: R's stats::ksmooth(cars$speed, cars$dist, "box", bandwidth = b), fixture
    # kernel_reference.json section "cars" (tests/reference/kernel_py.py): at the distinct
    # speeds the core's curve is evaluated exactly there; points at distance b / 2 are inside.
    from conftest import load, numbers

    cars = load("kernel_reference.json")["cars"]
    x, y = numbers(cars["speed"]), numbers(cars["dist"])
    for case in cars["cases"]:
        if case["points"] != "data":
            continue
        c = tw.Kernel(bandwidth=case["bandwidth"], shape="box", degree=0).fit(x, y)
        np.testing.assert_array_equal(c.x, numbers(case["at"]))
        np.testing.assert_allclose(c.fitted, numbers(case["fitted"]), rtol=1e-12, atol=0)
    c = tw.Kernel(bandwidth=1 / np.sqrt(3), shape="box", degree=0).fit(x, y)
    assert c.predict([23.0])[0] == 82.5  # R: ksmooth(..., bandwidth = 2, x.points = 23)
