//! Individual variation: residuals, subject rankings, picks, samples and unusual subjects.
//! Per-row values cross in the caller's row order; the core works in panel order, and the
//! panel converts (`to_input_order`, `from_input_order`).

use std::borrow::Cow;

use numpy::{IntoPyArray, PyArray1, PyReadonlyArray1};
use pyo3::prelude::*;
use pyo3::types::PyList;
use trajweave_core::individuals::ranking::{pick_subjects, rank_subjects, Ranking, Summary};
use trajweave_core::individuals::residuals::{residuals, MeanModel};
use trajweave_core::individuals::sample::{sample_subjects, Strategy};
use trajweave_core::individuals::unusual::unusual;
use trajweave_core::trend::curve::{Curve, Diagnostics};

use crate::errors::IntoPy;
use crate::panel::{id_list, NativePanel};
use crate::smoother::{build, json_err, vec, RawOption};

/// The mean model as the wrapper describes it.
#[derive(FromPyObject)]
pub enum RawMean<'py> {
    /// ("polynomial", degree)
    Polynomial(String, usize),
    /// ("curve", x, fitted)
    Curve(
        String,
        PyReadonlyArray1<'py, f64>,
        PyReadonlyArray1<'py, f64>,
    ),
    /// ("by_group", covariate, family, options)
    ByGroup(String, String, String, Vec<(String, RawOption)>),
}

fn mean_model(raw: RawMean<'_>) -> PyResult<MeanModel> {
    let tag = match &raw {
        RawMean::Polynomial(t, _) | RawMean::Curve(t, _, _) | RawMean::ByGroup(t, _, _, _) => t,
    };
    let expected = match &raw {
        RawMean::Polynomial(..) => "polynomial",
        RawMean::Curve(..) => "curve",
        RawMean::ByGroup(..) => "by_group",
    };
    if tag != expected {
        return Err(pyo3::exceptions::PyTypeError::new_err(format!(
            "mean model tagged {tag:?} does not have the shape of {expected:?}"
        )));
    }
    Ok(match raw {
        RawMean::Polynomial(_, degree) => MeanModel::Polynomial { degree },
        RawMean::Curve(_, x, f) => MeanModel::Curve(Curve::new(
            "curve",
            vec(&x),
            vec(&f),
            serde_json::Value::Null,
            Diagnostics::default(),
        )),
        RawMean::ByGroup(_, covariate, family, options) => MeanModel::ByGroup {
            covariate,
            smoother: build(&family, options)?,
        },
    })
}

/// Per-row values kept in panel order on the native side, so passing residuals from one call
/// to the next costs no reordering.
#[pyclass(name = "NativeValues", module = "trajweave._trajweave", frozen)]
pub struct NativeValues {
    pub panel_order: Vec<f64>,
}

/// Per-row values as the wrapper passes them: kept native (panel order) or an array in the
/// caller's row order.
#[derive(FromPyObject)]
pub enum RawValues<'py> {
    Native(PyRef<'py, NativeValues>),
    Array(PyReadonlyArray1<'py, f64>),
}

impl RawValues<'_> {
    /// The values in panel order.
    pub fn panel_order(&self, panel: &NativePanel, argument: &str) -> PyResult<Cow<'_, [f64]>> {
        match self {
            RawValues::Native(v) => Ok(Cow::Borrowed(&v.panel_order)),
            RawValues::Array(a) => Ok(Cow::Owned(
                panel.inner.from_input_order(argument, &vec(a)).py_err()?,
            )),
        }
    }
}

/// (residuals in the caller's order, JSON of the rest, residuals and fitted values kept
/// native in panel order).
pub type ResidualParts<'py> = (
    Bound<'py, PyArray1<f64>>,
    String,
    NativeValues,
    NativeValues,
);

