"""Binned correlation, variogram, process variance and the variogram fit through the Python
binding, checked live against numpy (brute-force enumeration of all pairs), pandas
(DataFrame.corr with min_periods), scipy (normal quantiles, a general-purpose minimiser) and
closed forms."""

import math
import warnings

import numpy as np
import pandas as pd
import pytest
from scipy import optimize, stats

import trajweave as tw


def irregular(subjects=400, seed=11):
    """A generated panel with unequal visit counts (1 to 9) and irregular times."""
    rng = np.random.default_rng(seed)
    ids, t, r = [], [], []
    for i in range(subjects):
        n = int(rng.integers(1, 10))
        times = np.sort(rng.uniform(0, 8, n))
        u = rng.normal(0, 2)
        ids += [i] * n
        t += list(times)
        r += list(u + rng.normal(0, 1, n))
    # Shuffle the rows: the binding must give the same numbers whatever the input order.
    perm = rng.permutation(len(ids))
    return (np.array(ids)[perm], np.array(t)[perm], np.array(r)[perm])


def all_pairs(ids, t, r):
    """Every within-subject pair (u, v, |d|) by brute force (numpy)."""
    us, vs, ds = [], [], []
    for s in np.unique(ids):
        m = ids == s
        ts, rs = t[m], r[m]
        j, k = np.triu_indices(len(ts), 1)
        us.append(np.abs(ts[k] - ts[j]))
        d = rs[k] - rs[j]
        vs.append(0.5 * d * d)
        ds.append(np.abs(d))
    return np.concatenate(us), np.concatenate(vs), np.concatenate(ds)


def brute_bins(u, v, d, edges):
    idx = np.searchsorted(edges, u, side="right") - 1
    idx[u == edges[-1]] = len(edges) - 2
    keep = (u >= edges[0]) & (u <= edges[-1])
    out = []
    for b in range(len(edges) - 1):
        m = keep & (idx == b)
        n = m.sum()
        out.append((n, u[m].mean() if n else math.nan, v[m].mean() if n else math.nan,
                    (np.mean(np.sqrt(d[m])) ** 4 / (0.457 + 0.494 / n) / 2) if n else math.nan))
    return out


def close(a, b, rel=1e-12):
    return abs(a - b) <= rel * max(abs(a), abs(b), 1e-300)


@pytest.mark.parametrize("bins", [dict(lag_bins=12, max_lag=6.0), dict(lag_edges=[0.0, 0.5, 1.3, 2.0, 4.0, 7.5])])
def test_variogram_bins_vs_numpy_enumeration(bins):
    ids, t, r = irregular()
    p = tw.Panel(ids, t, r)
    vg = tw.variogram(p, r, min_pairs=1, **bins)
    u, v, d = all_pairs(ids, t, r)
    edges = np.array(vg.lower + [vg.upper[-1]])
    if "lag_edges" in bins:
        assert edges.tolist() == bins["lag_edges"]
    else:
        assert np.allclose(edges, np.linspace(0, 6.0, 13), rtol=0, atol=1e-15)
    for b, (n, lag, classical, robust) in enumerate(brute_bins(u, v, d, edges)):
        assert vg.pairs[b] == n
        assert close(vg.lag[b], lag) and close(vg.classical[b], classical) and close(vg.robust[b], robust)
    assert vg.pairs_in_bins + vg.pairs_outside == len(u)


def test_equal_count_bins_hold_about_equal_counts():
    ids, t, r = irregular()
    p = tw.Panel(ids, t, r)
    vg = tw.variogram(p, r, lag_kind="equal_count", lag_bins=8, min_pairs=1)
    u, v, d = all_pairs(ids, t, r)
    edges = np.array(vg.lower + [vg.upper[-1]])
    # The counts are exactly those of the reported edges (numpy), and within one fine cell of
    # equal: total / 8 each, give or take the pairs of a 1/4096 slice of the lag range.
    for b, (n, lag, classical, _) in enumerate(brute_bins(u, v, d, edges)):
        assert vg.pairs[b] == n and close(vg.classical[b], classical)
    assert max(vg.pairs) - min(vg.pairs) < 0.05 * len(u)


def test_process_variance_vs_all_between_subject_pairs():
    ids, t, r = irregular(subjects=300)
    p = tw.Panel(ids, t, r)
    vg = tw.variogram(p, r)
    # numpy brute force over every pair of rows from different subjects.
    j, k = np.triu_indices(len(r), 1)
    between = ids[j] != ids[k]
    expected = np.mean(0.5 * (r[j][between] - r[k][between]) ** 2)
    assert close(vg.process_variance, expected)
    assert vg.between_pairs == between.sum()
    assert close(vg.variance, np.var(r, ddof=1))
    assert close(tw.process_variance(p, r), expected)
    # The visit-time moments over the rows of the same pairs (each pair gives both of its
    # times), numpy.
    both = np.concatenate([t[j][between], t[k][between]])
    assert close(vg.time_mean, both.mean(), 1e-10)
    assert close(vg.time_variance, both.var(), 1e-10)


