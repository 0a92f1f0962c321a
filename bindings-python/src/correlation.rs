//! Correlation structure: binned correlation, variogram and its model fit, covariance
//! screening. Results cross as
//! JSON (NaN as null); residuals come in the caller's row order or as the native panel-order
//! copy from `residuals()`.

use pyo3::prelude::*;
use trajweave_core::correlation::binned::{binned_correlation, CorrelationOptions};
use trajweave_core::correlation::screen::{
    implied_correlation, screen_structures, structure_loglik, ScreenOptions, Structure,
};
use trajweave_core::correlation::variogram::fit::{
    compare_variogram_fits, fit_variogram_with, Estimate, FitOptions, VariogramModel,
};
use trajweave_core::correlation::variogram::{
    process_variance, variogram, Variogram, VariogramOptions,
};
use trajweave_core::TimeGrid;

use crate::errors::IntoPy;
use crate::individuals::RawValues;
use crate::panel::NativePanel;
use crate::smoother::{build, json_err, RawOption};

#[allow(clippy::too_many_arguments)] // mirrors the front's keyword arguments
#[pyfunction]
#[pyo3(signature = (panel, residuals, bins=None, edges=None, schedule=None, tolerance=None, level=None, min_count=None))]
pub fn panel_binned_correlation(
    py: Python<'_>,
    panel: &NativePanel,
    residuals: RawValues<'_>,
    bins: Option<f64>,
    edges: Option<Vec<f64>>,
    schedule: Option<Vec<f64>>,
    tolerance: Option<f64>,
    level: Option<f64>,
    min_count: Option<f64>,
) -> PyResult<String> {
    let r = residuals.panel_order(panel, "residuals")?;
    let options = CorrelationOptions::from_numbers(level, min_count).py_err()?;
    let grid =
        TimeGrid::for_times(panel.inner.time(), bins, edges, schedule, tolerance).py_err()?;
    let c = py
        .detach(|| binned_correlation(&panel.inner, &r, &grid, &options))
        .py_err()?;
    serde_json::to_string(&c).map_err(json_err)
}

#[allow(clippy::too_many_arguments)] // mirrors the front's keyword arguments
#[pyfunction]
#[pyo3(signature = (panel, residuals, lag_kind=None, lag_bins=None, lag_edges=None, max_lag=None, min_pairs=None, sample=None, seed=None, family=None, options=Vec::new()))]
pub fn panel_variogram(
    py: Python<'_>,
    panel: &NativePanel,
    residuals: RawValues<'_>,
    lag_kind: Option<String>,
    lag_bins: Option<f64>,
    lag_edges: Option<Vec<f64>>,
    max_lag: Option<f64>,
    min_pairs: Option<f64>,
    sample: Option<String>,
    seed: Option<f64>,
    family: Option<String>,
    options: Vec<(String, RawOption)>,
) -> PyResult<String> {
    let r = residuals.panel_order(panel, "residuals")?;
    let smoother = family.map(|f| build(&f, options)).transpose()?;
    let o = VariogramOptions::from_front(
        lag_kind.as_deref(),
        lag_bins,
        lag_edges,
        max_lag,
        min_pairs,
        sample.as_deref(),
        seed,
        smoother,
    )
    .py_err()?;
    let v = py.detach(|| variogram(&panel.inner, &r, &o)).py_err()?;
    serde_json::to_string(&v).map_err(json_err)
}

/// The core variogram of the fields a fit reads, as the front holds them.
#[allow(clippy::too_many_arguments)] // the variogram fields a fit reads, one for one
fn fit_input(
    lag: Vec<f64>,
    pairs: Vec<u64>,
    classical: Vec<f64>,
    robust: Vec<f64>,
    max_lag: f64,
    process_variance: f64,
    time_mean: Option<f64>,
    time_variance: Option<f64>,
) -> PyResult<Variogram> {
    Ok(
        Variogram::for_fit(lag, pairs, classical, robust, max_lag, process_variance)
            .py_err()?
            .with_times(
                time_mean.unwrap_or(f64::NAN),
                time_variance.unwrap_or(f64::NAN),
            ),
    )
}

#[allow(clippy::too_many_arguments)] // the variogram fields a fit reads, one for one
#[pyfunction]
#[pyo3(signature = (lag, pairs, classical, robust, max_lag, process_variance, model, estimate, random_slope=false, time_mean=None, time_variance=None))]
pub fn variogram_fit(
    lag: Vec<f64>,
    pairs: Vec<u64>,
    classical: Vec<f64>,
    robust: Vec<f64>,
    max_lag: f64,
    process_variance: f64,
    model: &str,
    estimate: &str,
    random_slope: bool,
    time_mean: Option<f64>,
    time_variance: Option<f64>,
) -> PyResult<String> {
    let vg = fit_input(
        lag,
        pairs,
        classical,
        robust,
        max_lag,
        process_variance,
        time_mean,
        time_variance,
    )?;
    let options = FitOptions {
        model: VariogramModel::parse(model).py_err()?,
        estimate: Estimate::parse(estimate).py_err()?,
        random_slope,
    };
    let f = fit_variogram_with(&vg, &options).py_err()?;
    serde_json::to_string(&f).map_err(json_err)
}

