"""average_change through the Python binding: against numpy and statsmodels (fixture and live),
on the demo data (the four smoothers agree within each other's intervals), seeded, its typed
errors; and binary responses against pandas proportions per time bin."""

import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import trajweave as tw
from conftest import load, numbers

DEMO = Path(__file__).resolve().parents[2] / "demo-data" / "kidney_registry.csv"
CENTRAL = "a number in (0, 1], the share of observation times the window covers (e.g. 0.9)"


@pytest.fixture(scope="module")
def demo():
    return pd.read_csv(DEMO)


def test_fixture_numpy_statsmodels():
    f = load("change_py.json")
    p = tw.Panel(np.array(f["subject"]), numbers(f["time"]), numbers(f["response"]))
    for case in f["cases"]:
        c = tw.average_change(p, tw.Lowess(iterations=0, delta=0), central=case["central"], reps=20)
        d = c.to_dict()
        # numpy.quantile(method="linear"): type 7, to round-off.
        assert d["from"] == pytest.approx(case["from"], abs=1e-12)
        assert d["to"] == pytest.approx(case["to"], abs=1e-12)
        # statsmodels lowess (it=0, delta=0) + numpy.interp.
        assert c.estimate == pytest.approx(case["lowess_estimate"], abs=1e-10)
        # numpy.polyfit(t, y, 1)[0].
        assert c.ols_slope == pytest.approx(f["ols_slope"], rel=1e-12)
        assert c.lower <= c.estimate <= c.upper


def test_demo_window_and_ols_live(demo):
    p = tw.Panel.from_frame(demo, "patient", "years", "egfr")
    c = tw.average_change(p, tw.Lowess(), reps=20)
    # numpy.quantile(method="linear") and numpy.polyfit on the demo data.
    lo, hi = np.quantile(demo.years, [0.05, 0.95], method="linear")
    assert c.to_dict()["from"] == pytest.approx(lo, abs=1e-12)
    assert c.to == pytest.approx(hi, abs=1e-12)
    assert c.ols_slope == pytest.approx(np.polyfit(demo.years, demo.egfr, 1)[0], rel=1e-10)
    assert c.settings.iterations == 3 and c.warnings == []
    assert "percentile" in c.method and c.smoother.family == "lowess"


# On the demo data (simulated; the true mean curve is not a line because dropout follows
# decline) the four smoothers at their defaults, over the central 90% of the visit times
# (0 to 5.88 years), measured: LOWESS -1.352 [-1.575, -1.156], kernel -1.344 [-1.560,
# -1.125], spline -1.296 [-1.518, -1.106], super smoother -1.373 [-1.598, -1.212] per year;
# least squares -1.298 [-1.517, -1.111]. The end-to-end slope of the kernel curve over the
# whole range (the old headline) was -2.06, outside all of these.
SMOOTHERS = {"lowess": tw.Lowess(), "kernel": tw.Kernel(), "spline": tw.Spline(),
             "super": tw.SuperSmoother()}


def test_demo_smoothers_agree_within_each_others_intervals(demo):
    p = tw.Panel.from_frame(demo, "patient", "years", "egfr")
    changes = {k: tw.average_change(p, s) for k, s in SMOOTHERS.items()}
    for name, c in changes.items():
        assert c.failed == 0 and c.reps == 200
        for other, o in changes.items():
            # Each estimate inside every other smoother's 95% interval: they measure one
            # quantity, the mean curve's average slope over the same window.
            assert o.lower <= c.estimate <= o.upper, f"{name} {c.estimate} outside {other} {o}"
        # And inside the least-squares interval, the model-free number.
        assert c.ols_lower <= c.estimate <= c.ols_upper, name
    ols = {c.ols_slope for c in changes.values()}
    assert len(ols) == 1  # the same data, the same least-squares slope


def test_seeded_and_repr(demo):
    p = tw.Panel.from_frame(demo[demo.patient <= 400], "patient", "years", "egfr")
    a = tw.average_change(p, tw.Spline(df=5), reps=30, seed=4)
    assert a == tw.average_change(p, tw.Spline(df=5), reps=30, seed=4)
    assert a.lower != tw.average_change(p, tw.Spline(df=5), reps=30, seed=5).lower
    assert "per time unit" in repr(a)