def wide_table(ids, t, r, edges):
    """Subjects x bins with the visit nearest each bin's midpoint (pandas), NaN where none."""
    df = pd.DataFrame(dict(s=ids, t=t, r=r))
    df["bin"] = pd.cut(df.t, edges, right=False, labels=False, include_lowest=True)
    df.loc[df.t == edges[-1], "bin"] = len(edges) - 2
    mid = (np.asarray(edges[:-1]) + np.asarray(edges[1:])) / 2
    df["dist"] = np.abs(df.t - mid[df.bin.astype(int)])
    best = df.sort_values(["s", "bin", "dist", "t"]).groupby(["s", "bin"]).head(1)
    return best.pivot(index="s", columns="bin", values="r").reindex(columns=range(len(edges) - 1))


def test_binned_correlation_vs_pandas_pairwise():
    ids, t, r = irregular(subjects=600, seed=3)
    p = tw.Panel(ids, t, r)
    edges = [0, 1, 2, 3.5, 5, 6.5, 8]
    c = tw.binned_correlation(p, r, edges=edges, min_count=5, level=0.9)
    wide = wide_table(ids, t, r, edges)
    expected = wide.corr(min_periods=5).to_numpy()
    got = c.matrix()
    assert np.array_equal(np.isnan(got), np.isnan(expected))
    assert np.nanmax(np.abs(got - expected)) < 1e-12
    counts = wide.notna().astype(int).T @ wide.notna().astype(int)
    assert np.array_equal(c.matrix("counts"), counts.to_numpy())
    # Fisher (1915) limits, closed form with the normal quantile from scipy.
    n = counts.to_numpy()
    z = stats.norm.ppf(0.95) / np.sqrt(np.where(n > 3, n - 3, np.nan))
    off = ~np.eye(len(edges) - 1, dtype=bool) & (n > 3)
    with np.errstate(divide="ignore"):  # atanh(1) on the diagonal, which is not compared
        zr = np.arctanh(expected)
    assert np.allclose(c.matrix("lower")[off], np.tanh(zr - z)[off], rtol=0, atol=1e-12)
    assert np.allclose(c.matrix("upper")[off], np.tanh(zr + z)[off], rtol=0, atol=1e-12)
    # Lag correlation: the count-weighted mean of the diagonals (numpy).
    for lag, value in zip(c.lags.lag, c.lags.correlation):
        cells = [(a, a + lag) for a in range(len(edges) - 1 - lag) if not np.isnan(expected[a, a + lag])]
        w = np.array([n[a, b] for a, b in cells])
        assert close(value, np.sum(w * np.array([expected[a, b] for a, b in cells])) / w.sum(), 1e-12)
    assert c.visits_used + c.visits_outside + c.visits_unused == len(r)


def test_binned_correlation_on_a_schedule_uses_the_nearest_visit():
    # Subject 1 has two visits in the window of nominal time 1: the one at 1.1 is nearer.
    ids = [1, 1, 1, 2, 2, 3, 3, 4, 4]
    t = [0.0, 0.8, 1.1, 0.0, 1.0, 0.0, 1.0, 0.1, 0.9]
    r = [1.0, 99.0, 2.0, 2.0, 3.0, 3.0, 1.0, 0.0, 0.5]
    c = tw.binned_correlation(tw.Panel(ids, t, r), r, schedule=[0, 1], tolerance=0.3)
    x, y = np.array([1.0, 2.0, 3.0, 0.0]), np.array([2.0, 3.0, 1.0, 0.5])
    assert close(c.matrix()[0, 1], np.corrcoef(x, y)[0, 1])
    assert (c.visits_used, c.visits_unused) == (8, 1)


def cressie(theta, lag, g, n, model):
    tau2, s2, phi = theta
    rho = np.exp(-lag / phi) if model == "exponential" else np.exp(-(lag / phi) ** 2)
    m = tau2 + s2 * (1 - rho)
    return np.sum(n * (g / m - 1) ** 2)


