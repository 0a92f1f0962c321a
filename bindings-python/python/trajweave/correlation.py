"""Correlation structure of residuals: the binned correlation matrix with counts and Fisher
intervals, the correlation by bin lag, the empirical variogram with the process variance, a
variogram model fitted by weighted least squares (variance components, optionally with a
random slope; the two fits compared), and candidate
covariance structures screened by likelihood (AIC, BIC).

Values the core cannot estimate (a cell with too few subjects, a thin lag bin) are ``None``
in the records, as ``null`` in the CLI's JSON; ``matrix()`` and ``column()`` give numpy
arrays with NaN instead.

>>> import trajweave as tw
>>> p = tw.Panel.from_frame(tw.simulate(subjects=300, seed=4, sd_slope=0), "patient", "years", "egfr")
>>> r = tw.residuals(p, tw.Polynomial(1))
>>> c = tw.binned_correlation(p, r, bins=8)
>>> c.matrix().shape
(8, 8)
>>> vg = tw.variogram(p, r, max_lag=6)
>>> fit = tw.fit_variogram(vg)
>>> fit.range > 0
True
>>> tw.compare_variogram_fits(vg).preferred in ("stationary", "random_slope", "neither")
True
>>> s = tw.screen_structures(p, r, candidates=["independence", "exchangeable"])
>>> s.fits[0]["structure"]
'exchangeable'
"""

import json
import warnings

import numpy as np

from . import _trajweave
from ._record import Record
from .individuals import _values
from .panel import _floats


def _nan(values):
    return np.array([np.nan if v is None else v for v in values], dtype=float)


class BinnedCorrelation(Record):
    """Correlations between time bins: ``correlation``, ``counts``, ``lower``, ``upper``
    (flat, row-major k x k), ``bins``, ``centres``, ``means``, ``sds``, ``lags`` and visit
    counts."""

    __slots__ = ()

    def matrix(self, field="correlation"):
        """A k x k numpy array of ``field`` ("correlation", "counts", "lower" or "upper")."""
        k = len(self._data["bins"])
        return _nan(self._data[field]).reshape(k, k)


class Variogram(Record):
    """An empirical variogram: per lag bin ``lower``, ``upper``, ``lag`` (mean lag),
    ``pairs``, ``classical``, ``robust``; the ``process_variance``; optional ``sample`` of
    raw pairs and ``smoothed`` curve."""

    __slots__ = ()

    def column(self, field):
        """A per-bin field as a numpy array (NaN for missing)."""
        return _nan(self._data[field])


def binned_correlation(panel, residuals, bins=None, edges=None, schedule=None, tolerance=None,
                       level=0.95, min_count=3):
    """Pairwise-complete correlation of residuals between time bins.

    Bins: ``bins`` equal-width bins over the observed times, bin ``edges``, or a nominal
    ``schedule`` with a ``tolerance``. A subject with several visits in a bin contributes the
    one nearest the bin's centre.
    """
    return BinnedCorrelation(json.loads(_trajweave.panel_binned_correlation(
        panel._native, _values(panel, residuals, "residuals"),
        bins=None if bins is None else float(bins),
        edges=None if edges is None else [float(e) for e in edges],
        schedule=None if schedule is None else [float(s) for s in schedule],
        tolerance=None if tolerance is None else float(tolerance),
        level=float(level), min_count=float(min_count))))


def variogram(panel, residuals, lag_bins=None, lag_kind=None, lag_edges=None, max_lag=None,
              min_pairs=30, sample=None, seed=1, smoother=None):
    """The empirical variogram of within-subject residual pairs and the process variance.

    ``lag_bins`` bins (default 20) of ``lag_kind`` "equal_width" (default) or "equal_count"
    up to ``max_lag`` (default: the longest follow-up), or given ``lag_edges``; ``sample``: a
    number of raw pairs to return (seeded) or "all"; ``smoother``: a spec fitted to the raw
    pairs for a smoothed variogram.
    """
    return Variogram(json.loads(_trajweave.panel_variogram(
        panel._native, _values(panel, residuals, "residuals"),
        lag_kind=lag_kind, lag_bins=None if lag_bins is None else float(lag_bins),
        lag_edges=None if lag_edges is None else [float(e) for e in lag_edges],
        max_lag=None if max_lag is None else float(max_lag),
        min_pairs=float(min_pairs), sample=None if sample is None else str(sample),
        seed=float(seed),
        family=None if smoother is None else smoother.family,
        options=[] if smoother is None else smoother._pairs())))


def process_variance(panel, residuals):
    """The mean of (r_j - r_k)^2 / 2 over all pairs of rows of different subjects, in O(n)."""
    return _trajweave.panel_process_variance(panel._native, _values(panel, residuals, "residuals"))


