"""Cross-language identity: the CLI's JSON, the Python binding and the R package give the same
describe output and the same simulated panel.

Tolerances: the CLI and Python both serialise the core's result with serde_json, so they must
match exactly. R's numbers reach this test through jsonlite::toJSON(digits = NA), which prints
15 significant digits, so R is compared to a relative 1e-12 (round-off of printing only).

ChickWeight (R's base `datasets`; Crowder & Hand 1990) is checked against base R computed
inside the test: visit counts per chick vs table(ChickWeight$Chick), and the complete /
monotone / intermittent class of each chick on its 12-day schedule.

Needs the CLI binary (TRAJWEAVE_CLI), the installed R package (R_LIBS) and the Python
binding; `make cross-test` provides all three.
"""

import json
import math
import os
import subprocess
from pathlib import Path

import pandas as pd
import pytest

import trajweave as tw

ROOT = Path(__file__).resolve().parents[2]
CLI = os.environ.get("TRAJWEAVE_CLI", str(ROOT / "target" / "release" / "trajweave"))
RLIB = os.environ.get("R_LIBS", str(ROOT / ".rlib"))
DEMO = ROOT / "demo-data" / "kidney_registry.csv"
DEMO_COVARIATES = ["age", "female", "diabetes", "acr"]
CHICK_DAYS = [0, 2, 4, 6, 8, 10, 12, 14, 16, 18, 20, 21]
R_REL_TOL = 1e-12


def cli(*args):
    out = subprocess.run([CLI, *map(str, args)], capture_output=True, text=True)
    assert out.returncode == 0, out.stderr
    return out.stdout


def rscript(code, tmp_path):
    script = tmp_path / "script.R"
    script.write_text(f'suppressMessages(library(trajweave, lib.loc = "{RLIB}"))\n' + code)
    out = subprocess.run(["Rscript", str(script)], capture_output=True, text=True)
    assert out.returncode == 0, out.stderr
    return out.stdout


def same(a, b, path="", rel=0.0):
    """Deep comparison; numbers within `rel`; a missing key counts as null (jsonlite leaves
    NA cells of data.frame rows out)."""
    if isinstance(a, dict) and isinstance(b, dict):
        for k in set(a) | set(b):
            same(a.get(k), b.get(k), f"{path}.{k}", rel)
    elif isinstance(a, list) and isinstance(b, list):
        assert len(a) == len(b), f"{path}: lengths {len(a)} vs {len(b)}"
        for i, (x, y) in enumerate(zip(a, b)):
            same(x, y, f"{path}[{i}]", rel)
    elif isinstance(a, (int, float)) and isinstance(b, (int, float)) and not isinstance(a, bool):
        assert math.isclose(a, b, rel_tol=rel, abs_tol=0.0) or a == b, f"{path}: {a} vs {b}"
    else:
        assert a == b, f"{path}: {a!r} vs {b!r}"


R_DESCRIBE = """
d <- describe(p, {grid})
cat(jsonlite::toJSON(unclass(d), auto_unbox = TRUE, digits = NA, null = "null", na = "null"))
"""


def test_describe_demo_data_three_fronts(tmp_path):
    edges = list(range(9))
    cov_flags = [a for c in DEMO_COVARIATES for a in ("--covariate", c)]
    from_cli = json.loads(cli("describe", DEMO, "--subject", "patient", "--time", "years",
                              "--response", "egfr", *cov_flags, "--edges", ",".join(map(str, edges)),
                              "--format", "json"))
    df = pd.read_csv(DEMO)
    from_py = tw.Panel.from_frame(df, "patient", "years", "egfr", DEMO_COVARIATES).describe(edges=edges).to_dict()
    code = (f'df <- read.csv("{DEMO}")\n'
            'p <- panel_from_frame(df, "patient", "years", "egfr", c("age", "female", "diabetes", "acr"))\n'
            + R_DESCRIBE.format(grid="edges = 0:8"))
    from_r = json.loads(rscript(code, tmp_path))
    same(from_cli, from_py)  # exact
    same(from_cli, from_r, rel=R_REL_TOL)
    assert from_cli["subjects"] == 3000