/// Residuals of a mean model: residuals in the caller's row order, and the rest
/// (model, coefficients, groups) as JSON.
#[pyfunction]
pub fn panel_residuals<'py>(
    py: Python<'py>,
    panel: &NativePanel,
    mean: RawMean<'_>,
) -> PyResult<ResidualParts<'py>> {
    let model = mean_model(mean)?;
    let r = py.detach(|| residuals(&panel.inner, &model)).py_err()?;
    let meta =
        serde_json::json!({"model": r.model, "coefficients": r.coefficients, "groups": r.groups});
    let p = &panel.inner;
    Ok((
        p.to_input_order(&r.residuals).into_pyarray(py),
        serde_json::to_string(&meta).map_err(json_err)?,
        NativeValues {
            panel_order: r.residuals,
        },
        NativeValues {
            panel_order: r.fitted,
        },
    ))
}

/// Native per-row values in the caller's row order (on demand, e.g. fitted values).
#[pyfunction]
pub fn input_order<'py>(
    py: Python<'py>,
    panel: &NativePanel,
    values: &NativeValues,
) -> Bound<'py, PyArray1<f64>> {
    panel
        .inner
        .to_input_order(&values.panel_order)
        .into_pyarray(py)
}

/// A ranking kept native, so it can be handed back to `pick_subjects` and friends.
#[pyclass(name = "NativeRanking", module = "trajweave._trajweave", frozen)]
pub struct NativeRanking {
    pub inner: Ranking,
}

#[pymethods]
impl NativeRanking {
    /// The summary as JSON (`{"kind": ..., "p": ...}`).
    fn summary_json(&self) -> PyResult<String> {
        serde_json::to_string(&self.inner.summary).map_err(json_err)
    }
    #[getter]
    fn subjects<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyList>> {
        id_list(py, &self.inner.subjects)
    }
    #[getter]
    fn values<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        self.inner.values.clone().into_pyarray(py)
    }
    #[getter]
    fn ranks<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<usize>> {
        self.inner.ranks.clone().into_pyarray(py)
    }
    #[getter]
    fn observations<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<usize>> {
        self.inner.observations.clone().into_pyarray(py)
    }
    #[getter]
    fn unranked<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyList>> {
        id_list(py, &self.inner.unranked)
    }
}

#[pyfunction]
#[pyo3(signature = (panel, residuals, summary, p=None))]
pub fn panel_rank_subjects(
    py: Python<'_>,
    panel: &NativePanel,
    residuals: RawValues<'_>,
    summary: &str,
    p: Option<f64>,
) -> PyResult<NativeRanking> {
    let summary = Summary::parse(summary, p).py_err()?;
    let r = residuals.panel_order(panel, "residuals")?;
    let inner = py
        .detach(|| rank_subjects(&panel.inner, &r, summary))
        .py_err()?;
    Ok(NativeRanking { inner })
}

#[pyfunction]
pub fn panel_pick_subjects(
    py: Python<'_>,
    panel: &NativePanel,
    residuals: RawValues<'_>,
    ranking: &NativeRanking,
    quantiles: Vec<f64>,
) -> PyResult<String> {
    let r = residuals.panel_order(panel, "residuals")?;
    let picks = py
        .detach(|| pick_subjects(&panel.inner, &r, &ranking.inner, &quantiles))
        .py_err()?;
    serde_json::to_string(&picks).map_err(json_err)
}

#[pyfunction]
#[pyo3(signature = (panel, k, seed, strategy, ranking=None))]
pub fn panel_sample_subjects(
    py: Python<'_>,
    panel: &NativePanel,
    k: usize,
    seed: u64,
    strategy: &str,
    ranking: Option<&NativeRanking>,
) -> PyResult<String> {
    let strategy = Strategy::parse(strategy).py_err()?;
    let ranking = ranking.map(|r| &r.inner);
    let s = py
        .detach(|| sample_subjects(&panel.inner, ranking, k, seed, strategy))
        .py_err()?;
    serde_json::to_string(&s).map_err(json_err)
}

#[pyfunction]
pub fn panel_unusual(
    py: Python<'_>,
    panel: &NativePanel,
    residuals: RawValues<'_>,
    ranking: &NativeRanking,
    subject_threshold: f64,
    observation_threshold: f64,
) -> PyResult<String> {
    let r = residuals.panel_order(panel, "residuals")?;
    let u = py
        .detach(|| {
            unusual(
                &panel.inner,
                &r,
                &ranking.inner,
                subject_threshold,
                observation_threshold,
            )
        })
        .py_err()?;
    serde_json::to_string(&u).map_err(json_err)
}
