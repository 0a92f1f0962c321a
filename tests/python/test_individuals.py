"""Residuals, rankings, picks, samples and unusual subjects through the Python binding, live
against numpy/pandas computations written here (independent of the core)."""

import numpy as np
import pandas as pd
import pytest

import trajweave as tw


@pytest.fixture(scope="module")
def data():
    df = tw.simulate(subjects=150, seed=8)
    df = df.sample(frac=1.0, random_state=2).reset_index(drop=True)  # rows out of order
    return df, tw.Panel.from_frame(df, "patient", "years", "egfr", ["diabetes"])


@pytest.mark.parametrize("degree", [0, 1, 2, 3])
def test_polynomial_residuals_vs_lstsq(data, degree):
    df, p = data
    r = tw.residuals(p, tw.Polynomial(degree))
    t, y = df["years"].to_numpy(), df["egfr"].to_numpy()
    X = np.vander(t, degree + 1, increasing=True)
    coef, *_ = np.linalg.lstsq(X, y, rcond=None)  # numpy.linalg.lstsq reference
    sd = np.std(y, ddof=1)
    assert np.max(np.abs(np.asarray(r) - (y - X @ coef))) <= 1e-10 * sd
    np.testing.assert_allclose(r.coefficients, coef, rtol=1e-8, atol=1e-10)
    np.testing.assert_allclose(r.fitted, X @ coef, rtol=0, atol=1e-10 * sd)


def test_curve_and_group_residuals(data):
    df, p = data
    m = tw.mean_curve(p, tw.Kernel(bandwidth=1.0))
    r = tw.residuals(p, m)
    want = df["egfr"].to_numpy() - m.curve.predict(df["years"].to_numpy())
    np.testing.assert_allclose(np.asarray(r), want, rtol=0, atol=1e-12)
    g = tw.residuals(p, tw.ByGroup("diabetes", tw.Kernel(bandwidth=1.0)))
    for level in (0.0, 1.0):
        rows = df["diabetes"].to_numpy() == level
        c = tw.Kernel(bandwidth=1.0).fit(df["years"][rows], df["egfr"][rows])
        np.testing.assert_allclose(np.asarray(g)[rows], df["egfr"][rows] - c.predict(df["years"][rows]),
                                   rtol=0, atol=1e-12)


@pytest.mark.parametrize("summary, fn", [
    ("median", lambda s: s.median()), ("mean", lambda s: s.mean()),
    ("rms", lambda s: np.sqrt((s ** 2).mean())), ("max_abs", lambda s: s.abs().max())])
def test_ranking_vs_pandas(data, summary, fn):
    df, p = data
    r = tw.residuals(p, tw.Polynomial(1))
    ranking = tw.rank_subjects(p, r, summary)
    want = pd.Series(np.asarray(r)).groupby(df["patient"]).apply(fn)
    want = want.sort_values(kind="stable")  # ties by id: the index is sorted by id
    assert ranking.subjects == want.index.tolist()
    np.testing.assert_allclose(ranking.values, want.to_numpy(), rtol=1e-12, atol=1e-12)
    assert ranking.ranks.tolist() == list(range(1, len(want) + 1))


def test_picks_rule_and_trajectories(data):
    df, p = data
    r = tw.residuals(p, tw.Polynomial(1))
    ranking = tw.rank_subjects(p, r, "median")
    m = len(ranking.subjects)
    picks = tw.pick_subjects(p, r, ranking, [0.0, 0.1, 0.5, 0.9, 1.0])
    for pick in picks:
        rank = 1 + int(np.floor(pick["quantile"] * (m - 1) + 0.5))  # the documented rule
        assert pick["rank"] == rank and pick["subject"] == ranking.subjects[rank - 1]
        rows = df[df["patient"] == pick["subject"]].sort_values("years")
        np.testing.assert_array_equal(pick["time"], rows["years"].to_numpy())
        np.testing.assert_array_equal(pick["response"], rows["egfr"].to_numpy())


def test_samples_seeded_and_spread(data):
    df, p = data
    r = tw.residuals(p, tw.Polynomial(1))
    ranking = tw.rank_subjects(p, r, "median")
    a = tw.sample_subjects(p, 10, seed=4, strategy="spread", ranking=ranking)
    b = tw.sample_subjects(p, 10, seed=4, strategy="spread", ranking=ranking)
    assert a.subjects == b.subjects and len(set(a.subjects)) == 10
    assert tw.sample_subjects(p, 10, seed=5).subjects != tw.sample_subjects(p, 10, seed=6).subjects
    with pytest.raises(tw.TooFewError):
        tw.sample_subjects(p, 1000, seed=1)
    with pytest.raises(tw.InvalidOptionError):
        tw.sample_subjects(p, 3, strategy="even")


def test_unusual_robust_z(data):
    df, p = data
    r = tw.residuals(p, tw.Polynomial(1))
    ranking = tw.rank_subjects(p, r, "mean")
    u = tw.unusual(p, r, ranking, subject_threshold=2.0)
    v = np.asarray(ranking.values)
    med = np.median(v)
    z = (v - med) / (1.4826 * np.median(np.abs(v - med)))  # Hampel's robust z
    flagged = {s for s, zz in zip(ranking.subjects, z) if abs(zz) > 2.0}
    assert {s["subject"] for s in u.subjects} == flagged
    assert u.center == pytest.approx(med)


def test_residual_length_errors(data):
    _, p = data
    with pytest.raises(tw.LengthMismatchError):
        tw.rank_subjects(p, np.zeros(3))
    with pytest.raises(tw.InvalidOptionError):
        tw.rank_subjects(p, np.zeros(p.n_rows), "quantile")  # needs p
    with pytest.raises(tw.InvalidOptionError, match="`mean` = str is not allowed"):
        tw.residuals(p, "linear")
