"""Exceptions raised by trajweave, one class per kind of core error.

Every class derives from :class:`TrajweaveError` and from ``ValueError``, and carries the
core's stable ``kind`` name, the same in the R package and the command line.
"""


class TrajweaveError(Exception):
    """Base class of every error trajweave raises about its input."""

    kind = "error"


class LengthMismatchError(TrajweaveError, ValueError):
    """Inputs that need one value per row have different lengths."""

    kind = "length_mismatch"


class NonFiniteError(TrajweaveError, ValueError):
    """A time, covariate or response is NaN or infinite where that is not allowed."""

    kind = "non_finite"


class MissingValueError(TrajweaveError, ValueError):
    """A subject id, or a response under ``missing="error"``, is missing."""

    kind = "missing"


class InvalidValueError(TrajweaveError, ValueError):
    """A value has an unusable type or form (for example a subject id of 1.5)."""

    kind = "invalid_value"


class InvalidOptionError(TrajweaveError, ValueError):
    """An option is outside its allowed range or set."""

    kind = "invalid_option"


class EmptyInputError(TrajweaveError, ValueError):
    """No rows are left to work on."""

    kind = "empty"


class TooFewError(TrajweaveError, ValueError):
    """Too few subjects, pairs or points for the estimate asked."""

    kind = "too_few"


__all__ = [
    "TrajweaveError",
    "LengthMismatchError",
    "NonFiniteError",
    "MissingValueError",
    "InvalidValueError",
    "InvalidOptionError",
    "EmptyInputError",
    "TooFewError",
]