def test_describe_chickweight_three_fronts_and_base_r(tmp_path):
    csv = tmp_path / "chickweight.csv"
    days = ", ".join(map(str, CHICK_DAYS))
    code = f"""
cw <- datasets::ChickWeight
ids <- as.integer(as.character(cw$Chick))
write.csv(data.frame(chick = ids, day = cw$Time, weight = cw$weight), "{csv}", row.names = FALSE)
days <- c({days})
# Base-R reference: visits per chick, and each chick's class on the 12-day schedule.
counts <- table(cw$Chick)
classes <- sapply(split(cw$Time, cw$Chick), function(t) {{
  seen <- days %in% t
  k <- sum(seen)
  if (k == length(days)) "complete" else if (k > 0 && all(seen[seq_len(k)])) "monotone" else "intermittent"
}})
p <- panel(ids, cw$Time, cw$weight)
d <- describe(p, schedule = days, tolerance = 0.4)
cat(jsonlite::toJSON(list(
  counts = as.list(setNames(as.integer(counts), names(counts))),
  classes = as.list(classes),
  ours = unclass(d)
), auto_unbox = TRUE, digits = NA, null = "null", na = "null"))
"""
    r = json.loads(rscript(code, tmp_path))
    from_cli = json.loads(cli("describe", csv, "--subject", "chick", "--time", "day", "--response", "weight",
                              "--schedule", ",".join(map(str, CHICK_DAYS)), "--tolerance", "0.4",
                              "--format", "json"))
    df = pd.read_csv(csv)
    from_py = tw.Panel.from_frame(df, "chick", "day", "weight").describe(schedule=CHICK_DAYS, tolerance=0.4).to_dict()
    same(from_cli, from_py)
    same(from_cli, r["ours"], rel=R_REL_TOL)

    visits = {str(s["subject"]): s["visits"] for s in from_cli["per_subject"]}
    assert visits == r["counts"]  # base R table(ChickWeight$Chick)
    classes = {str(s["subject"]): s["pattern"] for s in from_cli["grid"]["per_subject"]}
    assert classes == r["classes"]
    assert from_cli["subjects"] == 50 and from_cli["observations"] == 578
    assert set(classes.values()) >= {"complete", "monotone"}


def test_simulate_identical_everywhere(tmp_path):
    n, seed = 200, 99
    from_cli = pd.read_csv(pd.io.common.StringIO(cli("simulate", "--subjects", n, "--seed", seed)))
    from_py = tw.simulate(subjects=n, seed=seed)
    code = f"""
d <- simulate_panel(subjects = {n}, seed = {seed})
for (col in names(d)) d[[col]] <- sprintf("%.17g", d[[col]])
write.csv(d, stdout(), row.names = FALSE, quote = FALSE)
"""
    from_r = pd.read_csv(pd.io.common.StringIO(rscript(code, tmp_path)))
    # Full-precision text (Rust's shortest round trip, R's %.17g) parses back to the same bits.
    pd.testing.assert_frame_equal(from_cli, from_py, check_dtype=False, rtol=0, atol=0)
    pd.testing.assert_frame_equal(from_cli, from_r, check_dtype=False, rtol=0, atol=0)


def test_same_error_everywhere(tmp_path):
    # One bad-input case through all three fronts in one place (each suite has them all).
    bad = tmp_path / "bad.csv"
    bad.write_text("id,t,y\n1,0,1\n1,,2\n")
    out = subprocess.run([CLI, "describe", str(bad), "--subject", "id", "--time", "t", "--response", "y"],
                         capture_output=True, text=True)
    message = '`time` is missing at row 2: pass missing = "drop" to drop such rows, or fill them in'
    assert out.stderr.strip() == f"error [missing]: {bad} line 3, column `t`: {message}"
    with pytest.raises(tw.MissingValueError) as e:
        tw.Panel([1, 1], [0.0, float("nan")], [1.0, 2.0])
    assert str(e.value) == message
    code = """
r <- tryCatch(panel(c(1L, 1L), c(0, NA), c(1, 2)), trajweave_missing = function(e) conditionMessage(e))
cat(r)
"""
    assert rscript(code, tmp_path) == message


