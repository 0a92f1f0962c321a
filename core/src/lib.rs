//! trajweave-core: estimators for exploring longitudinal (repeated-measures) data.
//!
//! Build a [`Panel`] once (validated, sorted by subject and time, the caller's row order kept),
//! then run estimators on it. Nothing here parses files or touches Python or R types; the CLI
//! and the bindings convert at their edges and call these functions, so every front gives the
//! same numbers and the same errors.
//!
//! ```
//! use trajweave_core::{describe, simulate, SimulateOptions};
//! # fn main() -> trajweave_core::Result<()> {
//! let data = simulate(&SimulateOptions { subjects: 100, ..Default::default() })?;
//! let d = describe(&data.to_panel()?, None)?;
//! assert_eq!(d.subjects, 100);
//! # Ok(()) }
//! ```
#![deny(missing_docs)]

pub mod bands;
pub mod conditional;
pub mod correlation;
pub mod curve;
pub mod describe;
pub mod error;
pub mod grid;
pub mod groups;
pub mod kernel;
pub mod lowess;
pub mod mean_curve;
pub mod normal;
pub mod optimize;
pub mod panel;
pub mod quantile;
pub mod ranking;
pub mod report;
pub mod residuals;
pub mod rng;
pub mod sample;
pub mod screen;
pub mod simulate;
pub mod smoother;
pub mod spline;
pub mod supsmu;
pub mod trajectory_grid;
pub mod tune;
pub mod unusual;
pub mod variogram;

pub use describe::{describe, Description, Pattern};
pub use error::{Error, Result};
pub use grid::TimeGrid;
pub use panel::{Covariate, Missing, Panel, SubjectId, SubjectIds};
pub use simulate::{
    simulate, SimulateOptions, SimulatedPanel, SIMULATED_COLUMNS, SIMULATE_OPTION_NAMES,
};
pub use supsmu::{super_smoother, SuperSmootherOptions};
