//! `simulate`: a simulated panel as a dict of numpy columns.

use numpy::IntoPyArray;
use pyo3::prelude::*;
use pyo3::types::PyDict;
use trajweave_core::{simulate, SimulateOptions};

use crate::errors::IntoPy;

/// Applies the options in the order given, then simulates.
#[pyfunction]
pub fn simulate_columns<'py>(
    py: Python<'py>,
    options: Vec<(String, f64)>,
) -> PyResult<Bound<'py, PyDict>> {
    let mut o = SimulateOptions::default();
    for (name, value) in &options {
        o.set(name, *value).py_err()?;
    }
    let d = py.detach(|| simulate(&o)).py_err()?;
    let out = PyDict::new(py);
    out.set_item("patient", d.patient.into_pyarray(py))?;
    out.set_item("years", d.years.into_pyarray(py))?;
    out.set_item("egfr", d.egfr.into_pyarray(py))?;
    out.set_item("age", d.age.into_pyarray(py))?;
    out.set_item("female", d.female.into_pyarray(py))?;
    out.set_item("diabetes", d.diabetes.into_pyarray(py))?;
    out.set_item("acr", d.acr.into_pyarray(py))?;
    Ok(out)
}

/// Column names in order, shared with the other fronts.
#[pyfunction]
pub fn simulated_columns() -> Vec<&'static str> {
    trajweave_core::SIMULATED_COLUMNS.to_vec()
}
