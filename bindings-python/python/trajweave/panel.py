"""``Panel``: validated repeated measurements, sorted by subject and time."""

import numbers

import numpy as np

from . import _trajweave
from .errors import InvalidOptionError, InvalidValueError


def _is_missing(x):
    return x is None or (isinstance(x, float) and x != x) or type(x).__name__ in ("NAType", "NaTType")


def _ids(subject):
    """Classify subject ids for the native side (no statistics, only types)."""
    if hasattr(subject, "dtype") and not isinstance(subject.dtype, np.dtype):
        # pandas extension types (category, string, nullable Int64): plain objects, NA kept.
        subject = np.asarray(subject, dtype=object)
    a = np.asarray(subject)
    if a.ndim != 1:
        raise InvalidOptionError(f"`subject` has {a.ndim} dimensions: give a one-dimensional sequence")
    if a.dtype.kind in "iub":
        return np.ascontiguousarray(a, dtype=np.int64)
    if a.dtype.kind == "f":
        return np.ascontiguousarray(a, dtype=np.float64)
    if a.dtype.kind in "US":
        return [str(x) for x in a]
    values = a.tolist()
    present = [x for x in values if not _is_missing(x)]
    if all(isinstance(x, numbers.Integral) and not isinstance(x, bool) for x in present):
        return [None if _is_missing(x) else int(x) for x in values]
    if all(isinstance(x, str) for x in present):
        return [None if _is_missing(x) else x for x in values]
    raise InvalidValueError(
        "`subject` mixes numbers and text: give ids of one type (all whole numbers or all text)"
    )


def _floats(name, values):
    if hasattr(values, "to_numpy"):
        try:
            values = values.to_numpy(dtype=np.float64, na_value=np.nan)
        except (TypeError, ValueError):
            values = values.to_numpy()
    try:
        a = np.asarray(values, dtype=np.float64)
    except (TypeError, ValueError):
        raise InvalidValueError(f"`{name}` holds values that are not numbers: give numeric values") from None
    if a.ndim != 1:
        raise InvalidOptionError(f"`{name}` has {a.ndim} dimensions: give a one-dimensional sequence")
    return np.ascontiguousarray(a)


class Panel:
    """Repeated measurements: one subject id, time and response per row.

    Rows are validated (lengths, no infinite time or covariate, missing cells under
    ``missing``), then sorted stably by (subject, time). Per-row results come back in your row
    order.

    Parameters
    ----------
    subject : sequence of int or str
        Subject ids. A numeric column compares numerically (whole-number floats are accepted,
        so ``1`` and ``1.0`` are one subject); a text column is kept exactly (``"007"`` and
        ``"7"`` differ). ``None``/NaN/NA are missing ids, handled as ``missing`` says.
    time, response : sequence of float
    covariates : dict of name -> sequence of float, optional
    missing : {"error", "drop"}
        What to do with a row holding a missing cell (a missing id, a NaN time, response or
        covariate, or an infinite response): refuse it, naming the column and row (default),
        or drop it and count it per column (``dropped_by_column``, and in ``describe``).

    Examples
    --------
    >>> import trajweave as tw
    >>> p = tw.Panel([2, 1, 2], [1.0, 0.0, 0.0], [5.0, 7.0, 6.0])
    >>> p.n_subjects, p.subject_ids
    (2, [1, 2])
    """

    def __init__(self, subject, time, response, covariates=None, missing="error"):
        covariates = dict(covariates or {})
        names = [str(k) for k in covariates]
        values = [_floats(k, v) for k, v in zip(names, covariates.values())]
        self._native = _trajweave.NativePanel(
            _ids(subject), _floats("time", time), _floats("response", response), names, values, missing
        )
        # Column names for labels (the report's axes); from_frame sets the frame's.
        self.columns = ("subject", "time", "response")

    @classmethod
    def from_frame(cls, df, subject, time, response, covariates=(), missing="error"):
        """A panel from columns of a pandas DataFrame (or any mapping of columns).

        Examples
        --------
        >>> import pandas as pd, trajweave as tw
        >>> df = pd.DataFrame({"id": ["a", "a", "b"], "t": [0, 1, 0], "y": [1.0, 2.0, 3.0]})
        >>> tw.Panel.from_frame(df, subject="id", time="t", response="y").n_observations
        3
        """
        columns = list(df.keys())

        def column(argument, name):
            if name not in columns:
                raise InvalidOptionError(
                    f"`{argument}` = {name!r} is not allowed: no such column; the columns are "
                    + ", ".join(map(str, columns))
                )
            return df[name]

        if isinstance(covariates, str):
            covariates = [covariates]
        panel = cls(
            column("subject", subject),
            column("time", time),
            column("response", response),
            {c: column("covariates", c) for c in covariates},
            missing=missing,
        )
        panel.columns = (str(subject), str(time), str(response))
        return panel

    @property
    def n_subjects(self):
        """Number of subjects."""
        return self._native.n_subjects

    @property
    def n_observations(self):
        """Number of rows kept."""
        return self._native.n_observations

    @property
    def n_rows(self):
        """Number of rows given."""
        return self._native.n_rows

    @property
    def dropped_rows(self):
        """Input rows (counted from 0) dropped under ``missing="drop"``."""
        return self._native.dropped_rows

    @property
    def dropped_by_column(self):
        """Rows dropped under ``missing="drop"`` per column with a missing cell, as a dict
        (``subject``, ``time``, ``response``, then covariates; a row missing in two columns
        counts in both)."""
        return dict(self._native.dropped_by_column)

    @property
    def subject_ids(self):
        """Subject ids in sorted order."""
        return self._native.subject_ids

    @property
    def offsets(self):
        """Subject ``i`` holds sorted rows ``offsets[i]:offsets[i + 1]``."""
        return self._native.offsets

    @property
    def time(self):
        """Times, sorted by (subject, time)."""
        return self._native.time

    @property
    def response(self):
        """Responses, sorted by (subject, time)."""
        return self._native.response

    def is_binary(self):
        """Whether the response holds exactly two distinct values (a 0/1 outcome); LOWESS then
        runs without robustness iterations unless they are set."""
        return self._native.is_binary

    @property
    def order(self):
        """``order[k]`` is the input row of sorted row ``k``."""
        return self._native.order

    @property
    def covariate_names(self):
        """Covariate names."""
        return self._native.covariate_names

    def covariate(self, name):
        """Values of covariate ``name`` in sorted order."""
        values = self._native.covariate(name)
        if values is None:
            raise InvalidOptionError(
                f"`name` = {name!r} is not allowed: no such covariate; the covariates are "
                + ", ".join(self.covariate_names)
            )
        return values

    def to_input_order(self, values):
        """Puts per-row values (sorted order) back in input order; dropped rows get NaN."""
        return self._native.to_input_order(_floats("values", values))

    def describe(self, edges=None, schedule=None, tolerance=None):
        """Shorthand for :func:`trajweave.describe` on this panel."""
        from .describe import describe

        return describe(self, edges=edges, schedule=schedule, tolerance=tolerance)

    def __repr__(self):
        return (
            f"Panel({self.n_subjects} subjects, {self.n_observations} observations, "
            f"{len(self.dropped_rows)} rows dropped)"
        )