SMOOTHERS = [
    ("lowess", {"span": 0.3}, 'smoother_lowess(span = 0.3)', tw.Lowess(span=0.3)),
    ("kernel", {"bandwidth": 0.5, "shape": "box"}, 'smoother_kernel(bandwidth = 0.5, shape = "box")',
     tw.Kernel(bandwidth=0.5, shape="box")),
    ("spline", {"df": 6}, 'smoother_spline(df = 6)', tw.Spline(df=6)),
    ("super", {"bass": 2}, 'smoother_super(bass = 2)', tw.SuperSmoother(bass=2)),
]


@pytest.mark.parametrize("family, flags, r_spec, py_spec", SMOOTHERS, ids=[s[0] for s in SMOOTHERS])
def test_mean_curve_three_fronts(tmp_path, family, flags, r_spec, py_spec):
    at = [0.0, 0.5, 1.0, 2.5, 4.0, 6.0, 7.5]
    args = ["smooth", DEMO, "--subject", "patient", "--time", "years", "--response", "egfr",
            "--method", family, "--at", ",".join(map(str, at)), "--bootstrap", "20", "--seed", "3",
            "--format", "json"]
    for k, v in flags.items():
        args += [f"--{k}", v]
    from_cli = json.loads(cli(*args))
    df = pd.read_csv(DEMO)
    panel = tw.Panel.from_frame(df, "patient", "years", "egfr")
    m = tw.mean_curve(panel, py_spec, at=at, bootstrap=tw.Bootstrap(reps=20, seed=3))
    assert from_cli["fitted"] == m.fitted.tolist()  # exact: the same core, the same bits
    assert from_cli["band"]["lower"] == m.band.lower.tolist()
    assert from_cli["curve"]["fitted"] == m.curve.fitted.tolist()
    code = (f'df <- read.csv("{DEMO}")\n'
            'p <- panel_from_frame(df, "patient", "years", "egfr")\n'
            f'm <- mean_curve(p, {r_spec}, at = c({", ".join(map(str, at))}), '
            'bootstrap = bootstrap_options(reps = 20, seed = 3))\n'
            'cat(jsonlite::toJSON(list(fitted = m$fitted, lower = m$band$lower, upper = m$band$upper), digits = NA))')
    from_r = json.loads(rscript(code, tmp_path))
    same(from_cli["fitted"], from_r["fitted"], rel=R_REL_TOL)
    same(from_cli["band"]["lower"], from_r["lower"], rel=R_REL_TOL)
    same(from_cli["band"]["upper"], from_r["upper"], rel=R_REL_TOL)


