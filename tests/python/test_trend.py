"""mean_curve and tune_smoother through the Python binding: seeded, and equal to brute-force
recomputation written here with numpy."""

import numpy as np
import pytest

import trajweave as tw


@pytest.fixture(scope="module")
def panel():
    return tw.Panel.from_frame(tw.simulate(subjects=15, seed=21), "patient", "years", "egfr")


def test_loso_equals_brute_force(panel):
    spec = tw.Kernel(bandwidth=0.6)
    t = tw.tune_smoother(panel, spec, [0.6, 1.5])
    off = panel.offsets
    sse = 0.0
    for i in range(panel.n_subjects):
        keep = np.ones(panel.n_observations, bool)
        keep[off[i]:off[i + 1]] = False
        curve = tw.Kernel(bandwidth=0.6).fit(panel.time[keep], panel.response[keep])
        pred = curve.predict(panel.time[~keep])
        sse += np.sum((pred - panel.response[~keep]) ** 2)
    assert t.scores[0] == pytest.approx(sse / panel.n_observations, rel=1e-12)
    assert t.scheme == "leave-one-subject-out" and t.folds == panel.n_subjects
    assert t.best_index == int(np.argmin(t.scores))


def test_band_seeded_and_brackets_fit(panel):
    a = tw.mean_curve(panel, tw.Kernel(bandwidth=1.0), bootstrap=tw.Bootstrap(reps=40, seed=5))
    b = tw.mean_curve(panel, tw.Kernel(bandwidth=1.0), bootstrap=tw.Bootstrap(reps=40, seed=5))
    np.testing.assert_array_equal(a.band.lower, b.band.lower)
    assert np.all(a.band.lower <= a.band.upper)
    np.testing.assert_allclose(a.fitted, a.curve.predict(a.at), rtol=0, atol=0)
    m = tw.mean_curve(panel, tw.Kernel(bandwidth=1.0), at=[0.0, 1.0, 2.0])
    assert m.band is None and list(m.at) == [0.0, 1.0, 2.0]
    with pytest.raises(tw.InvalidOptionError, match="`level` = 1.5 is not allowed"):
        tw.mean_curve(panel, tw.Kernel(), bootstrap=tw.Bootstrap(level=1.5))
    with pytest.raises(tw.InvalidOptionError, match="`reps` = 20.5 is not allowed"):
        tw.mean_curve(panel, tw.Kernel(), bootstrap=tw.Bootstrap(reps=20.5))
