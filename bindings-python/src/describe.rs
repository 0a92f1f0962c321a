//! `describe`: the core description as JSON text plus its readable table.

use pyo3::prelude::*;
use trajweave_core::{describe, TimeGrid};

use crate::errors::IntoPy;
use crate::panel::NativePanel;

/// Returns (JSON of the description, the readable table).
#[pyfunction]
#[pyo3(signature = (panel, edges=None, schedule=None, tolerance=None))]
pub fn describe_panel(
    py: Python<'_>,
    panel: &NativePanel,
    edges: Option<Vec<f64>>,
    schedule: Option<Vec<f64>>,
    tolerance: Option<f64>,
) -> PyResult<(String, String)> {
    let grid = TimeGrid::from_options(edges, schedule, tolerance).py_err()?;
    let d = py
        .detach(|| describe(&panel.inner, grid.as_ref()))
        .py_err()?;
    let json = serde_json::to_string(&d)
        .map_err(|e| pyo3::exceptions::PyRuntimeError::new_err(e.to_string()))?;
    Ok((json, d.to_text()))
}