def test_individuals_three_fronts(tmp_path):
    # Residuals from a degree-1 polynomial, the ranking by median residual, the picks and a
    # spread sample: the same subjects and numbers from the CLI, Python and R.
    quantiles = [0.05, 0.5, 0.95]
    from_cli = json.loads(cli("individuals", DEMO, "--subject", "patient", "--time", "years",
                              "--response", "egfr", "--quantiles", ",".join(map(str, quantiles)),
                              "--sample", "8", "--strategy", "spread", "--seed", "4"))
    df = pd.read_csv(DEMO)
    panel = tw.Panel.from_frame(df, "patient", "years", "egfr")
    r = tw.residuals(panel, tw.Polynomial(1))
    ranking = tw.rank_subjects(panel, r, "median")
    picks = tw.pick_subjects(panel, r, ranking, quantiles)
    sample = tw.sample_subjects(panel, 8, seed=4, strategy="spread", ranking=ranking)
    assert from_cli["ranking"]["subjects"] == ranking.subjects
    assert from_cli["ranking"]["values"] == ranking.values.tolist()
    assert [p["subject"] for p in from_cli["picks"]] == [p["subject"] for p in picks]
    assert from_cli["sample"]["subjects"] == sample.subjects
    assert from_cli["coefficients"] == r.coefficients
    code = (f'df <- read.csv("{DEMO}")\n'
            'p <- panel_from_frame(df, "patient", "years", "egfr")\n'
            'r <- panel_residuals(p, residuals_polynomial(1))\n'
            'k <- rank_subjects(p, r$residuals, "median")\n'
            's <- sample_subjects(p, 8, seed = 4, strategy = "spread", ranking = k)\n'
            'cat(jsonlite::toJSON(list(subjects = k$subjects, values = k$values, '
            'sample = s$subjects, coefficients = r$coefficients), digits = NA))')
    from_r = json.loads(rscript(code, tmp_path))
    assert from_r["subjects"] == ranking.subjects
    same(from_r["values"], ranking.values.tolist(), rel=R_REL_TOL)
    assert from_r["sample"] == sample.subjects
    same(from_r["coefficients"], r.coefficients, rel=R_REL_TOL)


def test_correlation_structure_three_fronts(tmp_path):
    # Residuals from a degree-1 polynomial on the demo data; the binned correlation on a
    # schedule, the variogram and its exponential fit: CLI = Python exactly, R within 1e-12.
    base = ["--subject", "patient", "--time", "years", "--response", "egfr"]
    grid = ["--schedule", "0,1,2,3,4,5,6", "--tolerance", "0.25"]
    c_cli = json.loads(cli("correlation", DEMO, *base, *grid))["correlation"]
    v_cli = json.loads(cli("variogram", DEMO, *base, "--max-lag", "6", "--lag-bins", "12"))
    df = pd.read_csv(DEMO)
    panel = tw.Panel.from_frame(df, "patient", "years", "egfr")
    r = tw.residuals(panel, tw.Polynomial(1))
    c_py = tw.binned_correlation(panel, r, schedule=range(7), tolerance=0.25)
    vg = tw.variogram(panel, r, max_lag=6, lag_bins=12)
    with pytest.warns(UserWarning):
        fit = tw.fit_variogram(vg)
    assert c_cli == c_py.to_dict()
    assert v_cli["variogram"] == vg.to_dict()
    assert v_cli["fit"] == fit.to_dict()
    code = (f'df <- read.csv("{DEMO}")\n'
            'p <- panel_from_frame(df, "patient", "years", "egfr")\n'
            'r <- panel_residuals(p, residuals_polynomial(1))$residuals\n'
            'c <- binned_correlation(p, r, schedule = 0:6, tolerance = 0.25)\n'
            'v <- variogram(p, r, max_lag = 6, lag_bins = 12)\n'
            'f <- suppressWarnings(fit_variogram(v))\n'
            'cat(jsonlite::toJSON(list(correlation = as.vector(t(c$correlation)), '
            'counts = as.vector(t(c$counts)), classical = v$bins$classical, pairs = v$bins$pairs, '
            'process_variance = v$process_variance, range = f$range, '
            'error_variance = f$error_variance, intercept_variance = f$intercept_variance), '
            'digits = NA, na = "null", auto_unbox = TRUE))')
    from_r = json.loads(rscript(code, tmp_path))
    same(from_r["correlation"], c_py.correlation, rel=R_REL_TOL)
    assert from_r["counts"] == c_py.counts
    same(from_r["classical"], vg.classical, rel=R_REL_TOL)
    assert from_r["pairs"] == vg.pairs
    same(from_r["process_variance"], vg.process_variance, rel=R_REL_TOL)
    for k in ["range", "error_variance", "intercept_variance"]:
        same(from_r[k], fit.to_dict()[k], rel=1e-9)


