"""Covariate effects and dropout: equal-count bands, trends per band, curves per group and
per dropout cohort, and the trajectory grid for a heat map of many subjects.

>>> import trajweave as tw
>>> p = tw.Panel.from_frame(tw.simulate(subjects=120, seed=3), "patient", "years", "egfr", ["acr"])
>>> b = tw.covariate_bands(p, "acr", number=3, overlap=0.25)
>>> b.counted, len(b.bands)
('subjects', 3)
>>> t = tw.conditional_trends(p, "acr", b, tw.Kernel(bandwidth=1.0))
>>> len(t.trends)
3
"""

import json

from . import _trajweave
from ._record import Record
from .individuals import _values
from .panel import _floats


def _grid(edges, schedule, tolerance):
    return dict(edges=None if edges is None else [float(e) for e in edges],
                schedule=None if schedule is None else [float(s) for s in schedule],
                tolerance=None if tolerance is None else float(tolerance))


def equal_count_bands(values, number=6, overlap=0.5):
    """Overlapping intervals holding about equal numbers of the values."""
    return Record(json.loads(_trajweave.values_equal_count_bands(_floats("values", values), int(number),
                                                                 float(overlap))))


def covariate_bands(panel, covariate, number=6, overlap=0.5):
    """Equal-count bands of a covariate, counting subjects when it is time-fixed."""
    return Record(json.loads(_trajweave.panel_covariate_bands(panel._native, covariate, int(number),
                                                              float(overlap))))


def conditional_trends(panel, by, bands, smoother, at=None):
    """A smooth per band of covariate ``by`` on a common grid, with each band's least-squares
    slope of response on time and its cluster-robust standard error."""
    parts = [(b["lower"], b["upper"], b["count"]) for b in bands.bands]
    return Record(json.loads(_trajweave.panel_conditional_trends(
        panel._native, by, parts, bands.number, bands.overlap, bands.counted,
        smoother.family, smoother._pairs(), None if at is None else _floats("at", at))))


def group_curves(panel, covariate, smoother, at=None):
    """A mean curve per level of a categorical covariate."""
    return Record(json.loads(_trajweave.panel_group_curves(
        panel._native, covariate, smoother.family, smoother._pairs(),
        None if at is None else _floats("at", at))))


def dropout_curves(panel, smoother, edges=None, schedule=None, tolerance=None, at=None):
    """A mean curve per dropout cohort: subjects grouped by the bin of their last visit."""
    return Record(json.loads(_trajweave.panel_dropout_curves(
        panel._native, smoother.family, smoother._pairs(), at=None if at is None else _floats("at", at),
        **_grid(edges, schedule, tolerance))))


class TrajectoryGrid:
    """``bins`` (labels), ``subjects`` (row order), ``order_values``, and ``values`` / ``counts``
    as subjects x bins numpy arrays (NaN where a subject has no visit in a bin)."""

    def __init__(self, bins, subjects, order_values, values, counts):
        self.bins, self.subjects, self.order_values = bins, subjects, order_values
        shape = (len(subjects), len(bins))
        self.values, self.counts = values.reshape(shape), counts.reshape(shape)


def trajectory_grid(panel, values, order_by, edges=None, schedule=None, tolerance=None):
    """Subjects x time bins of the mean of ``values`` (per row, your row order), rows ordered
    by ``order_by`` (one value per subject, in ``panel.subject_ids`` order)."""
    return TrajectoryGrid(*_trajweave.panel_trajectory_grid(
        panel._native, _values(panel, values, "values"), _floats("order_by", order_by),
        **_grid(edges, schedule, tolerance)))