@pytest.mark.parametrize("model", ["exponential", "gaussian"])
def test_fit_variogram_vs_scipy_minimiser(model):
    df = tw.simulate(subjects=800, seed=21, sd_slope=0, age_effect=0, female_effect=0,
                     diabetes_slope=0, acr_slope=0)
    p = tw.Panel.from_frame(df, "patient", "years", "egfr")
    r = df.egfr.to_numpy() - (58.0 - 1.2 * df.years.to_numpy())
    vg = tw.variogram(p, r, max_lag=5.0, lag_bins=15)
    fit = tw.fit_variogram(vg, model=model)
    lag, g, n = vg.column("lag"), vg.column("classical"), vg.column("pairs")
    ok = ~np.isnan(g)
    # scipy's bounded quasi-Newton from our solution's neighbourhood and from a plain start:
    # neither finds a lower criterion than ours by more than round-off.
    for start in ([fit.error_variance * 1.2 + 0.1, fit.serial_variance * 0.8, fit.range * 1.3],
                  [np.nanmin(g) / 2, np.nanmax(g) / 2, 1.0]):
        best = optimize.minimize(cressie, start, args=(lag[ok], g[ok], n[ok], model),
                                 method="L-BFGS-B", bounds=[(0, None), (1e-9, None), (1e-6, 50)])
        assert fit.criterion <= best.fun * (1 + 1e-6) + 1e-9
    assert close(fit.criterion, cressie([fit.error_variance, fit.serial_variance, fit.range],
                                        lag[ok], g[ok], n[ok], model), 1e-10)
    assert close(fit.intercept_variance,
                 max(0.0, vg.process_variance - fit.error_variance - fit.serial_variance), 1e-12)


def cressie_slope(theta, lag, g, n, model):
    tau2, s2, phi, w = theta
    rho = np.exp(-lag / phi) if model == "exponential" else np.exp(-(lag / phi) ** 2)
    m = tau2 + s2 * (1 - rho) + w * lag ** 2 / 2
    return np.sum(n * (g / m - 1) ** 2)


def slope_panel(seed, subjects=800):
    """The simulator with a random slope and no covariate slopes or dropout; residuals about
    the known mean 58 - 1.2 t."""
    df = tw.simulate(subjects=subjects, seed=seed, age_effect=0, female_effect=0, diabetes_slope=0,
                     acr_slope=0, dropout_base=-40, dropout_decline=0, dialysis_threshold=-1e9)
    p = tw.Panel.from_frame(df, "patient", "years", "egfr")
    return p, df.egfr.to_numpy() - (58.0 - 1.2 * df.years.to_numpy())


@pytest.mark.parametrize("model", ["exponential", "gaussian"])
def test_random_slope_fit_vs_scipy_minimiser(model):
    p, r = slope_panel(seed=21)
    vg = tw.variogram(p, r, max_lag=6.0, lag_bins=15)
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # a clean fit raises no warning
        fit = tw.fit_variogram(vg, model=model, random_slope=True)
    assert fit.random_slope and fit.converged
    lag, g, n = vg.column("lag"), vg.column("classical"), vg.column("pairs")
    ok = ~np.isnan(g)
    theta = [fit.error_variance, fit.serial_variance, fit.range, fit.slope_variance]
    # The criterion recomputed with numpy at the returned parameters.
    assert close(fit.criterion, cressie_slope(theta, lag[ok], g[ok], n[ok], model), 1e-10)
    # scipy's bounded quasi-Newton from a perturbed start and a plain one finds no lower value.
    for start in ([theta[0] * 1.2 + 0.1, theta[1] * 0.8, theta[2] * 1.3, theta[3] * 1.5],
                  [np.nanmin(g) / 2, np.nanmax(g) / 4, 1.0, 0.1]):
        best = optimize.minimize(cressie_slope, start, args=(lag[ok], g[ok], n[ok], model),
                                 method="L-BFGS-B",
                                 bounds=[(0, None), (1e-9, None), (1e-6, 60), (0, None)])
        assert fit.criterion <= best.fun * (1 + 1e-6) + 1e-9
    # nu^2 at the weighted mean visit time, closed form (docs/methods-correlation.md).
    nu2 = vg.process_variance - (theta[0] + theta[1] + theta[3] * vg.time_variance)
    assert close(fit.intercept_variance, max(nu2, 0.0), 1e-12)
    assert fit.intercept_time == vg.time_mean
    # Curves: the model in closed form; the correlation is not identified under a slope.
    u = np.array(fit.curve_lag)
    rho = np.exp(-u / fit.range) if model == "exponential" else np.exp(-(u / fit.range) ** 2)
    expected = theta[0] + theta[1] * (1 - rho) + theta[3] * u ** 2 / 2
    assert np.allclose(fit.curve_variogram, expected, rtol=1e-12, atol=0)
    assert fit.curve_correlation == [None] * 101
    assert fit.curve_correlation_kind == "not_identified"
    assert close(fit.relative_misfit, math.sqrt(fit.criterion / n[ok].sum()), 1e-12)


