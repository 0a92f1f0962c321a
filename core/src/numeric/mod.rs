//! The numerical tools the estimators share, with no statistics of their own: optimisers, the
//! normal quantile, sample quantiles, the seeded random numbers and small dense linear algebra.
//! In and out: plain numbers and slices.

pub(crate) mod linalg;
pub mod normal;
pub(crate) mod optimize;
pub mod quantile;
pub mod rng;