def test_variogram_random_slope_three_fronts(tmp_path):
    # The random-slope fit and the comparison of the two fits on the demo data: CLI = Python
    # exactly (the same serde JSON), R's numbers within 1e-9 and its words identical.
    base = ["--subject", "patient", "--time", "years", "--response", "egfr"]
    v_cli = json.loads(cli("variogram", DEMO, *base, "--max-lag", "6", "--lag-bins", "12",
                           "--random-slope", "--compare"))
    df = pd.read_csv(DEMO)
    panel = tw.Panel.from_frame(df, "patient", "years", "egfr")
    r = tw.residuals(panel, tw.Polynomial(1))
    vg = tw.variogram(panel, r, max_lag=6, lag_bins=12)
    fit = tw.fit_variogram(vg, random_slope=True)
    comparison = tw.compare_variogram_fits(vg)
    assert v_cli["variogram"] == vg.to_dict()
    assert v_cli["fit"] == fit.to_dict()
    assert v_cli["comparison"] == comparison.to_dict()
    code = (f'df <- read.csv("{DEMO}")\n'
            'p <- panel_from_frame(df, "patient", "years", "egfr")\n'
            'r <- panel_residuals(p, residuals_polynomial(1))$residuals\n'
            'v <- variogram(p, r, max_lag = 6, lag_bins = 12)\n'
            'f <- fit_variogram(v, random_slope = TRUE)\n'
            'c <- compare_variogram_fits(v)\n'
            'cat(jsonlite::toJSON(list(time_mean = v$time_mean, time_variance = v$time_variance, '
            'error_variance = f$error_variance, serial_variance = f$serial_variance, '
            'range = f$range, slope_variance = f$slope_variance, '
            'intercept_variance = f$intercept_variance, intercept_time = f$intercept_time, '
            'criterion = f$criterion, curve_variogram = f$curve$variogram, flagged = f$flagged, '
            'flags = I(f$flags), at_boundary = I(f$at_boundary), reading = f$reading, '
            'curve_correlation_kind = f$curve_correlation_kind, '
            'stationary_flags = I(c$stationary$flags), stationary_reading = c$stationary$reading, '
            'criterion_reduction = c$criterion_reduction, preferred = c$preferred, '
            'reason = c$reason), digits = NA, na = "null", auto_unbox = TRUE))')
    from_r = json.loads(rscript(code, tmp_path))
    same(from_r["time_mean"], vg.time_mean, rel=R_REL_TOL)
    same(from_r["time_variance"], vg.time_variance, rel=R_REL_TOL)
    for k in ["error_variance", "serial_variance", "range", "slope_variance",
              "intercept_variance", "intercept_time", "criterion"]:
        same(from_r[k], fit.to_dict()[k], rel=1e-9)
    same(from_r["curve_variogram"], fit.curve_variogram, rel=1e-9)
    same(from_r["criterion_reduction"], comparison.criterion_reduction, rel=1e-9)
    for k in ["flagged", "flags", "at_boundary", "reading", "curve_correlation_kind"]:
        assert from_r[k] == fit.to_dict()[k], k
    assert from_r["stationary_flags"] == comparison.stationary.flags
    assert from_r["stationary_reading"] == comparison.stationary.reading
    assert (from_r["preferred"], from_r["reason"]) == (comparison.preferred, comparison.reason)


DEMO_SOURCE = "the bundled demo data (simulated; no real patient)"


