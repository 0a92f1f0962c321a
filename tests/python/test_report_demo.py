"""The report on the bundled demo registry draws sound conclusions: its summary names a
random-slope structure whose variance components agree with the settings the data were
simulated from, quotes nothing from a flagged fit, and gives the change per year with its
interval. The reference is the generating model itself (the simulator's settings, as
`trajweave simulate --list` prints them, and the covariate distributions of
core/src/data/simulate.rs), plus pandas for the proportions of a binary outcome."""

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import trajweave as tw

DEMO = Path(__file__).resolve().parents[2] / "demo-data" / "kidney_registry.csv"

# Simulator settings of the demo data (`trajweave simulate --list`).
SD_INTERCEPT, SD_SLOPE = 10.0, 1.2
AGE_EFFECT, FEMALE_EFFECT = -0.3, -2.0
DIABETES_SLOPE, ACR_SLOPE = -1.0, -0.6
SERIAL_SD, SERIAL_RANGE, NOISE_SD = 4.0, 1.5, 3.0
# Covariate distributions of the simulator: age ~ N(60, 12) (clipped far out), female and
# diabetes Bernoulli(0.45) and (0.35), ln(acr / 30) ~ N(., 1.2).
AGE_SD, P_FEMALE, P_DIABETES, LN_ACR_SD = 12.0, 0.45, 0.35, 1.2

# Residuals from a mean curve without covariates keep the covariate effects as
# between-subject variation: at time 0 the intercept variance is
# sd_intercept^2 + age_effect^2 var(age) + female_effect^2 p (1 - p) = 113.95, and the slope
# variance sd_slope^2 + diabetes_slope^2 p (1 - p) + acr_slope^2 var(ln acr) = 2.186.
INTERCEPT_VARIANCE = (
    SD_INTERCEPT**2 + (AGE_EFFECT * AGE_SD) ** 2 + FEMALE_EFFECT**2 * P_FEMALE * (1 - P_FEMALE)
)
SLOPE_VARIANCE = (
    SD_SLOPE**2
    + DIABETES_SLOPE**2 * P_DIABETES * (1 - P_DIABETES)
    + (ACR_SLOPE * LN_ACR_SD) ** 2
)
TRUTH = {
    "intercept_variance": INTERCEPT_VARIANCE,
    "slope_variance": SLOPE_VARIANCE,
    "serial_variance": SERIAL_SD**2,
    "range": SERIAL_RANGE,
    "error_variance": NOISE_SD**2,
}


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    df = pd.read_csv(DEMO)
    p = tw.Panel.from_frame(df, "patient", "years", "egfr", ["age", "female", "diabetes", "acr"])
    path = tmp_path_factory.mktemp("demo") / "report.html"
    tw.report(p, path, time_unit="years")
    return json.loads(path.with_suffix(".json").read_text())


def test_summary_names_the_random_slope_structure_the_data_were_made_with(demo):
    screening = demo["sections"]["screening"]["screening"]
    best = next(f for f in screening["fits"] if not f["flagged"])
    assert best["structure"] == "intercept_slope_exponential_error"
    assert screening["time_origin"] == 0.0
    got = dict(zip(best["parameter_names"], best["parameters"]))
    for name, want in TRUTH.items():
        # 20 %: informative dropout and the fitted mean bias the estimates a little.
        assert abs(got[name] - want) <= 0.2 * want, (name, got[name], want)
    summary = demo["summary"]
    assert "random intercept and slope + exponential serial + error as best" in summary
    assert f"between-subject variance {got['intercept_variance']:.0f}" in summary


def test_summary_quotes_nothing_from_a_flagged_fit(demo):
    summary = demo["summary"]
    screening = demo["sections"]["screening"]["screening"]
    for f in screening["fits"]:
        if f["flagged"]:
            # Its parameters are not quoted as findings.
            for name, value in zip(f["parameter_names"], f["parameters"]):
                if value > 1:
                    assert f"{value:.3g}" not in summary, (f["structure"], name)
    comparison = demo["sections"]["variogram"]["comparison"]
    stationary = comparison["stationary"]
    assert stationary["flagged"]  # range at its cap on these data
    assert f"{stationary['range']:.3g}" not in summary
    assert "% between subjects" not in summary


def test_summary_gives_the_change_per_year_with_its_interval(demo):
    change = demo["sections"]["trend"]["curves"][0]["average_change"]
    assert change["lower"] < change["estimate"] < change["upper"]
    # The simulated mean declines by 1.2 per year plus covariate slope effects (diabetes
    # -1 x 0.35; acr -0.6 x E ln(acr/30)) and dropout selection: about -1.2 to -1.6.
    assert -1.8 < change["estimate"] < -1.0
    assert "subject-bootstrap interval" in demo["summary"]
    assert "per year" in demo["summary"]


def test_smoothing_is_chosen_by_subject_cross_validation(demo):
    smoothing = demo["sections"]["trend"]["smoothing"]
    assert smoothing["how"] == "cross-validation"
    tuning = smoothing["tuning"]
    assert tuning["best"] == tuning["candidates"][int(np.nanargmin(tuning["scores"]))]


def test_binary_response_mean_curve_is_a_proportion(tmp_path):
    # Reference: pandas groupby of the derived outcome egfr < 30 by yearly bins.
    df = pd.read_csv(DEMO)
    df["low"] = (df["egfr"] < 30).astype(float)
    p = tw.Panel.from_frame(df, "patient", "years", "low")
    m = tw.mean_curve(p, tw.Lowess())
    share = df.groupby(np.floor(df["years"]).clip(upper=7))["low"].mean()
    at = np.asarray(m.at)
    fitted = np.asarray(m.fitted)
    for year, prop in share.items():
        centre = year + 0.5
        k = int(np.argmin(np.abs(at - centre)))
        assert abs(fitted[k] - prop) < 0.04, (year, fitted[k], prop)
    path = tmp_path / "binary.html"
    tw.report(p, path, bootstrap_reps=20, time_unit="years")
    summary = json.loads(path.with_suffix(".json").read_text())["summary"]
    assert "proportion" in summary
