"""Individual variation: residuals from a mean model, subjects ranked by a summary of their
residuals, the subjects at chosen quantiles, reproducible samples and unusual subjects.

Per-row values (residuals, fitted values) are in your row order, NaN in dropped rows.

>>> import trajweave as tw
>>> p = tw.Panel.from_frame(tw.simulate(subjects=40, seed=3), "patient", "years", "egfr")
>>> r = tw.residuals(p, tw.Polynomial(1))
>>> ranking = tw.rank_subjects(p, r, "median")
>>> [pick["rank"] for pick in tw.pick_subjects(p, r, ranking, [0.0, 0.5, 1.0])]
[1, 21, 40]
"""

import json

import numpy as np

from . import _trajweave
from ._record import Record
from .panel import _floats
from .smoothers import Curve
from .trend import MeanCurve


class Polynomial:
    """A least-squares polynomial in time of degree 0 to 3, as a mean model."""

    def __init__(self, degree=1):
        self.degree = degree


class ByGroup:
    """One smooth per level of a categorical covariate, as a mean model."""

    def __init__(self, covariate, smoother):
        self.covariate, self.smoother = covariate, smoother


def _mean(mean):
    if isinstance(mean, MeanCurve):
        mean = mean.curve
    if isinstance(mean, Curve):
        return ("curve", mean.x, mean.fitted)
    if isinstance(mean, Polynomial):
        return ("polynomial", int(mean.degree))
    if isinstance(mean, ByGroup):
        return ("by_group", str(mean.covariate), mean.smoother.family, mean.smoother._pairs())
    from .errors import InvalidOptionError

    raise InvalidOptionError(
        f"`mean` = {type(mean).__name__} is not allowed: give a Curve or MeanCurve, "
        "tw.Polynomial(degree) or tw.ByGroup(covariate, smoother)")


class Residuals(np.ndarray):
    """Residuals in your row order (a numpy array), with ``fitted`` (computed on first use),
    ``model``, ``coefficients`` (polynomial, original time scale, intercept first) and
    ``groups``."""

    def __array_finalize__(self, obj):
        # Slices and arithmetic make plain per-row arrays: only the result of residuals()
        # itself carries the native panel-order copies.
        for name in ("model", "coefficients", "groups"):
            setattr(self, name, getattr(obj, name, None))
        self._native = None
        self._panel = None
        self._fitted_native = None
        self._fitted = None

    @property
    def fitted(self):
        """Fitted values of the mean model, in your row order."""
        if self._fitted is None and self._fitted_native is not None:
            self._fitted = _trajweave.input_order(self._panel._native, self._fitted_native)
        return self._fitted


def residuals(panel, mean):
    """Response minus the mean model's fit, one value per input row.

    ``mean``: a :class:`~trajweave.Curve` or :class:`~trajweave.MeanCurve`, ``Polynomial(d)``
    or ``ByGroup(covariate, smoother)``.
    """
    values, meta, native, fitted = _trajweave.panel_residuals(panel._native, _mean(mean))
    out = values.view(Residuals)
    out._native, out._panel, out._fitted_native = native, panel, fitted
    meta = json.loads(meta)
    out.model = meta["model"]
    out.coefficients, out.groups = meta["coefficients"], meta["groups"]
    return out


def _values(panel, values, name):
    """The native panel-order copy when ``values`` came from residuals() on this panel and is
    unchanged, else the array in the caller's row order."""
    if isinstance(values, Residuals) and values._native is not None and values._panel is panel:
        return values._native
    return _floats(name, values)


class Ranking:
    """Subjects ranked by a summary: ``summary`` (dict), ``subjects`` (smallest summary
    first), ``values``, ``ranks`` (1-based), ``observations`` (numpy arrays), ``unranked``."""

    def __init__(self, native):
        self._native = native
        self._cache = {}
        self.summary = json.loads(native.summary_json())

    def _get(self, name):
        # Built on first use: a list of a million ids costs more than the ranking's fields.
        if name not in self._cache:
            self._cache[name] = getattr(self._native, name)
        return self._cache[name]

    subjects = property(lambda self: self._get("subjects"), doc="Ranked subjects, smallest first.")
    values = property(lambda self: self._get("values"), doc="Each ranked subject's summary.")
    ranks = property(lambda self: self._get("ranks"), doc="Ranks, 1-based.")
    observations = property(lambda self: self._get("observations"), doc="Observations per subject.")
    unranked = property(lambda self: self._get("unranked"), doc="Subjects without a defined summary.")

    def to_dict(self):
        """Every field as plain Python values."""
        return {"summary": self.summary, "subjects": list(self.subjects), "values": self.values.tolist(),
                "ranks": self.ranks.tolist(), "observations": self.observations.tolist(),
                "unranked": list(self.unranked)}

    def __repr__(self):
        return f"Ranking({self.summary['kind']}, {len(self.subjects)} subjects)"


def rank_subjects(panel, residuals, summary="median", p=None):
    """Ranks subjects by a summary of their residuals: "median", "mean", "quantile" (with
    ``p``), "rms", "max_abs" or "slope"."""
    native = _trajweave.panel_rank_subjects(panel._native, _values(panel, residuals, "residuals"), summary,
                                            None if p is None else float(p))
    return Ranking(native)


def pick_subjects(panel, residuals, ranking, quantiles):
    """The subject at each quantile of the ranking, with its time, response and residual."""
    return json.loads(_trajweave.panel_pick_subjects(panel._native, _values(panel, residuals, "residuals"),
                                                     ranking._native, [float(q) for q in quantiles]))


def sample_subjects(panel, k, seed=1, strategy="random", ranking=None):
    """``k`` subjects drawn by the seeded generator: "random", or "spread" (covering the range
    of the ranking's summary and of follow-up)."""
    return Record(json.loads(_trajweave.panel_sample_subjects(
        panel._native, int(k), int(seed), strategy, None if ranking is None else ranking._native)))


def unusual(panel, residuals, ranking, subject_threshold=3.5, observation_threshold=3.5):
    """Subjects whose summary is beyond a robust z threshold, and observations whose
    standardised residual is."""
    return Record(json.loads(_trajweave.panel_unusual(
        panel._native, _values(panel, residuals, "residuals"), ranking._native,
        float(subject_threshold), float(observation_threshold))))
