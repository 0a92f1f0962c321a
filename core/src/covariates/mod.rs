//! Whether a covariate changes the trend: equal-count covariate bands, the trend per band, and
//! curves per level of a grouping and per dropout cohort.
//! In: a panel with covariates and a smoother. Out: one curve (with its counts) per band,
//! level or cohort.

pub mod bands;
pub mod conditional;
pub mod groups;