def test_compare_variogram_fits_is_the_two_fits_and_the_rule():
    p, r = slope_panel(seed=5, subjects=3000)
    vg = tw.variogram(p, r, max_lag=6.0)
    c = tw.compare_variogram_fits(vg)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        assert c.stationary.to_dict() == tw.fit_variogram(vg).to_dict()
        assert c.random_slope.to_dict() == tw.fit_variogram(vg, random_slope=True).to_dict()
    # The rule of docs/methods-correlation.md, applied to the returned numbers.
    reduction = 1 - c.random_slope.criterion / c.stationary.criterion
    assert close(c.criterion_reduction, reduction, 1e-15)
    assert c.stationary.criterion >= c.random_slope.criterion
    if not c.random_slope.flagged and reduction >= 0.5:
        assert c.preferred == "random_slope"
    elif not c.stationary.flagged:
        assert c.preferred == "stationary"
    else:
        assert c.preferred == "neither"
    # Simulated slope SD 1.2: omega^2 = 1.44 (within 25%, our tolerance); at 3000 subjects
    # the slope lowers the criterion by well over half (0.48-0.91 over seeds 1-20).
    assert abs(c.random_slope.slope_variance - 1.44) < 0.25 * 1.44
    assert c.preferred == "random_slope"


def test_fit_flags_in_plain_words():
    # The nu^2 case below: the variogram rises past the process variance (2.0).
    vg = dict(lag=[0.5, 1.5, 2.5, 3.5], pairs=[100, 100, 100, 100], classical=[1.0, 2.0, 2.6, 2.9],
              robust=[None] * 4, max_lag=4.0, process_variance=2.0)
    with pytest.warns(UserWarning):
        fit = tw.fit_variogram(vg)
    assert fit.flagged and "intercept_variance" in fit.at_boundary
    assert any(f.startswith("intercept variance nu^2 clamped at 0") for f in fit.flags)
    # A dict without the visit-time moments: the slope fit cannot state nu^2 and says so.
    slope = tw.fit_variogram(vg, random_slope=True)
    assert slope.intercept_variance is None and slope.flagged
    assert any("no visit-time variance" in f for f in slope.flags)


def test_fit_warns_when_the_sill_exceeds_the_process_variance():
    # A variogram whose bins rise above the process variance: nu^2 would be negative.
    vg = dict(lag=[0.5, 1.5, 2.5, 3.5], pairs=[100, 100, 100, 100], classical=[1.0, 2.0, 2.6, 2.9],
              robust=[None] * 4, max_lag=4.0, process_variance=2.0)
    with pytest.warns(UserWarning, match="nu\\^2 is set to 0"):
        fit = tw.fit_variogram(vg)
    assert fit.intercept_variance == 0.0


def test_random_slope_bad_input_messages():
    vg = dict(lag=[0.5, 1.5, 2.5], pairs=[100, 100, 100], classical=[1.0, 2.0, 2.6],
              robust=[None] * 3, max_lag=3.0, process_variance=4.0)
    with pytest.raises(tw.InvalidOptionError) as e:
        tw.fit_variogram(vg, random_slope="yes")
    assert str(e.value) == "`random_slope` = 'yes' is not allowed: True or False"
    # Three bins fit the stationary model but not the four parameters of the slope model.
    message = ("too few lag bins with an estimate for a variogram model fit with a random slope "
               "(4 parameters): need at least 4, found 3")
    with pytest.raises(tw.TooFewError) as e:
        tw.fit_variogram(vg, random_slope=True)
    assert str(e.value) == message
    with pytest.raises(tw.TooFewError) as e:
        tw.compare_variogram_fits(vg)
    assert str(e.value) == message


def test_smoothed_variogram_and_pair_sample():
    ids, t, r = irregular(subjects=200)
    p = tw.Panel(ids, t, r)
    vg = tw.variogram(p, r, sample=500, seed=3, smoother=tw.Kernel(bandwidth=1.0))
    assert len(vg.sample.lag) == 500 and vg.smoothed_pairs == 500
    again = tw.variogram(p, r, sample=500, seed=3)
    assert again.sample == vg.sample
    u, v, _ = all_pairs(ids, t, r)
    # Every sampled pair is a real pair (numpy enumeration): same (u, v) multiset membership.
    real = set(zip(np.round(u, 12), np.round(v, 12)))
    assert all((round(a, 12), round(b, 12)) in real for a, b in zip(vg.sample.lag, vg.sample.half_sq_diff))
    everything = tw.variogram(p, r, sample="all")
    assert len(everything.sample.lag) == everything.pairs_in_bins