def test_report_same_file_from_three_fronts(tmp_path):
    # `trajweave report` with no FILE reports the bundled demo data; Python and R given the
    # same data, names, units and source write byte-identical HTML and JSON.
    cli("report", "--out", tmp_path / "cli.html", "--quiet", "--set", "bootstrap_reps=50")
    df = pd.read_csv(DEMO)
    p = tw.Panel.from_frame(df, "patient", "years", "egfr", DEMO_COVARIATES)
    tw.report(p, tmp_path / "py.html", time_unit="years", response_unit="mL/min/1.73 m2",
              source=DEMO_SOURCE, bootstrap_reps=50)
    rscript(f'df <- read.csv("{DEMO}")\n'
            'p <- panel_from_frame(df, "patient", "years", "egfr", '
            'c("age", "female", "diabetes", "acr"))\n'
            f'report(p, "{tmp_path / "r.html"}", bootstrap_reps = 50, time_unit = "years", '
            f'response_unit = "mL/min/1.73 m2", source = "{DEMO_SOURCE}")\n', tmp_path)
    for ext in ("html", "json"):
        a = (tmp_path / f"cli.{ext}").read_bytes()
        assert a == (tmp_path / f"py.{ext}").read_bytes(), ext
        assert a == (tmp_path / f"r.{ext}").read_bytes(), ext


def test_report_chickweight_three_fronts(tmp_path):
    # ChickWeight (base R datasets) written by R, reported by the CLI, Python and R alike.
    csv = tmp_path / "chickweight.csv"
    rscript(f'd <- as.data.frame(datasets::ChickWeight); d$Chick <- as.integer(as.character(d$Chick))\n'
            f'd$Diet <- as.integer(d$Diet)\nwrite.csv(d, "{csv}", row.names = FALSE)\n', tmp_path)
    cli("report", csv, "--subject", "Chick", "--time", "Time", "--response", "weight",
        "--covariate", "Diet", "--time-unit", "days", "--response-unit", "g",
        "--set", "bootstrap_reps=30", "--out", tmp_path / "cli.html", "--quiet")
    df = pd.read_csv(csv)
    p = tw.Panel.from_frame(df, "Chick", "Time", "weight", ["Diet"])
    tw.report(p, tmp_path / "py.html", time_unit="days", response_unit="g",
              source="chickweight.csv", bootstrap_reps=30)
    rscript(f'df <- read.csv("{csv}")\n'
            'p <- panel_from_frame(df, "Chick", "Time", "weight", "Diet")\n'
            f'report(p, "{tmp_path / "r.html"}", bootstrap_reps = 30, time_unit = "days", '
            'response_unit = "g", source = "chickweight.csv")\n', tmp_path)
    html = (tmp_path / "cli.html").read_bytes()
    assert html == (tmp_path / "py.html").read_bytes() == (tmp_path / "r.html").read_bytes()
    numbers = json.loads((tmp_path / "cli.json").read_text())
    assert numbers["sections"]["overview"]["subjects"] == 50
    assert numbers["sections"]["overview"]["observations"] == 578


def test_screening_three_fronts(tmp_path):
    # Covariance screening of degree-1 polynomial residuals of the demo data, a subset of
    # candidates: CLI = Python exactly, R within 1e-12 (log-likelihoods) and 1e-9 (parameters).
    cands = ["independence", "exchangeable", "exponential", "intercept_exponential_error"]
    from_cli = json.loads(cli("screen", DEMO, "--subject", "patient", "--time", "years",
                              "--response", "egfr", "--candidates", ",".join(cands)))["screening"]
    df = pd.read_csv(DEMO)
    panel = tw.Panel.from_frame(df, "patient", "years", "egfr")
    r = tw.residuals(panel, tw.Polynomial(1))
    s = tw.screen_structures(panel, r, candidates=cands)
    assert from_cli == s.to_dict()
    code = (f'df <- read.csv("{DEMO}")\n'
            'p <- panel_from_frame(df, "patient", "years", "egfr")\n'
            'r <- panel_residuals(p, residuals_polynomial(1))$residuals\n'
            f's <- screen_structures(p, r, candidates = c({", ".join(repr(c) for c in cands)}))\n'
            'cat(jsonlite::toJSON(list(structure = s$fits$structure, loglik = s$fits$loglik, '
            'parameters = unname(lapply(s$parameters, function(v) I(unname(v))))), digits = NA, auto_unbox = TRUE))')
    from_r = json.loads(rscript(code, tmp_path))
    assert from_r["structure"] == [f["structure"] for f in s.fits]
    same(from_r["loglik"], [f["loglik"] for f in s.fits], rel=R_REL_TOL)
    same(from_r["parameters"], [f["parameters"] for f in s.fits], rel=1e-9)