#[allow(clippy::too_many_arguments)] // the variogram fields a fit reads, one for one
#[pyfunction]
#[pyo3(signature = (lag, pairs, classical, robust, max_lag, process_variance, model, estimate, time_mean=None, time_variance=None))]
pub fn variogram_compare(
    lag: Vec<f64>,
    pairs: Vec<u64>,
    classical: Vec<f64>,
    robust: Vec<f64>,
    max_lag: f64,
    process_variance: f64,
    model: &str,
    estimate: &str,
    time_mean: Option<f64>,
    time_variance: Option<f64>,
) -> PyResult<String> {
    let vg = fit_input(
        lag,
        pairs,
        classical,
        robust,
        max_lag,
        process_variance,
        time_mean,
        time_variance,
    )?;
    let model = VariogramModel::parse(model).py_err()?;
    let estimate = Estimate::parse(estimate).py_err()?;
    let c = compare_variogram_fits(&vg, model, estimate).py_err()?;
    serde_json::to_string(&c).map_err(json_err)
}

#[pyfunction]
pub fn panel_process_variance(
    py: Python<'_>,
    panel: &NativePanel,
    residuals: RawValues<'_>,
) -> PyResult<f64> {
    let r = residuals.panel_order(panel, "residuals")?;
    py.detach(|| process_variance(&panel.inner, &r)).py_err()
}

/// The optional grid of the screening: edges, or a schedule with a tolerance, or none.
fn screen_grid(
    edges: Option<Vec<f64>>,
    schedule: Option<Vec<f64>>,
    tolerance: Option<f64>,
) -> PyResult<Option<TimeGrid>> {
    TimeGrid::from_options(edges, schedule, tolerance).py_err()
}

#[allow(clippy::too_many_arguments)] // mirrors the front's keyword arguments
#[pyfunction]
#[pyo3(signature = (panel, residuals, candidates=None, edges=None, schedule=None, tolerance=None, max_iterations=None, convergence=None))]
pub fn panel_screen_structures(
    py: Python<'_>,
    panel: &NativePanel,
    residuals: RawValues<'_>,
    candidates: Option<Vec<String>>,
    edges: Option<Vec<f64>>,
    schedule: Option<Vec<f64>>,
    tolerance: Option<f64>,
    max_iterations: Option<f64>,
    convergence: Option<f64>,
) -> PyResult<String> {
    let r = residuals.panel_order(panel, "residuals")?;
    let grid = screen_grid(edges, schedule, tolerance)?;
    let o = ScreenOptions::from_front(candidates.as_deref(), grid, max_iterations, convergence)
        .py_err()?;
    let s = py
        .detach(|| screen_structures(&panel.inner, &r, &o))
        .py_err()?;
    serde_json::to_string(&s).map_err(json_err)
}

#[allow(clippy::too_many_arguments)] // mirrors the front's keyword arguments
#[pyfunction]
#[pyo3(signature = (panel, residuals, structure, parameters, edges=None, schedule=None, tolerance=None))]
pub fn panel_structure_loglik(
    py: Python<'_>,
    panel: &NativePanel,
    residuals: RawValues<'_>,
    structure: &str,
    parameters: Vec<f64>,
    edges: Option<Vec<f64>>,
    schedule: Option<Vec<f64>>,
    tolerance: Option<f64>,
) -> PyResult<f64> {
    let r = residuals.panel_order(panel, "residuals")?;
    let grid = screen_grid(edges, schedule, tolerance)?;
    let s = Structure::parse_argument(structure, "structure").py_err()?;
    py.detach(|| structure_loglik(&panel.inner, &r, s, &parameters, grid.as_ref()))
        .py_err()
}

/// The correlation `structure` at `parameters` implies between measurements at `time` and
/// `time + lags`.
#[allow(clippy::too_many_arguments)] // mirrors the front's keyword arguments
#[pyfunction]
#[pyo3(signature = (structure, parameters, time, lags, edges=None, schedule=None, tolerance=None))]
pub fn structure_implied_correlation(
    structure: &str,
    parameters: Vec<f64>,
    time: f64,
    lags: Vec<f64>,
    edges: Option<Vec<f64>>,
    schedule: Option<Vec<f64>>,
    tolerance: Option<f64>,
) -> PyResult<Vec<f64>> {
    let grid = screen_grid(edges, schedule, tolerance)?;
    let s = Structure::parse_argument(structure, "structure").py_err()?;
    implied_correlation(s, &parameters, time, &lags, grid.as_ref()).py_err()
}