@pytest.mark.parametrize("call,kind,argument", [
    (lambda p, r: tw.variogram(p, r[:-1]), tw.LengthMismatchError, "residuals"),
    (lambda p, r: tw.variogram(p, np.where(np.arange(len(r)) == 4, np.nan, r)), tw.NonFiniteError, "residuals"),
    (lambda p, r: tw.variogram(p, r, lag_kind="quantile"), tw.InvalidOptionError, "lag_kind"),
    (lambda p, r: tw.variogram(p, r, sample="many"), tw.InvalidOptionError, "sample"),
    (lambda p, r: tw.variogram(p, r, lag_edges=[0, 1], max_lag=2), tw.InvalidOptionError, "max_lag"),
    (lambda p, r: tw.binned_correlation(p, r, bins=4, edges=[0, 1, 2]), tw.InvalidOptionError, "bins"),
    (lambda p, r: tw.binned_correlation(p, r), tw.InvalidOptionError, "bins"),
    (lambda p, r: tw.binned_correlation(p, r, bins=3, min_count=1), tw.InvalidOptionError, "min_count"),
    (lambda p, r: tw.fit_variogram(tw.variogram(p, r), model="spherical"), tw.InvalidOptionError, "model"),
    (lambda p, r: tw.compare_variogram_fits(tw.variogram(p, r), estimate="median"), tw.InvalidOptionError, "estimate"),
])
def test_bad_input(call, kind, argument):
    ids, t, r = irregular(subjects=50)
    with pytest.raises(kind) as e:
        call(tw.Panel(ids, t, r), r)
    assert argument in str(e.value)


def test_structure_loglik_vs_scipy_logpdf():
    # scipy.stats.multivariate_normal.logpdf summed over subjects, at fixed parameters.
    ids, t, r = irregular(subjects=40, seed=8)
    p = tw.Panel(ids, t, r)
    cases = {
        "independence": ([2.0], lambda d: 2.0 * np.eye(len(d))),
        "exchangeable": ([1.5, 0.7], lambda d: 1.5 + 0.7 * np.eye(len(d))),
        "exponential": ([2.0, 1.3], lambda d: 2.0 * np.exp(-d / 1.3)),
        "gaussian": ([2.0, 0.9], lambda d: 2.0 * np.exp(-(d / 0.9) ** 2)),
        "intercept_exponential_error": ([1.0, 1.5, 2.0, 0.4],
                                        lambda d: 1.0 + 1.5 * np.exp(-d / 2.0) + 0.4 * np.eye(len(d))),
    }
    for name, (params, cov) in cases.items():
        expected = 0.0
        for s in np.unique(ids):
            m = ids == s
            d = np.abs(t[m][:, None] - t[m][None, :])
            expected += stats.multivariate_normal(np.zeros(m.sum()), cov(d)).logpdf(r[m])
        assert abs(tw.structure_loglik(p, r, name, params) - expected) < 1e-9 * abs(expected), name


def test_screening_maxima_are_the_loglik_at_their_parameters():
    df = tw.simulate(subjects=600, seed=5, sd_slope=0, age_effect=0, female_effect=0,
                     diabetes_slope=0, acr_slope=0)
    p = tw.Panel.from_frame(df, "patient", "years", "egfr")
    r = df.egfr.to_numpy() - (58.0 - 1.2 * df.years.to_numpy())
    s = tw.screen_structures(p, r)
    assert s.fits[0]["structure"] == "intercept_exponential_error"
    aics = [f["aic"] for f in s.fits]
    assert aics == sorted(aics) and s.fits[0]["delta_aic"] == 0.0
    for f in s.fits:
        l = tw.structure_loglik(p, r, f["structure"], f["parameters"])
        assert abs(l - f["loglik"]) <= 1e-9 * abs(l)
        # Akaike (1974) and Schwarz (1978) by their definitions, N = observations.
        assert math.isclose(f["aic"], -2 * l + 2 * f["n_parameters"], rel_tol=1e-12)
        assert math.isclose(f["bic"], -2 * l + f["n_parameters"] * math.log(len(r)), rel_tol=1e-12)
    with pytest.raises(tw.InvalidOptionError, match="candidates"):
        tw.screen_structures(p, r, candidates=["ar1"])
    with pytest.raises(tw.InvalidOptionError, match="grid"):
        tw.screen_structures(p, r, candidates=["toeplitz"])
