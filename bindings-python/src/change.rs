//! `average_change`: the mean curve's average change per time unit with subject-bootstrap
//! intervals, as JSON.

use pyo3::prelude::*;
use trajweave_core::trend::change::{average_change, ChangeOptions};

use crate::errors::IntoPy;
use crate::panel::NativePanel;
use crate::smoother::{build, json_err, RawOption};

// The Python signature mirrors the core's options one for one.
#[allow(clippy::too_many_arguments)]
#[pyfunction]
#[pyo3(signature = (panel, family, options, central=0.9, reps=200.0, level=0.95, seed=1.0))]
pub fn panel_average_change(
    py: Python<'_>,
    panel: &NativePanel,
    family: &str,
    options: Vec<(String, RawOption)>,
    central: f64,
    reps: f64,
    level: f64,
    seed: f64,
) -> PyResult<String> {
    let s = build(family, options)?;
    let o = ChangeOptions::from_numbers(central, reps, level, seed).py_err()?;
    let c = py
        .detach(|| average_change(&panel.inner, &s, &o))
        .py_err()?;
    serde_json::to_string(&c).map_err(json_err)
}
