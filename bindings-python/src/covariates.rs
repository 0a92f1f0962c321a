//! Covariate effects and dropout: equal-count bands, conditional trends, group and dropout
//! curves, and the trajectory grid. Results cross as JSON (small), grids as numpy arrays.

use numpy::{IntoPyArray, PyArray1, PyReadonlyArray1};
use pyo3::prelude::*;
use pyo3::types::PyList;
use trajweave_core::covariates::bands::{covariate_bands, equal_count_bands, Band, Bands};
use trajweave_core::covariates::conditional::conditional_trends;
use trajweave_core::covariates::groups::{dropout_curves, group_curves};
use trajweave_core::individuals::trajectory_grid::trajectory_grid;
use trajweave_core::TimeGrid;

use crate::errors::IntoPy;
use crate::individuals::RawValues;
use crate::panel::{id_list, NativePanel};
use crate::smoother::{build, json_err, vec, RawOption};

#[pyfunction]
pub fn values_equal_count_bands(
    values: PyReadonlyArray1<'_, f64>,
    number: usize,
    overlap: f64,
) -> PyResult<String> {
    let b = equal_count_bands(&vec(&values), number, overlap).py_err()?;
    serde_json::to_string(&b).map_err(json_err)
}

#[pyfunction]
pub fn panel_covariate_bands(
    panel: &NativePanel,
    covariate: &str,
    number: usize,
    overlap: f64,
) -> PyResult<String> {
    let b = covariate_bands(&panel.inner, covariate, number, overlap).py_err()?;
    serde_json::to_string(&b).map_err(json_err)
}

/// Bands given back by the wrapper as (lower, upper, count) triples plus their settings.
fn bands_from(
    parts: Vec<(f64, f64, usize)>,
    number: usize,
    overlap: f64,
    counted: String,
) -> Bands {
    let bands = parts
        .into_iter()
        .map(|(lower, upper, count)| Band {
            lower,
            upper,
            count,
        })
        .collect();
    Bands {
        bands,
        number,
        overlap,
        counted,
    }
}

#[allow(clippy::too_many_arguments)] // mirrors the core function's arguments one for one
#[pyfunction]
#[pyo3(signature = (panel, by, bands, number, overlap, counted, family, options, at=None))]
pub fn panel_conditional_trends(
    py: Python<'_>,
    panel: &NativePanel,
    by: &str,
    bands: Vec<(f64, f64, usize)>,
    number: usize,
    overlap: f64,
    counted: String,
    family: &str,
    options: Vec<(String, RawOption)>,
    at: Option<PyReadonlyArray1<'_, f64>>,
) -> PyResult<String> {
    let smoother = build(family, options)?;
    let bands = bands_from(bands, number, overlap, counted);
    let at = at.map(|a| vec(&a));
    let t = py
        .detach(|| conditional_trends(&panel.inner, by, &bands, &smoother, at.as_deref()))
        .py_err()?;
    serde_json::to_string(&t).map_err(json_err)
}

#[pyfunction]
#[pyo3(signature = (panel, covariate, family, options, at=None))]
pub fn panel_group_curves(
    py: Python<'_>,
    panel: &NativePanel,
    covariate: &str,
    family: &str,
    options: Vec<(String, RawOption)>,
    at: Option<PyReadonlyArray1<'_, f64>>,
) -> PyResult<String> {
    let smoother = build(family, options)?;
    let at = at.map(|a| vec(&a));
    let g = py
        .detach(|| group_curves(&panel.inner, covariate, &smoother, at.as_deref()))
        .py_err()?;
    serde_json::to_string(&g).map_err(json_err)
}

fn grid(
    edges: Option<Vec<f64>>,
    schedule: Option<Vec<f64>>,
    tolerance: Option<f64>,
) -> PyResult<TimeGrid> {
    TimeGrid::from_options(edges, schedule, tolerance)
        .py_err()?
        .ok_or_else(|| {
            crate::errors::to_py(trajweave_core::Error::InvalidOption {
                argument: "edges".into(),
                value: "not given".into(),
                allowed: "give bin edges, or a schedule with a tolerance".into(),
            })
        })
}

#[allow(clippy::too_many_arguments)] // mirrors the core function's arguments one for one
#[pyfunction]
#[pyo3(signature = (panel, family, options, edges=None, schedule=None, tolerance=None, at=None))]
pub fn panel_dropout_curves(
    py: Python<'_>,
    panel: &NativePanel,
    family: &str,
    options: Vec<(String, RawOption)>,
    edges: Option<Vec<f64>>,
    schedule: Option<Vec<f64>>,
    tolerance: Option<f64>,
    at: Option<PyReadonlyArray1<'_, f64>>,
) -> PyResult<String> {
    let smoother = build(family, options)?;
    let grid = grid(edges, schedule, tolerance)?;
    let at = at.map(|a| vec(&a));
    let g = py
        .detach(|| dropout_curves(&panel.inner, &grid, &smoother, at.as_deref()))
        .py_err()?;
    serde_json::to_string(&g).map_err(json_err)
}

/// (bins, subjects, order values, values, counts); the matrix is row-major subjects x bins.
pub type GridParts<'py> = (
    Vec<String>,
    Bound<'py, PyList>,
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<u32>>,
);

#[pyfunction]
#[pyo3(signature = (panel, values, order_by, edges=None, schedule=None, tolerance=None))]
pub fn panel_trajectory_grid<'py>(
    py: Python<'py>,
    panel: &NativePanel,
    values: RawValues<'_>,
    order_by: PyReadonlyArray1<'_, f64>,
    edges: Option<Vec<f64>>,
    schedule: Option<Vec<f64>>,
    tolerance: Option<f64>,
) -> PyResult<GridParts<'py>> {
    let grid = grid(edges, schedule, tolerance)?;
    let values = values.panel_order(panel, "values")?;
    let order_by = vec(&order_by);
    let g = py
        .detach(|| trajectory_grid(&panel.inner, &values, &grid, &order_by))
        .py_err()?;
    Ok((
        g.bins,
        id_list(py, &g.subjects)?,
        g.order_values.into_pyarray(py),
        g.values.into_pyarray(py),
        g.counts.into_pyarray(py),
    ))
}
