"""``describe``: size, visits, follow-up, gaps and visit patterns of a panel."""

import json

from . import _trajweave
from ._record import Record


class Description(Record):
    """The description of a panel.

    Fields (attributes, and keys of ``to_dict()``): ``subjects``, ``observations``,
    ``rows_input``, ``rows_dropped``, ``dropped_by_column`` (``column``, ``rows``), ``time_range``, ``visits_per_subject``, ``follow_up``,
    ``gaps`` (each with ``min``, ``q1``, ``median``, ``q3``, ``max``), ``gap_count``,
    ``single_visit_subjects``, ``duplicated_rows``, ``covariates`` and, with a grid, ``grid``
    (``bins``, ``outside``, ``patterns``, ``per_subject``). ``str()`` gives the readable table
    the command line prints.
    """

    __slots__ = ("_text",)

    def __init__(self, data, text):
        super().__init__(data)
        object.__setattr__(self, "_text", text)

    def __str__(self):
        return self._text


def _floats_or_none(values):
    return None if values is None else [float(v) for v in values]


def describe(panel, edges=None, schedule=None, tolerance=None):
    """Describes a panel, optionally on a time grid.

    Give ``edges`` (bins between consecutive edges) or ``schedule`` with ``tolerance``
    (windows around nominal visit times) to get subjects per bin and each subject's pattern:
    complete, monotone (dropout) or intermittent.

    Examples
    --------
    >>> import trajweave as tw
    >>> p = tw.Panel([1, 1, 1, 2, 2], [0, 1, 2, 0, 1], [9.0, 8.0, 7.0, 9.0, 9.5])
    >>> d = tw.describe(p, schedule=[0, 1, 2], tolerance=0.2)
    >>> d.visits_per_subject.median, d.grid.patterns.monotone
    (2.5, 1)
    """
    text_json, text = _trajweave.describe_panel(
        panel._native,
        edges=_floats_or_none(edges),
        schedule=_floats_or_none(schedule),
        tolerance=None if tolerance is None else float(tolerance),
    )
    return Description(json.loads(text_json), text)