@pytest.mark.parametrize("kwargs, message", [
    ({"central": 0}, f"`central` = 0 is not allowed: {CENTRAL}"),
    ({"central": 1.2}, f"`central` = 1.2 is not allowed: {CENTRAL}"),
    ({"reps": 0}, "`reps` = 0 is not allowed: a whole number from 10 to 100000"),
    ({"reps": 20.5}, "`reps` = 20.5 is not allowed: a whole number from 10 to 100000"),
    ({"level": 0}, "`level` = 0 is not allowed: a number in (0, 1), e.g. 0.95"),
])
def test_option_errors(kwargs, message):
    p = tw.Panel([1, 1, 2, 2], [0.0, 1.0, 0.0, 2.0], [1.0, 2.0, 3.0, 1.0])
    with pytest.raises(tw.InvalidOptionError) as e:
        tw.average_change(p, tw.Lowess(), **kwargs)
    assert str(e.value) == message


def test_zero_width_window():
    p = tw.Panel([1, 2, 3], [2.0, 2.0, 2.0], [1.0, 2.0, 3.0])
    with pytest.raises(tw.TooFewError) as e:
        tw.average_change(p, tw.Lowess())
    assert str(e.value) == ("too few distinct observation times in the central window for an "
                            "average change per time unit: need at least 2, found 1")


# Binary responses: the demo data's eGFR < 30 (1% of visits in the first year, 19% in the
# eighth).

@pytest.fixture(scope="module")
def low(demo):
    d = demo.assign(low=(demo.egfr < 30).astype(float), year=np.floor(demo.years))
    return d, tw.Panel.from_frame(d, "patient", "years", "low")


@pytest.mark.parametrize("smoother", [tw.Lowess(), tw.SuperSmoother()], ids=["lowess", "super"])
def test_binary_mean_curve_follows_pandas_proportions(low, smoother):
    d, p = low
    assert p.is_binary()
    # Reference: pandas groupby over yearly bins, the proportion of visits with eGFR < 30.
    prop = d.groupby("year")["low"].mean()
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no warning when iterations are left unset
        m = tw.mean_curve(p, smoother, at=prop.index.values + 0.5)
    # Tolerance 0.03: the bin proportion averages the curve over a year (curvature here
    # moves it by < 0.005), and the last bin's proportion, from 206 visits, has a binomial
    # standard error of 0.027; measured differences are at most 0.021 (LOWESS) and 0.029
    # (super smoother), in the last bin.
    np.testing.assert_allclose(m.fitted, prop.values, rtol=0, atol=0.03)
    assert m.fitted.max() > 0.1  # never 0 everywhere
    if isinstance(smoother, tw.Lowess):
        assert m.curve.settings["iterations"] == 0


def test_binary_lowess_with_robustness_asked_warns(low):
    _, p = low
    with pytest.warns(UserWarning, match="robustness weights discard the rarer value"):
        m = tw.mean_curve(p, tw.Lowess(iterations=3))
    assert m.curve.warnings[0].startswith("the response has two distinct values (binary)")
    assert np.all(m.fitted == 0)  # what the warning is about: the rare ones are discarded
    with pytest.warns(UserWarning, match="binary"):
        c = tw.average_change(p, tw.Lowess(iterations=2), reps=10)
    assert c.warnings == m.curve.warnings


def test_binary_lowess_default_is_statsmodels_without_iterations():
    # Reference: statsmodels lowess(it=0), continuous x (no ties), delta 0. statsmodels and
    # R's stats::lowess differ by 3e-10 x sd(y) on these data (measured; the R suite checks
    # the same case against R at 1e-10 x sd(y)), hence 1e-9 x sd(y).
    from statsmodels.nonparametric.smoothers_lowess import lowess

    rng = np.random.default_rng(3)
    x = rng.uniform(0, 10, 400)
    y = (rng.uniform(size=400) < 0.05 + 0.02 * x).astype(float)
    c = tw.Lowess(delta=0).fit(x, y)
    want = lowess(y, x, frac=2 / 3, it=0, delta=0)[:, 1]
    assert np.max(np.abs(c.fitted - want)) <= 1e-9 * np.std(y, ddof=1)
    assert c.settings["iterations"] == 0
