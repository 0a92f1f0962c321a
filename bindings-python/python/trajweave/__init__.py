"""trajweave: explore longitudinal (repeated-measures) data before modelling it.

>>> import trajweave as tw
>>> df = tw.simulate(subjects=200, seed=7)
>>> panel = tw.Panel.from_frame(df, subject="patient", time="years", response="egfr")
>>> tw.describe(panel).subjects
200
"""

from .correlation import (
    BinnedCorrelation,
    Variogram,
    binned_correlation,
    compare_variogram_fits,
    fit_variogram,
    implied_correlation,
    process_variance,
    screen_structures,
    structure_loglik,
    variogram,
)
from .covariates import (
    TrajectoryGrid,
    conditional_trends,
    covariate_bands,
    dropout_curves,
    equal_count_bands,
    group_curves,
    trajectory_grid,
)
from .describe import Description, describe
from .errors import (
    EmptyInputError,
    InvalidOptionError,
    InvalidValueError,
    LengthMismatchError,
    MissingValueError,
    NonFiniteError,
    TooFewError,
    TrajweaveError,
)
from .individuals import (
    ByGroup,
    Polynomial,
    Ranking,
    Residuals,
    pick_subjects,
    rank_subjects,
    residuals,
    sample_subjects,
    unusual,
)
from .panel import Panel
from .report import report
from .simulate import simulate
from .smoothers import (
    Curve,
    Kernel,
    Lowess,
    Spline,
    SuperSmoother,
    kernel_smooth,
    lowess,
    smoothing_spline,
    super_smoother,
)
from .trend import Bootstrap, Change, MeanCurve, Tuning, average_change, mean_curve, tune_smoother

__all__ = [
    "report",
    "binned_correlation",
    "variogram",
    "fit_variogram",
    "compare_variogram_fits",
    "process_variance",
    "implied_correlation",
    "screen_structures",
    "structure_loglik",
    "BinnedCorrelation",
    "Variogram",
    "Panel",
    "describe",
    "Description",
    "simulate",
    "Curve",
    "Lowess",
    "Kernel",
    "Spline",
    "SuperSmoother",
    "lowess",
    "kernel_smooth",
    "smoothing_spline",
    "super_smoother",
    "Bootstrap",
    "MeanCurve",
    "mean_curve",
    "Change",
    "average_change",
    "Tuning",
    "tune_smoother",
    "equal_count_bands",
    "covariate_bands",
    "conditional_trends",
    "group_curves",
    "dropout_curves",
    "trajectory_grid",
    "TrajectoryGrid",
    "Polynomial",
    "ByGroup",
    "Residuals",
    "residuals",
    "Ranking",
    "rank_subjects",
    "pick_subjects",
    "sample_subjects",
    "unusual",
    "TrajweaveError",
    "LengthMismatchError",
    "NonFiniteError",
    "MissingValueError",
    "InvalidValueError",
    "InvalidOptionError",
    "EmptyInputError",
    "TooFewError",
]
