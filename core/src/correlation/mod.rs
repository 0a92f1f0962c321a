//! How residuals are correlated within a subject: the binned correlation matrix and correlation
//! by lag, the empirical variogram with its model fit, and covariance structures screened by
//! likelihood. In: a panel and its residuals (from `individuals`). Out: correlations, a
//! variogram and a ranked table of structures.

pub mod binned;
pub mod screen;
pub mod variogram;
