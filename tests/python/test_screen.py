"""The random-slope covariance structures, boundary flags and implied correlations through the
Python binding, checked live against scipy (multivariate normal density), statsmodels
(MixedLM by ML) and numpy, and closed forms."""

import numpy as np
import pytest
import statsmodels.api as sm
from scipy import stats

import trajweave as tw

SLOPE_STRUCTURES = ["intercept_slope_error", "intercept_slope_exponential_error"]


def slope_panel(subjects=150, seed=3):
    """Random intercept and slope (G at time 0), exponential serial process and error, at
    irregular times; rows shuffled so the binding must restore the order."""
    rng = np.random.default_rng(seed)
    g = np.array([[4.0, 0.3], [0.3, 0.25]])
    ids, t, r = [], [], []
    for i in range(subjects):
        n = int(rng.integers(2, 10))
        times = np.cumsum(rng.uniform(0.2, 1.4, n))
        z = np.column_stack([np.ones(n), times])
        v = z @ g @ z.T + 1.5 * np.exp(-np.abs(times[:, None] - times[None, :]) / 1.0) + np.eye(n)
        ids += [i] * n
        t += list(times)
        r += list(rng.multivariate_normal(np.zeros(n), v))
    perm = rng.permutation(len(ids))
    return np.array(ids)[perm], np.array(t)[perm], np.array(r)[perm]


def covariance(name, p, t):
    """The structure's covariance among visits at times t (numpy)."""
    c = p[2] * np.sqrt(p[0] * p[1])
    z = np.column_stack([np.ones(len(t)), t])
    v = z @ np.array([[p[0], c], [c, p[1]]]) @ z.T
    if name == "intercept_slope_error":
        return v + p[3] * np.eye(len(t))
    return v + p[3] * np.exp(-np.abs(t[:, None] - t[None, :]) / p[4]) + p[5] * np.eye(len(t))


PARAMETERS = {
    "intercept_slope_error": [3.0, 0.2, -0.25, 1.7],
    "intercept_slope_exponential_error": [3.0, 0.2, 0.3, 1.2, 0.8, 0.9],
}


@pytest.mark.parametrize("name", SLOPE_STRUCTURES)
def test_structure_loglik_vs_scipy_logpdf(name):
    # scipy.stats.multivariate_normal.logpdf summed over subjects, at fixed parameters.
    ids, t, r = slope_panel()
    p = tw.Panel(ids, t, r)
    params = PARAMETERS[name]
    expected = sum(
        stats.multivariate_normal(np.zeros((ids == s).sum()), covariance(name, params, t[ids == s]))
        .logpdf(r[ids == s])
        for s in np.unique(ids)
    )
    assert abs(tw.structure_loglik(p, r, name, params) - expected) < 1e-9 * abs(expected)


def test_intercept_slope_error_matches_statsmodels_mixedlm():
    # statsmodels MixedLM, ML, no fixed effects, random intercept and slope (exog_re = [1, t]):
    # its maximised llf, cov_re (G at time 0) and scale (error variance).
    ids, t, r = slope_panel(seed=5)
    fit = sm.MixedLM(r, np.zeros((len(r), 0)), groups=ids,
                     exog_re=np.column_stack([np.ones(len(r)), t])).fit(
        reml=False, method=["bfgs"], maxiter=20000, gtol=1e-10)
    g = np.asarray(fit.cov_re)
    want = [g[0, 0], g[1, 1], g[0, 1] / np.sqrt(g[0, 0] * g[1, 1]), fit.scale]
    s = tw.screen_structures(tw.Panel(ids, t, r), r, candidates=["intercept_slope_error"])
    got = s.fits[0]
    assert abs(got["loglik"] - fit.llf) <= 1e-6 * abs(fit.llf)
    np.testing.assert_allclose(got["parameters"], want, rtol=1e-3)
    assert got["at_boundary"] == [False] * 4 and got["flags"] == [] and not got["flagged"]


