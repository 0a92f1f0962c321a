//! trajweave-core: estimators for exploring longitudinal (repeated-measures) data.
//!
//! Build a [`Panel`] once (validated, sorted by subject and time, the caller's row order kept),
//! then run estimators on it. The modules follow the questions of an exploration: [`data`]
//! (what the data hold), [`trend`] (the mean trend), [`individuals`] (how individuals vary),
//! [`covariates`] (whether a covariate changes the trend), [`correlation`] (how residuals are
//! correlated), with [`numeric`] the shared numerical tools. Nothing here parses files, writes
//! HTML or touches Python or R types; the report is the crate `trajweave-report`, and the CLI
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

pub mod correlation;
pub mod covariates;
pub mod data;
pub mod error;
pub mod individuals;
pub mod numeric;
pub mod trend;

pub use data::{
    describe, simulate, Covariate, Description, Missing, MissingCount, Panel, Pattern,
    SimulateOptions, SimulatedPanel, SubjectId, SubjectIds, TimeGrid, SIMULATED_COLUMNS,
    SIMULATE_OPTION_NAMES,
};
pub use error::{Error, Result};
pub use trend::supsmu::{super_smoother, SuperSmootherOptions};
