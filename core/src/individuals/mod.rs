//! How individuals vary and who is unusual: residuals from a mean model, subjects ranked by a
//! residual summary, random and spread samples, robust flags and the subjects x time grid.
//! In: a panel and a mean model (a curve, a polynomial or per-group curves). Out: per-row
//! residuals and per-subject tables.

pub mod ranking;
pub mod residuals;
pub mod sample;
pub mod trajectory_grid;
pub mod unusual;
