//! The mean trend: the smoothers (LOWESS, kernel, smoothing spline, super smoother), the mean
//! curve with its subject-bootstrap band, the average change per time unit with its interval,
//! and the choice of smoothing by subject cross-validation.
//! In: a panel or plain (x, y) arrays. Out: a [`curve::Curve`] on a grid and at the data, or
//! the numbers of a [`change::Change`].

pub mod change;
pub mod curve;
pub mod kernel;
pub mod lowess;
pub mod mean_curve;
pub mod smoother;
pub mod spline;
pub mod supsmu;
pub mod tune;