def _fit_fields(vg):
    """The variogram fields a fit reads, as the native functions take them."""
    d = vg._data if isinstance(vg, Record) else vg

    def optional(name):
        value = d.get(name)
        return None if value is None else float(value)

    return dict(lag=_nan(d["lag"]).tolist(), pairs=[int(n) for n in d["pairs"]],
                classical=_nan(d["classical"]).tolist(), robust=_nan(d["robust"]).tolist(),
                max_lag=float(d["max_lag"]), process_variance=float(d["process_variance"]),
                time_mean=optional("time_mean"), time_variance=optional("time_variance"))


def fit_variogram(vg, model="exponential", estimate="classical", random_slope=False):
    """gamma(u) = tau^2 + sigma^2 (1 - rho(u)) fitted to ``vg`` by Cressie's weighted least
    squares; nu^2 = process variance - (tau^2 + sigma^2), kept >= 0. With
    ``random_slope=True`` the term omega^2 u^2 / 2 is added (``slope_variance`` = omega^2) and
    nu^2 is the between-subject variance at ``intercept_time``. ``flagged``, ``flags``,
    ``at_boundary`` and ``reading`` say whether the fit can be read as it stands. Each warning
    of the fit is also issued as a Python ``UserWarning``."""
    if not isinstance(random_slope, (bool, np.bool_)):
        from .errors import InvalidOptionError

        raise InvalidOptionError(
            f"`random_slope` = {random_slope!r} is not allowed: True or False")
    fit = Record(json.loads(_trajweave.variogram_fit(
        model=model, estimate=estimate, random_slope=bool(random_slope), **_fit_fields(vg))))
    for w in fit.warnings:
        warnings.warn(w, UserWarning, stacklevel=2)
    return fit


def compare_variogram_fits(vg, model="exponential", estimate="classical"):
    """``model`` fitted to ``vg`` with and without a random slope (``stationary``,
    ``random_slope``), the relative reduction of the criterion (``criterion_reduction``) and
    the fit the documented rule prefers (``preferred``: "stationary", "random_slope" or
    "neither", with its ``reason``). Issues no warnings: read each fit's ``flags``."""
    return Record(json.loads(_trajweave.variogram_compare(
        model=model, estimate=estimate, **_fit_fields(vg))))


def _grid_args(edges, schedule, tolerance):
    return dict(edges=None if edges is None else [float(e) for e in edges],
                schedule=None if schedule is None else [float(s) for s in schedule],
                tolerance=None if tolerance is None else float(tolerance))


def screen_structures(panel, residuals, candidates=None, edges=None, schedule=None, tolerance=None,
                      max_iterations=1000, convergence=1e-10):
    """Candidate within-subject covariance structures fitted to the residuals by maximum
    likelihood (Gaussian, mean zero: the mean model is taken as fixed), ranked by AIC.

    ``candidates``: names among "independence", "exchangeable", "exponential", "gaussian",
    "intercept_exponential_error", "intercept_slope_error", "intercept_slope_exponential_error",
    "toeplitz", "unstructured" (default all); the last two need a grid (``edges``, or a
    ``schedule`` with a ``tolerance``) of at most 12 bins.

    Each fit carries ``at_boundary`` (one flag per parameter), ``flags`` (in words) and
    ``flagged``; ``time_origin`` is the time at which the random-slope structures' intercept
    variance is given (0: the times as given).
    """
    return Record(json.loads(_trajweave.panel_screen_structures(
        panel._native, _values(panel, residuals, "residuals"),
        candidates=None if candidates is None else [str(c) for c in candidates],
        max_iterations=float(max_iterations), convergence=float(convergence),
        **_grid_args(edges, schedule, tolerance))))


def implied_correlation(structure, parameters, time, lags, edges=None, schedule=None, tolerance=None):
    """The correlation ``structure`` at ``parameters`` implies between two separate measurements
    at ``time`` and ``time + lag`` for each lag (numpy array; NaN where a time is in no bin of
    the grid that toeplitz and unstructured need)."""
    return np.array(_trajweave.structure_implied_correlation(
        str(structure), [float(x) for x in parameters], float(time), [float(u) for u in lags],
        **_grid_args(edges, schedule, tolerance)), dtype=float)


def structure_loglik(panel, residuals, structure, parameters, edges=None, schedule=None, tolerance=None):
    """The Gaussian log-likelihood of the residuals under ``structure`` at ``parameters`` (in
    the order of the screening's ``parameter_names``)."""
    return _trajweave.panel_structure_loglik(
        panel._native, _values(panel, residuals, "residuals"), str(structure),
        [float(x) for x in parameters], **_grid_args(edges, schedule, tolerance))
