//! `mean_curve`: the panel's mean trend with an optional subject-bootstrap band.

use numpy::IntoPyArray;
use numpy::PyReadonlyArray1;
use pyo3::prelude::*;
use pyo3::types::PyDict;
use trajweave_core::trend::mean_curve::{mean_curve, BootstrapOptions};

use crate::errors::IntoPy;
use crate::panel::NativePanel;
use crate::smoother::{build, curve_parts, vec, RawOption};

/// Returns a dict: curve (parts), at, fitted, and band (lower, upper, failed) or None.
#[pyfunction]
#[pyo3(signature = (panel, family, options, at=None, bootstrap=None))]
pub fn panel_mean_curve<'py>(
    py: Python<'py>,
    panel: &NativePanel,
    family: &str,
    options: Vec<(String, RawOption)>,
    at: Option<PyReadonlyArray1<'_, f64>>,
    bootstrap: Option<(f64, f64, f64)>,
) -> PyResult<Bound<'py, PyDict>> {
    let s = build(family, options)?;
    let at = at.map(|a| vec(&a));
    let boot = bootstrap
        .map(|(reps, level, seed)| BootstrapOptions::from_numbers(reps, level, seed))
        .transpose()
        .py_err()?;
    let m = py
        .detach(|| mean_curve(&panel.inner, &s, at.as_deref(), boot.as_ref()))
        .py_err()?;
    let out = PyDict::new(py);
    out.set_item("curve", curve_parts(py, m.curve)?)?;
    out.set_item("at", m.at.into_pyarray(py))?;
    out.set_item("fitted", m.fitted.into_pyarray(py))?;
    match m.band {
        Some(b) => {
            let band = PyDict::new(py);
            band.set_item("lower", b.lower.into_pyarray(py))?;
            band.set_item("upper", b.upper.into_pyarray(py))?;
            band.set_item("reps", b.bootstrap.reps)?;
            band.set_item("level", b.bootstrap.level)?;
            band.set_item("seed", b.bootstrap.seed)?;
            band.set_item("failed", b.failed)?;
            out.set_item("band", band)?;
        }
        None => out.set_item("band", py.None())?,
    }
    Ok(out)
}
