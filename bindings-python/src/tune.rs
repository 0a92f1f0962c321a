//! `tune_smoother`: cross-validation over subjects, as JSON.

use pyo3::prelude::*;
use trajweave_core::trend::tune::tune_smoother;

use crate::errors::IntoPy;
use crate::panel::NativePanel;
use crate::smoother::{build, json_err, RawOption};

// The Python signature mirrors the core function's arguments one for one.
#[allow(clippy::too_many_arguments)]
#[pyfunction]
#[pyo3(signature = (panel, family, options, candidates, parameter=None, folds=None, seed=1))]
pub fn panel_tune_smoother(
    py: Python<'_>,
    panel: &NativePanel,
    family: &str,
    options: Vec<(String, RawOption)>,
    candidates: Vec<f64>,
    parameter: Option<String>,
    folds: Option<usize>,
    seed: u64,
) -> PyResult<String> {
    let s = build(family, options)?;
    let t = py
        .detach(|| {
            tune_smoother(
                &panel.inner,
                &s,
                parameter.as_deref(),
                &candidates,
                folds,
                seed,
            )
        })
        .py_err()?;
    serde_json::to_string(&t).map_err(json_err)
}
