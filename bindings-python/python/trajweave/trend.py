"""The mean trend of a panel (``mean_curve``), its average change per time unit
(``average_change``) and the choice of smoothing (``tune_smoother``)."""

import json
import warnings

from . import _trajweave
from ._record import Record
from .panel import _floats
from .smoothers import Curve


class Bootstrap:
    """Settings of the subject bootstrap: ``reps`` (10 to 100000, default 200), ``level``
    (default 0.95), ``seed`` (default 1)."""

    def __init__(self, reps=200, level=0.95, seed=1):
        self.reps, self.level, self.seed = reps, level, seed

    def _triple(self):
        return (float(self.reps), float(self.level), float(self.seed))


class MeanCurve:
    """``curve`` (a :class:`Curve` at the distinct times), ``at`` (the grid), ``fitted`` (the
    curve at the grid) and ``band`` (``lower``, ``upper``, ``reps``, ``level``, ``seed``,
    ``failed``) or None."""

    def __init__(self, d):
        self.curve = Curve._from_parts(d["curve"])
        self.at = d["at"]
        self.fitted = d["fitted"]
        self.band = None if d["band"] is None else Record(d["band"])

    def __repr__(self):
        band = "no band" if self.band is None else f"{self.band.level:g} band from {self.band.reps} resamples"
        return f"MeanCurve({self.curve.method}, {len(self.at)} grid points, {band})"


def mean_curve(panel, smoother, at=None, bootstrap=None):
    """The smoother of response on time over all observations; with ``bootstrap`` (a
    :class:`Bootstrap`, or a number of replicates) a pointwise band from resampling subjects.

    >>> import trajweave as tw
    >>> p = tw.Panel.from_frame(tw.simulate(subjects=50, seed=2), "patient", "years", "egfr")
    >>> m = tw.mean_curve(p, tw.Kernel(bandwidth=0.8), bootstrap=tw.Bootstrap(reps=20))
    >>> len(m.at), len(m.band.lower)
    (101, 101)
    """
    if isinstance(bootstrap, (int, float)) and not isinstance(bootstrap, bool):
        bootstrap = Bootstrap(reps=bootstrap)
    d = _trajweave.panel_mean_curve(
        panel._native, smoother.family, smoother._pairs(),
        at=None if at is None else _floats("at", at),
        bootstrap=None if bootstrap is None else bootstrap._triple(),
    )
    return MeanCurve(d)


class Tuning(Record):
    """``family``, ``parameter``, ``candidates``, ``scores`` (mean squared prediction error),
    ``best``, ``best_index`` (0-based), ``folds``, ``scheme``, ``gcv`` (splines) ."""


def tune_smoother(panel, smoother, candidates, parameter=None, folds=None, seed=1):
    """Scores candidate values of one parameter (the family's main one by default: span,
    bandwidth, df) by leave-one-subject-out cross-validation, or ``folds`` folds of subjects.

    >>> import trajweave as tw
    >>> p = tw.Panel.from_frame(tw.simulate(subjects=30, seed=2), "patient", "years", "egfr")
    >>> t = tw.tune_smoother(p, tw.Kernel(), [0.3, 1.0, 3.0], folds=5)
    >>> t.parameter, len(t.scores)
    ('bandwidth', 3)
    """
    return Tuning(json.loads(_trajweave.panel_tune_smoother(
        panel._native, smoother.family, smoother._pairs(), [float(c) for c in candidates],
        parameter=parameter, folds=folds, seed=int(seed))))


class Change(Record):
    """``estimate`` (the mean curve's average slope from ``from`` to ``to``, the central
    ``central`` share of the observation times), ``lower``/``upper`` (its percentile interval at
    ``level`` from ``reps`` subject-bootstrap resamples, ``seed``, ``failed``), ``ols_slope`` with
    ``ols_lower``/``ols_upper`` (least-squares slope of response on time, same resamples),
    ``smoother``, ``settings``, ``method`` (in words) and ``warnings``. ``from`` is a Python
    keyword: read it as ``getattr(c, "from")`` or ``c.to_dict()["from"]``."""

    def __repr__(self):
        d = self._data
        return (f"Change({d['estimate']:.4g} per time unit from {d['from']:.4g} to {d['to']:.4g}, "
                f"{d['level']:g} interval {d['lower']:.4g} to {d['upper']:.4g}; "
                f"least squares {d['ols_slope']:.4g})")


def average_change(panel, smoother, central=0.9, reps=200, level=0.95, seed=1):
    """The average change per time unit of the smoother's mean curve over the central
    ``central`` share of the observation times, (m(to) - m(from)) / (to - from), with a
    percentile interval from resampling subjects, and the least-squares slope beside it.

    >>> import trajweave as tw
    >>> p = tw.Panel.from_frame(tw.simulate(subjects=60, seed=2), "patient", "years", "egfr")
    >>> c = tw.average_change(p, tw.Spline(), reps=20)
    >>> bool(c.lower <= c.estimate <= c.upper), c.reps
    (True, 20)
    """
    c = Change(json.loads(_trajweave.panel_average_change(
        panel._native, smoother.family, smoother._pairs(), central=float(central),
        reps=float(reps), level=float(level), seed=float(seed))))
    for w in c.warnings:
        warnings.warn(w, UserWarning, stacklevel=2)
    return c