CHANGE_SMOOTHERS = [
    ("lowess", [], "smoother_lowess()", tw.Lowess()),
    ("kernel", ["--bandwidth", "0.5", "--shape", "box"], 'smoother_kernel(bandwidth = 0.5, shape = "box")',
     tw.Kernel(bandwidth=0.5, shape="box")),
    ("spline", [], "smoother_spline()", tw.Spline()),
]
CHANGE_NUMBERS = ["estimate", "lower", "upper", "from", "to", "ols_slope", "ols_lower", "ols_upper",
                  "level", "reps", "seed", "failed", "central"]


@pytest.mark.parametrize("family, flags, r_spec, py_spec", CHANGE_SMOOTHERS, ids=[s[0] for s in CHANGE_SMOOTHERS])
def test_average_change_three_fronts(tmp_path, family, flags, r_spec, py_spec):
    from_cli = json.loads(cli("change", DEMO, "--subject", "patient", "--time", "years", "--response", "egfr",
                              "--method", family, *flags, "--central", "0.8", "--reps", "30", "--seed", "5",
                              "--format", "json"))
    df = pd.read_csv(DEMO)
    panel = tw.Panel.from_frame(df, "patient", "years", "egfr")
    from_py = tw.average_change(panel, py_spec, central=0.8, reps=30, seed=5)
    assert from_cli == from_py.to_dict()  # exact: the same core, the same serde JSON
    code = (f'df <- read.csv("{DEMO}")\n'
            'p <- panel_from_frame(df, "patient", "years", "egfr")\n'
            f'c <- average_change(p, {r_spec}, central = 0.8, reps = 30, seed = 5)\n'
            f'cat(jsonlite::toJSON(c[c({", ".join(repr(k) for k in CHANGE_NUMBERS)}, "method")], '
            'digits = NA, auto_unbox = TRUE))')
    from_r = json.loads(rscript(code, tmp_path))
    for k in CHANGE_NUMBERS:
        same(from_cli[k], from_r[k], path=k, rel=R_REL_TOL)
    assert from_r["method"] == from_cli["method"]


def test_binary_warning_three_fronts(tmp_path):
    # A 0/1 response (eGFR < 30) with robustness iterations asked for: the same curve and the
    # same warning from the CLI (stderr and JSON), Python (UserWarning) and R (warning()).
    csv = tmp_path / "low.csv"
    df = pd.read_csv(DEMO)
    df.assign(low=(df.egfr < 30).astype(int))[["patient", "years", "low"]].to_csv(csv, index=False)
    out = subprocess.run([CLI, "smooth", str(csv), "--subject", "patient", "--time", "years", "--response", "low",
                          "--iterations", "3", "--at", "1,4,7", "--format", "json"], capture_output=True, text=True)
    assert out.returncode == 0, out.stderr
    from_cli = json.loads(out.stdout)
    (warning,) = from_cli["curve"]["warnings"]
    assert out.stderr.strip() == f"warning: {warning}"
    panel = tw.Panel.from_frame(pd.read_csv(csv), "patient", "years", "low")
    with pytest.warns(UserWarning) as caught:
        m = tw.mean_curve(panel, tw.Lowess(iterations=3), at=[1, 4, 7])
    assert [str(w.message) for w in caught] == [warning]
    assert from_cli["fitted"] == m.fitted.tolist()
    code = (f'df <- read.csv("{csv}")\n'
            'p <- panel_from_frame(df, "patient", "years", "low")\n'
            'w <- NULL\n'
            'm <- withCallingHandlers(mean_curve(p, smoother_lowess(iterations = 3), at = c(1, 4, 7)),\n'
            '  warning = function(e) { w <<- conditionMessage(e); invokeRestart("muffleWarning") })\n'
            'cat(jsonlite::toJSON(list(w = w, fitted = m$fitted, default = mean_curve(p, smoother_lowess(), '
            'at = c(1, 4, 7))$fitted), digits = NA, auto_unbox = TRUE))')
    from_r = json.loads(rscript(code, tmp_path))
    assert from_r["w"] == warning
    same(from_r["fitted"], from_cli["fitted"], rel=R_REL_TOL)
    default = tw.mean_curve(panel, tw.Lowess(), at=[1, 4, 7]).fitted.tolist()
    same(from_r["default"], default, rel=R_REL_TOL)
    assert min(default) > 0  # the unset default runs no robustness iterations on 0/1 data


