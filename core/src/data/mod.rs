//! What the data hold: the validated panel, time grids, the description of follow-up, spacing
//! and dropout, and the seeded simulator of the demo scenario.
//! In: the caller's columns (subject, time, response, covariates). Out: a [`Panel`] every
//! other folder reads, a [`Description`] and simulated rows.

pub mod describe;
pub mod grid;
pub mod panel;
pub mod simulate;

pub use describe::{describe, Description, Pattern};
pub use grid::TimeGrid;
pub use panel::{Covariate, Missing, MissingCount, Panel, SubjectId, SubjectIds};
pub use simulate::{
    simulate, SimulateOptions, SimulatedPanel, SIMULATED_COLUMNS, SIMULATE_OPTION_NAMES,
};
