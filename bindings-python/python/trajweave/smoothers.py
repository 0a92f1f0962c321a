"""Smoother specs and the fitted ``Curve``.

A spec holds a family and the options you gave (others take the core's defaults); ``fit(x, y)``
returns a :class:`Curve`. The options are checked by the core, so names, ranges and messages
are the same in every front.

>>> import numpy as np, trajweave as tw
>>> x = np.linspace(0, 10, 200); y = np.sin(x)
>>> c = tw.Kernel(bandwidth=0.5).fit(x, y)
>>> c.method, len(c.x)
('kernel', 200)
>>> float(np.round(c.predict([5.0])[0], 2))
-0.85
"""

import json
import warnings as _warnings

import numpy as np

from . import _trajweave
from ._record import Record
from .panel import _floats


class Curve:
    """A fitted smooth: distinct ``x`` (increasing), ``fitted`` at each, ``settings`` used,
    ``diagnostics`` (df, gcv, lambda, span, bandwidth, iterations, rss where they apply) and
    ``warnings`` (a list of texts, each also issued as a ``UserWarning`` when the curve is
    fitted)."""

    def __init__(self, x, fitted, method, settings, diagnostics, warnings=()):
        self.x = x
        self.fitted = fitted
        self.method = method
        self.settings = json.loads(settings)
        self.diagnostics = Record(json.loads(diagnostics))
        self.warnings = list(warnings)

    @classmethod
    def _from_parts(cls, parts):
        curve = cls(*parts)
        for w in curve.warnings:
            _warnings.warn(w, UserWarning, stacklevel=3)
        return curve

    def predict(self, new_x):
        """The curve at ``new_x``: linear interpolation between fitted points, the end values
        beyond them."""
        return _trajweave.predict_curve(self.x, self.fitted, _floats("new_x", new_x))

    def to_dict(self):
        """Every field as plain Python values."""
        return {
            "method": self.method,
            "x": self.x.tolist(),
            "fitted": self.fitted.tolist(),
            "settings": self.settings,
            "diagnostics": self.diagnostics.to_dict(),
            "warnings": list(self.warnings),
        }

    def __repr__(self):
        d = self.diagnostics
        extra = ", ".join(f"{k}={v:.6g}" for k, v in d.to_dict().items()
                          if k in ("df", "span", "bandwidth", "lambda") and v is not None)
        return f"Curve({self.method}, {len(self.x)} points{', ' + extra if extra else ''})"


class _Spec:
    family = ""

    def __init__(self, **options):
        self._options = [(k, v) for k, v in options.items() if v is not None]
        # Check now, so a bad option fails where it was written.
        _trajweave.smoother_settings(self.family, self._pairs())

    def _pairs(self):
        out = []
        for k, v in self._options:
            out.append((k, v if isinstance(v, str) else float(v)))
        return out

    @property
    def settings(self):
        """The options the core will use, defaults filled in."""
        return json.loads(_trajweave.smoother_settings(self.family, self._pairs()))["options"]

    def fit(self, x, y):
        """Fits y on x and returns a :class:`Curve`."""
        parts = _trajweave.fit_smoother(self.family, self._pairs(), _floats("x", x), _floats("y", y))
        return Curve._from_parts(parts)

    def __repr__(self):
        args = ", ".join(f"{k}={v!r}" for k, v in self._options)
        return f"{type(self).__name__}({args})"


class Lowess(_Spec):
    """LOWESS (Cleveland 1979): ``span`` fraction of points (default 2/3), ``iterations``
    robustness steps (default 3, or 0 when the response has two distinct values: robustness
    weights would discard the rarer value; set above 0 on such a response, the fit warns),
    ``delta`` interpolation distance (default 1% of the x range)."""

    family = "lowess"

    def __init__(self, span=None, iterations=None, delta=None):
        super().__init__(span=span, iterations=iterations, delta=delta)


class Kernel(_Spec):
    """Kernel smoother: ``bandwidth`` is the kernel's standard deviation (default: a rule of
    thumb), ``shape`` "gaussian" (default) or "box", ``degree`` 1 (local linear, default) or 0
    (Nadaraya-Watson); Gaussian ``truncation`` (bandwidths, default 8), ``evaluation`` "auto",
    "exact" or "binned", ``bins_per_bandwidth`` (default 32)."""

    family = "kernel"

    def __init__(self, bandwidth=None, shape=None, degree=None, truncation=None, evaluation=None,
                 bins_per_bandwidth=None):
        super().__init__(bandwidth=bandwidth, shape=shape, degree=degree, truncation=truncation,
                         evaluation=evaluation, bins_per_bandwidth=bins_per_bandwidth)


class Spline(_Spec):
    """Cubic smoothing spline: give ``lam`` (the penalty), or ``df`` (target equivalent
    degrees of freedom), or neither to choose the penalty by GCV."""

    family = "spline"

    def __init__(self, lam=None, df=None):
        if lam is not None and df is not None:
            from .errors import InvalidOptionError

            raise InvalidOptionError(
                "`lambda` = given together with `df` is not allowed: give either lambda or df, or neither for GCV")
        if lam is not None:
            super().__init__(**{"lambda": lam})
        elif df is not None:
            super().__init__(df=df)
        else:
            super().__init__(gcv="gcv")


class SuperSmoother(_Spec):
    """Super smoother (Friedman 1984): ``span`` "cv" (variable, default) or a fixed fraction,
    ``bass`` in [0, 10] (default 0)."""

    family = "super"

    def __init__(self, span=None, bass=None):
        super().__init__(span=span, bass=bass)


def lowess(x, y, span=None, iterations=None, delta=None):
    """``Lowess(...).fit(x, y)``."""
    return Lowess(span, iterations, delta).fit(x, y)


def kernel_smooth(x, y, **options):
    """``Kernel(**options).fit(x, y)``."""
    return Kernel(**options).fit(x, y)


def smoothing_spline(x, y, lam=None, df=None):
    """``Spline(lam, df).fit(x, y)``."""
    return Spline(lam, df).fit(x, y)


def super_smoother(x, y, span=None, bass=None):
    """``SuperSmoother(span, bass).fit(x, y)``."""
    return SuperSmoother(span, bass).fit(x, y)