def test_every_fit_carries_flags_and_the_time_origin():
    ids, t, r = slope_panel(subjects=80)
    s = tw.screen_structures(tw.Panel(ids, t, r), r)
    names = [f["structure"] for f in s.fits]
    assert set(SLOPE_STRUCTURES) <= set(names) and len(names) == 7  # no grid: 2 skipped
    assert s.time_origin == 0.0
    for f in s.fits:
        assert len(f["at_boundary"]) == len(f["parameters"])
        assert f["flagged"] == (len(f["flags"]) > 0)
        # The maximum is the likelihood at the reported parameters (scipy logpdf checked above).
        assert abs(tw.structure_loglik(tw.Panel(ids, t, r), r, f["structure"], f["parameters"])
                   - f["loglik"]) <= 1e-9 * abs(f["loglik"])


def test_intercept_variance_at_zero_is_flagged():
    # Closed form: residuals centred within each subject (numpy) have subject totals 0, so the
    # exchangeable likelihood falls with nu2 (determinant lemma, Sherman-Morrison): nu2 = 0,
    # tau2 = mean r^2, on the boundary.
    ids, t, r = slope_panel(subjects=60)
    means = {s: r[ids == s].mean() for s in np.unique(ids)}
    c = r - np.array([means[s] for s in ids])
    f = tw.screen_structures(tw.Panel(ids, t, c), c, candidates=["exchangeable"]).fits[0]
    assert f["parameters"][0] == 0.0
    assert abs(f["parameters"][1] - np.mean(c**2)) <= 1e-12 * np.mean(c**2)
    assert f["at_boundary"] == [True, False] and f["flagged"]
    assert f["flags"][0].startswith("intercept_variance is at its lower bound 0")


@pytest.mark.parametrize("name", SLOPE_STRUCTURES + ["exchangeable", "exponential"])
def test_implied_correlation_vs_numpy(name):
    # V_01 / sqrt(V_00 V_11) of the covariance of two separate measurements at t and t + u.
    params = PARAMETERS.get(name, {"exchangeable": [3.0, 1.0], "exponential": [2.0, 1.5]}.get(name))
    lags = [0.0, 0.5, 2.0, -1.0]
    for t0 in (0.0, 3.0):
        want = []
        for u in lags:
            tt = np.array([t0, t0 + u])
            if name == "exchangeable":
                v = params[0] + params[1] * np.eye(2)
            elif name == "exponential":
                v = params[0] * np.exp(-np.abs(tt[:, None] - tt[None, :]) / params[1])
            else:
                v = covariance(name, params, tt)
            want.append(v[0, 1] / np.sqrt(v[0, 0] * v[1, 1]))
        got = tw.implied_correlation(name, params, t0, lags)
        np.testing.assert_allclose(got, want, rtol=0, atol=1e-14)


def test_implied_correlation_bad_input():
    with pytest.raises(tw.InvalidOptionError, match="`structure`"):
        tw.implied_correlation("ar1", [1.0], 0.0, [1.0])
    with pytest.raises(tw.InvalidOptionError, match="`lags`"):
        tw.implied_correlation("exponential", [1.0, 1.0], 0.0, [np.inf])
    with pytest.raises(tw.InvalidOptionError, match="`grid`"):
        tw.implied_correlation("toeplitz", [2.0, 1.0], 0.0, [1.0])
    got = tw.implied_correlation("toeplitz", [2.0, 1.0], 0.0, [1.0, 5.0], schedule=[0, 1], tolerance=0.2)
    assert got[0] == 0.5 and np.isnan(got[1])  # c_1 / c_0; t + 5 in no bin


def test_random_slope_parameter_errors_word_for_word():
    ids, t, r = slope_panel(subjects=10)
    p = tw.Panel(ids, t, r)
    with pytest.raises(tw.InvalidOptionError) as e:
        tw.structure_loglik(p, r, "intercept_slope_error", [1.0, 0.5, 1.5, 1.0])
    assert str(e.value) == ("`parameters` = intercept_slope_correlation = 1.5 is not allowed: "
                            "intercept_slope_correlation must be in [-1, 1]")
    with pytest.raises(tw.InvalidOptionError) as e:
        tw.implied_correlation("intercept_slope_exponential_error", [1.0] * 5, 0.0, [1.0])
    assert str(e.value) == (
        "`parameters` = 5 value(s) is not allowed: intercept_slope_exponential_error takes 6 "
        "parameters: intercept_variance, slope_variance, intercept_slope_correlation, "
        "serial_variance, range, error_variance")
