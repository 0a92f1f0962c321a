//! Smoothers: a family name and (name, value) options in, the core's `Curve` out.

use numpy::{IntoPyArray, PyArray1, PyReadonlyArray1};
use pyo3::prelude::*;
use trajweave_core::trend::curve::{Curve, Diagnostics, OptionValue};
use trajweave_core::trend::smoother::Smoother;

use crate::errors::IntoPy;

/// An option value from Python: a number or a word.
#[derive(FromPyObject)]
pub enum RawOption {
    Number(f64),
    Text(String),
}

/// The core smoother for a family and its options, in the order given.
pub fn build(family: &str, options: Vec<(String, RawOption)>) -> PyResult<Smoother> {
    let options: Vec<(String, OptionValue)> = options
        .into_iter()
        .map(|(k, v)| {
            let v = match v {
                RawOption::Number(x) => OptionValue::Number(x),
                RawOption::Text(s) => OptionValue::Text(s),
            };
            (k, v)
        })
        .collect();
    Smoother::from_options(family, &options).py_err()
}

pub fn vec(a: &PyReadonlyArray1<'_, f64>) -> Vec<f64> {
    a.as_slice()
        .map_or_else(|_| a.as_array().to_vec(), <[f64]>::to_vec)
}

/// A curve as (x, fitted, method, settings JSON, diagnostics JSON, warnings).
pub type CurveParts<'py> = (
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<f64>>,
    String,
    String,
    String,
    Vec<String>,
);

pub fn curve_parts<'py>(py: Python<'py>, c: Curve) -> PyResult<CurveParts<'py>> {
    let settings = serde_json::to_string(&c.settings).map_err(json_err)?;
    let diagnostics = serde_json::to_string(&c.diagnostics).map_err(json_err)?;
    Ok((
        c.x.into_pyarray(py),
        c.fitted.into_pyarray(py),
        c.method,
        settings,
        diagnostics,
        c.warnings,
    ))
}

pub fn json_err(e: serde_json::Error) -> PyErr {
    pyo3::exceptions::PyRuntimeError::new_err(e.to_string())
}

/// Fits a smoother of y on x.
#[pyfunction]
pub fn fit_smoother<'py>(
    py: Python<'py>,
    family: &str,
    options: Vec<(String, RawOption)>,
    x: PyReadonlyArray1<'_, f64>,
    y: PyReadonlyArray1<'_, f64>,
) -> PyResult<CurveParts<'py>> {
    let s = build(family, options)?;
    let (x, y) = (vec(&x), vec(&y));
    let c = py.detach(|| s.fit(&x, &y)).py_err()?;
    curve_parts(py, c)
}

/// A curve given by its points, evaluated at `new_x` (the core's interpolation rule).
#[pyfunction]
pub fn predict_curve<'py>(
    py: Python<'py>,
    x: PyReadonlyArray1<'_, f64>,
    fitted: PyReadonlyArray1<'_, f64>,
    new_x: PyReadonlyArray1<'_, f64>,
) -> Bound<'py, PyArray1<f64>> {
    let c = Curve::new(
        "",
        vec(&x),
        vec(&fitted),
        serde_json::Value::Null,
        Diagnostics::default(),
    );
    c.predict(&vec(&new_x)).into_pyarray(py)
}

/// The settings a smoother spec resolves to (defaults filled in), as JSON.
#[pyfunction]
pub fn smoother_settings(family: &str, options: Vec<(String, RawOption)>) -> PyResult<String> {
    let s = build(family, options)?;
    serde_json::to_string(&s).map_err(json_err)
}
