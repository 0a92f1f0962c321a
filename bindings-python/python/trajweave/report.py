"""The exploration report: one self-contained HTML page with figures and a JSON file with
every number shown, from the same renderer as the CLI's ``trajweave report``.

>>> import tempfile, pathlib, trajweave as tw
>>> df = tw.simulate(subjects=150, seed=5)
>>> p = tw.Panel.from_frame(df, "patient", "years", "egfr", ["age", "diabetes"])
>>> out = pathlib.Path(tempfile.mkdtemp()) / "report.html"
>>> numbers = tw.report(p, out, bootstrap_reps=20)
>>> out.exists() and out.with_suffix(".json").exists()
True
"""

import json
from pathlib import Path

from . import _trajweave
from ._record import Record


def _value(v):
    if isinstance(v, (list, tuple)):
        return [float(x) for x in v] if all(not isinstance(x, str) for x in v) else [str(x) for x in v]
    return v if isinstance(v, str) else float(v)


def report(panel, path, time_unit=None, response_unit=None, source=None, columns=None, **options):
    """Writes the report on ``panel`` to ``path`` (HTML) and the numbers beside it (same name,
    ``.json``); returns the numbers as a record.

    ``columns``: (subject, time, response) names for labels, default the panel's (the frame's
    column names when built by ``Panel.from_frame``). ``options``: any report option by name
    (see ``docs/report.md``), e.g. ``bootstrap_reps=100``, ``smoothers=["lowess", "spline"]``,
    ``**{"lowess.span": 0.5}``. The same data, names and options give the same file as the CLI
    and R.
    """
    subject, time, response = columns or panel.columns
    html, numbers = _trajweave.panel_report(
        panel._native, str(subject), str(time), str(response), time_unit=time_unit,
        response_unit=response_unit, source=source,
        options=[(str(k), _value(v)) for k, v in options.items()])
    path = Path(path)
    path.write_text(html, encoding="utf-8")
    path.with_suffix(".json").write_text(numbers, encoding="utf-8")
    return Record(json.loads(numbers))