def test_random_slope_screening_flags_and_implied_correlation_three_fronts(tmp_path):
    # The random-slope structures beside intercept + exponential + error (flagged on these
    # residuals: its intercept variance at 0), with each fit's boundary flags and the implied
    # correlation from time 2: CLI = Python exactly, R within 1e-12 (log-likelihoods,
    # correlations) and 1e-9 (parameters); flags and words identical.
    cands = ["intercept_exponential_error", "intercept_slope_error",
             "intercept_slope_exponential_error"]
    lags = [0.0, 0.5, 1.0, 3.0]
    out = json.loads(cli("screen", DEMO, "--subject", "patient", "--time", "years",
                         "--response", "egfr", "--candidates", ",".join(cands),
                         "--correlation-lags", ",".join(map(str, lags)),
                         "--correlation-time", "2"))
    from_cli = out["screening"]
    df = pd.read_csv(DEMO)
    panel = tw.Panel.from_frame(df, "patient", "years", "egfr")
    r = tw.residuals(panel, tw.Polynomial(1))
    s = tw.screen_structures(panel, r, candidates=cands)
    assert from_cli == s.to_dict()
    assert any(f["flagged"] for f in s.fits)
    implied = [{"structure": f["structure"], "time": 2.0, "lags": lags,
                "correlation": tw.implied_correlation(f["structure"], f["parameters"], 2.0,
                                                      lags).tolist()}
               for f in s.fits]
    assert out["implied_correlation"] == implied
    code = (f'df <- read.csv("{DEMO}")\n'
            'p <- panel_from_frame(df, "patient", "years", "egfr")\n'
            'r <- panel_residuals(p, residuals_polynomial(1))$residuals\n'
            f's <- screen_structures(p, r, candidates = c({", ".join(repr(c) for c in cands)}))\n'
            'implied <- lapply(s$fits$structure, function(n) I(implied_correlation(n, '
            f's$parameters[[n]], time = 2, lags = c({", ".join(map(str, lags))}))))\n'
            'cat(jsonlite::toJSON(list(structure = s$fits$structure, loglik = s$fits$loglik, '
            'flagged = s$fits$flagged, time_origin = s$time_origin, '
            'parameters = unname(lapply(s$parameters, function(v) I(unname(v)))), '
            'at_boundary = unname(lapply(s$at_boundary, function(v) I(unname(v)))), '
            'flags = unname(lapply(s$flags, I)), implied = implied), '
            'digits = NA, auto_unbox = TRUE))')
    from_r = json.loads(rscript(code, tmp_path))
    assert from_r["structure"] == [f["structure"] for f in s.fits]
    same(from_r["loglik"], [f["loglik"] for f in s.fits], rel=R_REL_TOL)
    same(from_r["parameters"], [f["parameters"] for f in s.fits], rel=1e-9)
    assert from_r["flagged"] == [f["flagged"] for f in s.fits]
    assert from_r["at_boundary"] == [f["at_boundary"] for f in s.fits]
    assert from_r["flags"] == [f["flags"] for f in s.fits]
    assert from_r["time_origin"] == s.time_origin == 0
    same(from_r["implied"], [i["correlation"] for i in implied], rel=R_REL_TOL)
