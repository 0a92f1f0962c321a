//! The R package's native half: each `#[extendr]` function converts its R arguments, calls
//! trajweave-core and converts the result back. No statistic is computed here or in R.
//!
//! No error crosses into R as a Rust panic or as an error raised from Rust: every entry point
//! returns `list(ok = value)` or `list(error_kind = kind, message = text)` (see [`error`]), and
//! the R wrapper raises the classed condition. A core error therefore never unwinds through R.
//!
//! Files mirror the core's modules: `panel.rs`, `describe.rs`, `simulate.rs`, `smoother.rs`
//! (with the curve's `predict`), `mean_curve.rs`, `change.rs` (average change), `tune.rs`,
//! `individuals.rs` (residuals, ranking, sample, unusual), `covariates.rs` (bands,
//! conditional, groups, trajectory_grid), `correlation.rs` (binned correlation), `variogram.rs`
//! (variogram, process variance and the variogram fit), `screen.rs` (covariance-structure
//! screening), `error.rs`;
//! `convert.rs` and `json.rs` hold the R value conversions they share.

use extendr_api::prelude::*;

mod change;
mod convert;
mod correlation;
mod covariates;
mod describe;
mod error;
mod individuals;
mod json;
mod mean_curve;
mod panel;
mod report;
mod screen;
mod simulate;
mod smoother;
mod tune;
mod variogram;

extendr_module! {
    mod trajweave;
    use error;
    use panel;
    use describe;
    use simulate;
    use smoother;
    use mean_curve;
    use change;
    use tune;
    use individuals;
    use covariates;
    use correlation;
    use variogram;
    use screen;
    use report;
}
